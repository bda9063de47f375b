import { grownArray } from '../../stats/grownArray.js';

/**
 * Per-track tallies over one window, for the tracks detector's long-track fraction: each track's
 * steps in the window and its latest length. Kept in typed arrays indexed by the pipeline's track
 * row (`FrameSteps.trackRow`), so that the usual step is a few array reads and writes, not a Map
 * probe and an object. The row is only a hint (hand-made frames may number rows by index): a Map
 * from id to row, touched once per track per window and when rows change hands, keeps one tally
 * per id. A tally whose row is taken by another id moves to a small overflow Map.
 *
 * Memory: 28 bytes per track row ever used (rows ≥ 2²⁰ go to the overflow Map), plus the Map's
 * entries for the tracks of the current window. Operations O(1) amortised; `clear` O(1) plus the
 * Maps' clear.
 *
 * @example
 * const tally = new WindowTrackTally();
 * tally.step(7, 0, 2); tally.step(7, 0, 3); tally.end(7, 3);
 * tally.totals(1); // → { steps: 2, longSteps: 2 } (length − 1 = 2 ≥ 1)
 */
export class WindowTrackTally {
  private rowId: Float64Array = new Float64Array(1024).fill(-1);
  private rowGeneration: Int32Array = new Int32Array(1024).fill(-1);
  private rowSteps: Int32Array = new Int32Array(1024);
  private rowLength: Float64Array = new Float64Array(1024);
  private usedRows: Int32Array = new Int32Array(1024);
  private usedCount = 0;
  private generation = 0;
  /** id → its row this window, or −1 when its tally is in `overflow`. */
  private readonly where = new Map<number, number>();
  private readonly overflow = new Map<number, { steps: number; length: number }>();

  /** Track `id`, seen at `row`, made a step in the window; its length is now `length` positions. */
  step(id: number, row: number, length: number): void {
    if (row >= 0 && row < this.rowId.length && this.rowId[row] === id && this.rowGeneration[row] === this.generation) {
      this.rowSteps[row]++;
      this.rowLength[row] = length;
      return;
    }
    this.place(id, row, length);
  }

  /** Track `id` ended with `length` positions (a track not seen stepping in the window is ignored). */
  end(id: number, length: number): void {
    const at = this.where.get(id);
    if (at === undefined) return;
    if (at >= 0) this.rowLength[at] = length;
    else (this.overflow.get(id) as { length: number }).length = length;
  }

  /** Steps in the window, and those made by tracks whose latest length − 1 ≥ `minimumSteps`. O(tracks). */
  totals(minimumSteps: number): { steps: number; longSteps: number } {
    let steps = 0;
    let longSteps = 0;
    for (let k = 0; k < this.usedCount; k++) {
      const row = this.usedRows[k];
      if (this.rowGeneration[row] !== this.generation || this.rowId[row] < 0) continue;
      steps += this.rowSteps[row];
      if (this.rowLength[row] - 1 >= minimumSteps) longSteps += this.rowSteps[row];
    }
    for (const tally of this.overflow.values()) {
      steps += tally.steps;
      if (tally.length - 1 >= minimumSteps) longSteps += tally.steps;
    }
    return { steps, longSteps };
  }

  /** Tracks with a tally in the window. */
  get size(): number {
    return this.where.size;
  }

  /** Forgets every tally (a new window). */
  clear(): void {
    this.generation++; // every row goes stale at once
    this.usedCount = 0;
    this.where.clear();
    this.overflow.clear();
  }

  private place(id: number, row: number, length: number): void {
    // The tally so far of this id, wherever it is.
    let steps = 1;
    const at = this.where.get(id);
    if (at !== undefined) {
      if (at >= 0) {
        steps += this.rowSteps[at];
        this.rowId[at] = -1; // its old row is free
      } else {
        steps += (this.overflow.get(id) as { steps: number }).steps;
        this.overflow.delete(id);
      }
    }
    if (!(row >= 0) || !Number.isInteger(row) || row >= MAX_ROWS) {
      this.overflow.set(id, { steps, length });
      this.where.set(id, -1);
      return;
    }
    if (row >= this.rowId.length) this.grow(row);
    if (this.rowGeneration[row] === this.generation) {
      // the row holds another id's tally this window: move it aside
      const other = this.rowId[row];
      if (other >= 0) {
        this.overflow.set(other, { steps: this.rowSteps[row], length: this.rowLength[row] });
        this.where.set(other, -1);
      }
    } else {
      this.rowGeneration[row] = this.generation;
      if (this.usedCount === this.usedRows.length) this.usedRows = grownArray(this.usedRows, 2 * this.usedRows.length);
      this.usedRows[this.usedCount++] = row;
    }
    this.rowId[row] = id;
    this.rowSteps[row] = steps;
    this.rowLength[row] = length;
    this.where.set(id, row);
  }

  private grow(row: number): void {
    let size = this.rowId.length;
    while (size <= row) size *= 2;
    this.rowId = grownArray(this.rowId, size, -1);
    this.rowGeneration = grownArray(this.rowGeneration, size, -1);
    this.rowSteps = grownArray(this.rowSteps, size);
    this.rowLength = grownArray(this.rowLength, size);
  }
}

/** Rows above this go to the overflow Map (a frame source that passes ids as rows stays bounded). */
const MAX_ROWS = 1 << 20;
