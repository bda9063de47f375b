import type { FrameSteps } from '../frameSteps.js';
import { TrackCache } from '../trackCache.js';

/**
 * Gathers the one-frame steps of every particle present throughout a segment of `length`
 * consecutive step slots (so `length + 1` consecutive positions), for the common-mode
 * spectral F-test. Particles that appear, disappear or skip a slot inside the segment are left
 * out; a dropped frame (slot gap > 1) breaks the whole segment, which is then discarded and
 * counted, and a new segment starts with the next one-slot step. Duplicated frames (slot gap 0)
 * are ignored.
 *
 * Storage: one row of `length` steps per axis per particle, in preallocated `Float64Array`s
 * that grow by doubling when more particles are present than ever before. Cost O(steps) per
 * frame; no allocation per frame except when a new maximum particle count is seen.
 * Units: steps in µm.
 *
 * @example
 * const collector = new SegmentCollector(256);
 * // for each frame: if (collector.push(steps)) use collector.rows, collector.stepsX, stepsY
 * collector.completeRows; // → number of particles present throughout the last segment
 */
export class SegmentCollector {
  /** Segment length L, steps. */
  readonly length: number;
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
  private readonly rowOf: TrackCache<number>;
  private rowFilled: Int32Array;
  private rows: number;
  private position: number;

  /** @param length segment length L in steps (integer ≥ 8). */
  constructor(length: number) {
    if (!Number.isInteger(length) || length < 8) {
      throw new RangeError('SegmentCollector requires an integer length >= 8');
    }
    this.length = length;
    const capacity = 64;
    this.stepsX = new Float64Array(capacity * length);
    this.stepsY = new Float64Array(capacity * length);
    this.rowTrackId = new Uint32Array(capacity);
    this.rowFilled = new Int32Array(capacity);
    this.rowOf = new TrackCache();
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
        this.ensureCapacity(this.rows + 1);
        const row = this.rows++;
        this.rowOf.set(id, steps.trackRow[particle], row);
        this.rowTrackId[row] = id;
        this.stepsX[row * L] = steps.dx[j];
        this.stepsY[row * L] = steps.dy[j];
        this.rowFilled[row] = 1;
      }
    } else {
      for (let j = 0; j < steps.stepCount; j++) {
        const particle = steps.stepParticle[j];
        const row = this.rowOf.find(steps.trackId[particle], steps.trackRow[particle]);
        if (row === undefined || this.rowFilled[row] !== t) continue;
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
    this.rows = 0;
    this.position = 0;
  }

  private ensureCapacity(rows: number): void {
    if (rows <= this.rowTrackId.length) return;
    const capacity = Math.max(rows, this.rowTrackId.length * 2);
    const grow = (old: Float64Array): Float64Array => {
      const next = new Float64Array(capacity * this.length);
      next.set(old);
      return next;
    };
    this.stepsX = grow(this.stepsX);
    this.stepsY = grow(this.stepsY);
    const ids = new Uint32Array(capacity);
    ids.set(this.rowTrackId);
    this.rowTrackId = ids;
    const filled = new Int32Array(capacity);
    filled.set(this.rowFilled);
    this.rowFilled = filled;
  }
}
