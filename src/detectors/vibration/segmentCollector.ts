import { grownArray } from '../../stats/grownArray.js';
import type { FrameSteps } from '../frameSteps.js';

/**
 * Gathers the one-frame steps of every particle present throughout a segment of `length`
 * consecutive step slots (so `length + 1` consecutive positions), for the common-mode
 * spectral F-test. Particles that appear, disappear or skip a slot inside the segment are left
 * out; a dropped frame (slot gap > 1) breaks the whole segment, which is then discarded and
 * counted, and a new segment starts with the next one-slot step. Duplicated frames (slot gap 0)
 * are ignored.
 *
 * At most `maxRows` particles are kept per segment: the first ones (in the frame's order) to
 * make a step into the segment's first slot. The choice looks at no step value, so the F-test
 * stays exact on the subset (Shumway 1970, JASA 65:1527: any set of independent series); only
 * its sensitivity falls: the smallest line found grows as about √(N/maxRows) (see the README).
 *
 * Storage: one row of `length` steps per axis per kept particle, in `Float64Array`s that grow
 * by doubling up to `maxRows` rows (at most 16·maxRows·length bytes: 1 MiB at 256 × 256), and
 * 16 bytes per pipeline track row for the lookup below. Cost O(steps) per frame, a few array
 * reads for a particle not kept; no allocation per frame except when the rows or the track rows
 * grow. Units: steps in µm.
 *
 * Lookup: each frame's particles carry the pipeline's track row (`FrameSteps.trackRow`), and
 * the collector keeps, per track row, the id last seen there and its segment row (−1: not
 * kept), stamped with the segment, so a particle is placed or passed over with no Map probe.
 * A row holding another id (hand-made frames may number rows by index) falls back to the Map
 * of kept ids, which is the source of truth: membership is fixed at the segment's first step.
 *
 * @example
 * const collector = new SegmentCollector(256, 256);
 * // for each frame: if (collector.push(steps)) use collector.rows, collector.stepsX, stepsY
 * collector.completeRows; // → number of particles present throughout the last segment
 */
export class SegmentCollector {
  /** Segment length L, steps. */
  readonly length: number;
  /** Most particles kept per segment. */
  readonly maxRows: number;
  /** Steps along x of the particles of the completed segment, row-major (`row·L + t`), µm. */
  stepsX: Float64Array;
  /** Steps along y, same layout, µm. */
  stepsY: Float64Array;
  /** Track id of each row. */
  rowTrackId: Uint32Array;
  /** After `push` returned true: the rows (0…completeRows−1) that are complete (packed to the front). */
  completeRows: number;
  /** Segments discarded because of a dropped frame. */
  brokenSegments: number;
  /** Segments completed. */
  completedSegments: number;
  /** Slot of the first step of the current segment. */
  segmentStartSlot: number;
  /** Kept track id → segment row (the source of truth for membership). */
  private readonly rowOf = new Map<number, number>();
  // Per pipeline track row: the id last seen there, its segment row (−1: not kept), and the
  // segment (generation) that stamped it.
  private seenId: Float64Array = new Float64Array(1024).fill(-1);
  private seenRow: Int32Array = new Int32Array(1024);
  private seenGeneration: Int32Array = new Int32Array(1024).fill(-1);
  private generation = 0;
  private rowFilled: Int32Array;
  private rows: number;
  private position: number;

  /**
   * @param length segment length L in steps (integer ≥ 8).
   * @param maxRows most particles kept per segment (integer ≥ 1; default: no limit).
   */
  constructor(length: number, maxRows = Number.POSITIVE_INFINITY) {
    if (!Number.isInteger(length) || length < 8) {
      throw new RangeError('SegmentCollector requires an integer length >= 8');
    }
    if (!(maxRows >= 1) || (maxRows !== Number.POSITIVE_INFINITY && !Number.isInteger(maxRows))) {
      throw new RangeError('SegmentCollector requires maxRows an integer >= 1');
    }
    this.length = length;
    this.maxRows = maxRows;
    const capacity = Math.min(64, maxRows);
    this.stepsX = new Float64Array(capacity * length);
    this.stepsY = new Float64Array(capacity * length);
    this.rowTrackId = new Uint32Array(capacity);
    this.rowFilled = new Int32Array(capacity);
    this.rows = 0;
    this.position = 0;
    this.completeRows = 0;
    this.brokenSegments = 0;
    this.completedSegments = 0;
    this.segmentStartSlot = 0;
  }

  /** Whether the current (partial) segment has any steps in it. */
  get inProgress(): boolean {
    return this.position > 0;
  }

  /**
   * Feeds one frame. Returns true when this frame completed a segment; the complete rows are
   * then packed at the front of `stepsX`/`stepsY` (valid until the next call). O(stepCount).
   */
  push(steps: FrameSteps): boolean {
    if (steps.slotGap === 0) return false; // duplicated frame: carries no new step
    if (steps.slotGap !== 1) {
      // A dropped frame breaks the segment: its steps would not be evenly spaced.
      if (this.position > 0) this.brokenSegments++;
      this.reset();
      return false;
    }
    const L = this.length;
    const t = this.position;
    if (t === 0) {
      if (steps.stepCount === 0) return false; // e.g. the first frame: nothing to start with
      this.segmentStartSlot = steps.slot;
      // Rows are assigned only at the first step: a particle arriving later cannot complete.
      for (let j = 0; j < steps.stepCount; j++) {
        const particle = steps.stepParticle[j];
        const id = steps.trackId[particle];
        if (this.rowOf.has(id)) continue; // duplicate id in one frame: keep the first
        if (this.rows >= this.maxRows) {
          this.remember(steps.trackRow[particle], id, -1);
          continue;
        }
        this.ensureCapacity(this.rows + 1);
        const row = this.rows++;
        this.rowOf.set(id, row);
        this.remember(steps.trackRow[particle], id, row);
        this.rowTrackId[row] = id;
        this.stepsX[row * L] = steps.dx[j];
        this.stepsY[row * L] = steps.dy[j];
        this.rowFilled[row] = 1;
      }
    } else {
      const seenId = this.seenId;
      const seenRow = this.seenRow;
      const seenGeneration = this.seenGeneration;
      const generation = this.generation;
      const size = seenId.length;
      for (let j = 0; j < steps.stepCount; j++) {
        const particle = steps.stepParticle[j];
        const id = steps.trackId[particle];
        const trackRow = steps.trackRow[particle];
        let row: number;
        if (trackRow >= 0 && trackRow < size && seenId[trackRow] === id && seenGeneration[trackRow] === generation) {
          row = seenRow[trackRow];
        } else {
          row = this.rowOf.get(id) ?? -1;
          this.remember(trackRow, id, row);
        }
        if (row < 0 || this.rowFilled[row] !== t) continue;
        const dx = steps.dx[j];
        const dy = steps.dy[j];
        // Bad-input policy: a non-finite step removes that particle from the segment.
        if (!Number.isFinite(dx) || !Number.isFinite(dy)) continue;
        this.stepsX[row * L + t] = dx;
        this.stepsY[row * L + t] = dy;
        this.rowFilled[row] = t + 1;
      }
    }
    this.position = t + 1;
    if (this.position < L) return false;
    // Pack the complete rows to the front (in place, order kept).
    let out = 0;
    for (let row = 0; row < this.rows; row++) {
      if (this.rowFilled[row] !== L) continue;
      if (out !== row) {
        this.stepsX.copyWithin(out * L, row * L, row * L + L);
        this.stepsY.copyWithin(out * L, row * L, row * L + L);
        this.rowTrackId[out] = this.rowTrackId[row];
      }
      out++;
    }
    this.completeRows = out;
    this.completedSegments++;
    this.reset();
    return true;
  }

  private reset(): void {
    this.rowOf.clear();
    this.generation++; // every track row's entry goes stale at once
    this.rows = 0;
    this.position = 0;
  }

  /** Notes that track row `trackRow` holds `id`, kept at segment row `row` (−1: not kept). */
  private remember(trackRow: number, id: number, row: number): void {
    if (!(trackRow >= 0) || !Number.isInteger(trackRow) || trackRow >= MAX_TRACK_ROWS) return; // such rows only miss
    if (trackRow >= this.seenId.length) {
      let size = this.seenId.length;
      while (size <= trackRow) size *= 2;
      this.seenId = grownArray(this.seenId, size, -1);
      this.seenRow = grownArray(this.seenRow, size);
      this.seenGeneration = grownArray(this.seenGeneration, size, -1);
    }
    this.seenId[trackRow] = id;
    this.seenRow[trackRow] = row;
    this.seenGeneration[trackRow] = this.generation;
  }

  private ensureCapacity(rows: number): void {
    if (rows <= this.rowTrackId.length) return;
    const capacity = Math.min(this.maxRows, Math.max(rows, this.rowTrackId.length * 2));
    this.stepsX = grownArray(this.stepsX, capacity * this.length);
    this.stepsY = grownArray(this.stepsY, capacity * this.length);
    this.rowTrackId = grownArray(this.rowTrackId, capacity);
    this.rowFilled = grownArray(this.rowFilled, capacity);
  }
}

/** Track rows above this are not remembered (a frame source that passes ids as rows stays bounded). */
const MAX_TRACK_ROWS = 1 << 20;
