import { PointGrid } from './pointGrid.js';

const MAX_ROWS = 1 << 20;
/** Tracks registered one by one between rebuilds (each checked against the others): at most this many, or N/4. */
const MAX_ADDED = 64;
/** A window with more rebuilds than this share of its frames is followed by plain searches (the list would cost more than it saves). */
const WINDOW_FRAMES = 32;
const WINDOW_REBUILDS = 12;
const PLAIN_FRAMES = 256;

/**
 * The close pairs of each frame (d ≤ r µm) from a list of candidates kept across frames, the
 * neighbour list with a skin of molecular dynamics (Verlet 1967, Phys. Rev. 159, 98): at a
 * rebuild every pair within r + skin is listed, with each track's position then; on later frames
 * only the listed pairs are measured, which is exact while no track has moved more than skin/2
 * from its listed position (two tracks more than r + skin apart then cannot both have closed to
 * within r). A track that moves farther triggers a rebuild. Tracks that appear between rebuilds
 * are registered one by one: checked against the rebuild's grid (positions as listed) and
 * against the other tracks registered since, with the same bound.
 *
 * Tracks are told apart by id; `rows` (FrameSteps.trackRow) index the per-track arrays. When the
 * rows of a frame are not usable (negative, huge or repeated), that frame is searched in full
 * on the grid and the list is rebuilt on the next usable frame, so the answer is the same for any
 * row numbering.
 *
 * The result is exactly {@link PointGrid.closePairs} on the frame: keys i·count + j (i < j,
 * indices into the frame), ascending. Cost per frame: O(N + candidates) between rebuilds, and a
 * grid build and sweep at r + skin on a rebuild (about as often as the fastest track crosses
 * skin/2). When the tracks move so fast that more than 12 of 32 frames rebuild (a rebuild at
 * r + skin costs more than a plain search at r), the next 256 frames are searched plainly and
 * the list is then tried again. Memory: 40 bytes per row ever used plus 16 bytes per candidate.
 *
 * @example
 * const pairs = new ClosePairCandidates(1);
 * pairs.find(x, y, ids, rows, n, 1.5, keys) // → number of pairs within 1.5 µm, keys[0..) as closePairs
 */
export class ClosePairCandidates {
  /** Extra reach of the list, µm: pairs within r + skin are listed at a rebuild. */
  readonly skin: number;
  /** Rebuilds so far, and frames answered (for the benchmark's notes and the tests). */
  rebuilds = 0;
  frames = 0;
  /** Frames searched plainly on the grid (rows unusable, or tracks too fast for the list). */
  plainFrames = 0;

  private readonly grid = new PointGrid();
  private keys = new Float64Array(256);
  private hits = new Int32Array(64);
  private valid = false;
  /** The r + skin the list was built for, µm (a larger r needs a rebuild). */
  private builtReach = 0;
  private stamp = 0;
  private generation = 0;
  /** Generation of the first registration at the last rebuild: older rows are not in the list. */
  private firstGeneration = 1;
  // per row
  private present = new Int32Array(1024);
  private index = new Int32Array(1024);
  private refId = new Float64Array(1024).fill(-1);
  private refGeneration = new Int32Array(1024);
  private refX = new Float64Array(1024);
  private refY = new Float64Array(1024);
  // per point of the last rebuild (grid order is by these indices)
  private buildRow = new Int32Array(1024);
  private buildGeneration = new Int32Array(1024);
  // candidate pairs: rows and the generations they were listed under
  private candidates = new Int32Array(4 * 256);
  private candidateCount = 0;
  // rows registered since the last rebuild, with their generations
  private added = new Int32Array(2 * MAX_ADDED);
  private addedCount = 0;
  private fresh = new Int32Array(1024);
  private windowFrames = 0;
  private windowRebuilds = 0;
  private plainLeft = 0;

  /** `skin` µm > 0: larger lists fewer rebuilds but more candidates. */
  constructor(skin: number) {
    if (!(skin > 0) || !Number.isFinite(skin)) throw new RangeError('ClosePairCandidates needs a finite skin > 0 µm');
    this.skin = skin;
  }

  /**
   * Pairs i < j of the first `count` points with d² ≤ r², as keys i·count + j ascending in `out`;
   * returns how many, or −(how many) when `out` is too short (grow it and ask again: the call
   * is repeatable). `ids` tell tracks apart; `rows` index the per-track state (see the class).
   */
  find(x: Float64Array, y: Float64Array, ids: ArrayLike<number>, rows: ArrayLike<number>, count: number, r: number, out: Float64Array): number {
    this.frames++;
    if (this.plainLeft > 0) {
      this.plainLeft--;
      this.valid = false;
      return this.fullSearch(x, y, count, r, out);
    }
    const stamp = ++this.stamp;
    let rowsUsable = true;
    let maxRow = -1;
    for (let i = 0; i < count; i++) {
      const row = rows[i];
      if (!(row >= 0 && row < MAX_ROWS && Number.isInteger(row))) {
        rowsUsable = false;
        break;
      }
      if (row > maxRow) maxRow = row;
    }
    if (rowsUsable && maxRow >= this.present.length) this.growRows(maxRow);
    const present = this.present;
    const index = this.index;
    const refId = this.refId;
    const refGeneration = this.refGeneration;
    const refX = this.refX;
    const refY = this.refY;
    if (rowsUsable) {
      for (let i = 0; i < count; i++) {
        const row = rows[i];
        if (present[row] === stamp) {
          rowsUsable = false; // two particles on one row
          break;
        }
        present[row] = stamp;
        index[row] = i;
      }
    }
    if (!rowsUsable) {
      this.valid = false;
      return this.fullSearch(x, y, count, r, out);
    }

    // Which tracks are listed, and has any moved beyond skin/2 (with a margin for rounding)?
    const half = 0.5 * this.skin * (1 - 1e-9);
    const half2 = half * half;
    const reach = r + this.skin;
    let rebuild = !this.valid || reach > this.builtReach;
    let freshCount = 0;
    if (!rebuild) {
      if (this.fresh.length < count) this.fresh = new Int32Array(2 * count);
      const first = this.firstGeneration;
      for (let i = 0; i < count; i++) {
        const row = rows[i];
        if (refId[row] !== ids[i] || refGeneration[row] < first) {
          this.fresh[freshCount++] = i;
          continue;
        }
        const dx = x[i] - refX[row];
        const dy = y[i] - refY[row];
        if (dx * dx + dy * dy > half2) {
          rebuild = true;
          break;
        }
      }
      if (this.addedCount + freshCount > Math.min(MAX_ADDED, Math.max(4, count >> 2))) rebuild = true;
    }
    if (++this.windowFrames > WINDOW_FRAMES) {
      this.windowFrames = 1;
      this.windowRebuilds = 0;
    }
    if (rebuild && ++this.windowRebuilds > WINDOW_REBUILDS) {
      this.plainLeft = PLAIN_FRAMES;
      this.windowFrames = 0;
      this.windowRebuilds = 0;
      this.valid = false;
      return this.fullSearch(x, y, count, r, out);
    }
    if (rebuild) {
      this.rebuild(x, y, ids, rows, count, reach);
    } else {
      for (let f = 0; f < freshCount; f++) this.register(x, y, ids, rows, this.fresh[f], reach);
    }
    return this.measure(x, y, count, r, out);
  }

  /** The plain search on the grid (rows unusable). */
  private fullSearch(x: Float64Array, y: Float64Array, count: number, r: number, out: Float64Array): number {
    this.plainFrames++;
    if (count < 2) return 0;
    this.grid.build(x, y, count, r);
    return this.grid.closePairs(count, r, out);
  }

  /** Lists every pair within `reach` µm of this frame; every track's position is its reference. */
  private rebuild(x: Float64Array, y: Float64Array, ids: ArrayLike<number>, rows: ArrayLike<number>, count: number, reach: number): void {
    this.rebuilds++;
    this.valid = false;
    if (this.buildRow.length < count) {
      this.buildRow = new Int32Array(2 * count);
      this.buildGeneration = new Int32Array(2 * count);
    }
    this.firstGeneration = this.generation + 1;
    for (let i = 0; i < count; i++) {
      const row = rows[i];
      this.refId[row] = ids[i];
      this.refGeneration[row] = ++this.generation;
      this.refX[row] = x[i];
      this.refY[row] = y[i];
      this.buildRow[i] = row;
      this.buildGeneration[i] = this.generation;
    }
    this.candidateCount = 0;
    this.addedCount = 0;
    this.grid.build(x, y, count, reach);
    if (count >= 2) {
      let found = this.grid.closePairs(count, reach, this.keys);
      if (found < 0) {
        this.keys = new Float64Array(-2 * found);
        found = this.grid.closePairs(count, reach, this.keys);
      }
      for (let h = 0; h < found; h++) {
        const key = this.keys[h];
        const i = Math.floor(key / count);
        const j = key - i * count;
        this.addCandidate(this.buildRow[i], this.buildGeneration[i], this.buildRow[j], this.buildGeneration[j]);
      }
    }
    this.builtReach = reach;
    this.valid = true;
  }

  /** A track new since the rebuild: its pairs within `reach` of the listed positions. */
  private register(x: Float64Array, y: Float64Array, ids: ArrayLike<number>, rows: ArrayLike<number>, i: number, reach: number): void {
    const row = rows[i];
    const qx = x[i];
    const qy = y[i];
    const generation = ++this.generation;
    this.refId[row] = ids[i];
    this.refGeneration[row] = generation;
    this.refX[row] = qx;
    this.refY[row] = qy;
    let found = this.grid.within(qx, qy, reach, this.hits);
    if (found < 0) {
      this.hits = new Int32Array(-2 * found);
      found = this.grid.within(qx, qy, reach, this.hits);
    }
    for (let h = 0; h < found; h++) {
      const b = this.hits[h];
      const other = this.buildRow[b];
      // still listed as at the rebuild (not re-registered since, nor this very row)
      if (other !== row && this.refGeneration[other] === this.buildGeneration[b]) this.addCandidate(row, generation, other, this.buildGeneration[b]);
    }
    const reach2 = reach * reach;
    for (let a = 0; a < this.addedCount; a++) {
      const other = this.added[2 * a];
      const otherGeneration = this.added[2 * a + 1];
      if (other === row || this.refGeneration[other] !== otherGeneration) continue;
      const dx = this.refX[other] - qx;
      const dy = this.refY[other] - qy;
      if (dx * dx + dy * dy <= reach2) this.addCandidate(row, generation, other, otherGeneration);
    }
    this.added[2 * this.addedCount] = row;
    this.added[2 * this.addedCount + 1] = generation;
    this.addedCount++;
  }

  private addCandidate(rowA: number, generationA: number, rowB: number, generationB: number): void {
    if (4 * (this.candidateCount + 1) > this.candidates.length) {
      const grown = new Int32Array(2 * this.candidates.length);
      grown.set(this.candidates);
      this.candidates = grown;
    }
    const at = 4 * this.candidateCount++;
    this.candidates[at] = rowA;
    this.candidates[at + 1] = generationA;
    this.candidates[at + 2] = rowB;
    this.candidates[at + 3] = generationB;
  }

  /** Measures the listed pairs on this frame; drops the ones whose tracks were re-registered. */
  private measure(x: Float64Array, y: Float64Array, count: number, r: number, out: Float64Array): number {
    const c = this.candidates;
    const present = this.present;
    const index = this.index;
    const refGeneration = this.refGeneration;
    const stamp = this.stamp;
    const r2 = r * r;
    let kept = 0;
    let found = 0;
    for (let k = 0; k < this.candidateCount; k++) {
      const at = 4 * k;
      const a = c[at];
      const b = c[at + 2];
      if (refGeneration[a] !== c[at + 1] || refGeneration[b] !== c[at + 3]) continue; // stale: dropped
      const to = 4 * kept++;
      if (to !== at) {
        c[to] = a;
        c[to + 1] = c[at + 1];
        c[to + 2] = b;
        c[to + 3] = c[at + 3];
      }
      if (present[a] !== stamp || present[b] !== stamp) continue; // absent from this frame
      const i = index[a];
      const j = index[b];
      const dx = x[i] - x[j];
      const dy = y[i] - y[j];
      if (dx * dx + dy * dy > r2) continue;
      if (found < out.length) out[found] = i < j ? i * count + j : j * count + i;
      found++;
    }
    this.candidateCount = kept;
    if (found > out.length) return -found;
    out.subarray(0, found).sort();
    return found;
  }

  private growRows(row: number): void {
    let size = this.present.length;
    while (size <= row) size *= 2;
    const grow = <A extends Int32Array | Float64Array>(old: A, make: (n: number) => A, fill?: number): A => {
      const next = make(size);
      if (fill !== undefined) next.fill(fill);
      next.set(old);
      return next;
    };
    this.present = grow(this.present, (n) => new Int32Array(n));
    this.index = grow(this.index, (n) => new Int32Array(n));
    this.refId = grow(this.refId, (n) => new Float64Array(n), -1);
    this.refGeneration = grow(this.refGeneration, (n) => new Int32Array(n));
    this.refX = grow(this.refX, (n) => new Float64Array(n));
    this.refY = grow(this.refY, (n) => new Float64Array(n));
  }
}
