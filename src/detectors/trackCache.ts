/**
 * A detector's per-track values, keyed by track id, with a fast path for the hot loop: each
 * frame's particles carry a row (`FrameSteps.trackRow`, the pipeline's table row: small,
 * stable while the track lives, reused after it ends), and the value last found for a row is
 * kept in an array, so that the usual lookup is one array read and an id check instead of a Map
 * probe. The Map stays the one source of truth: a row's cached value is used only when the row
 * holds the same id and belongs to the current generation (see `clear`), and at most one row
 * points at a stored track (deleting it clears that row); otherwise the Map answers and the row
 * is re-pointed. The row's id and generation are typed arrays, so the check reads memory in row
 * order and touches no object. Any row numbering is correct (a poor one only
 * misses the cache), so hand-made frames may pass the particle's index.
 *
 * Memory: the Map's entries plus 20 bytes per row ever used (rows ≥ 2²⁰ are not cached).
 * Operations O(1) amortised; `clear` leaves the rows to go stale by generation.
 *
 * @example
 * const cache = new TrackCache<{ steps: number }>();
 * cache.set(7, 0, { steps: 1 });
 * cache.find(7, 0)?.steps // → 1 (from the row, no Map probe)
 */
export class TrackCache<T> {
  private readonly byId = new Map<number, Entry<T>>();
  // Per row: the id it points at (NO_ID: none), the generation it was pointed in, and the value.
  // At most one row points at a stored entry (re-pointing clears the old row), so `delete` only
  // has to clear that row.
  private rowId: Float64Array = new Float64Array(1024).fill(NO_ID);
  private rowGeneration: Int32Array = new Int32Array(1024);
  private rowValue: (T | undefined)[] = new Array(1024).fill(undefined);
  private generation = 0;

  /** Number of tracks stored. */
  get size(): number {
    return this.byId.size;
  }

  /** The value of track `id`, found through `row` when the row still points at it. */
  find(id: number, row: number): T | undefined {
    if (row >= 0 && row < this.rowId.length && this.rowId[row] === id && this.rowGeneration[row] === this.generation) {
      return this.rowValue[row];
    }
    const entry = this.byId.get(id);
    if (entry === undefined) return undefined;
    this.point(row, entry);
    return entry.value;
  }

  /** The value of track `id` (Map lookup only, for code off the hot path). */
  get(id: number): T | undefined {
    return this.byId.get(id)?.value;
  }

  /** Whether track `id` is stored. */
  has(id: number): boolean {
    return this.byId.has(id);
  }

  /** Stores `value` for track `id`, seen at `row`. */
  set(id: number, row: number, value: T): void {
    const old = this.byId.get(id);
    if (old) this.unpoint(old);
    const entry: Entry<T> = { id, value, row: -1 };
    this.byId.set(id, entry);
    this.point(row, entry);
  }

  /** Forgets track `id`. */
  delete(id: number): boolean {
    const entry = this.byId.get(id);
    if (!entry) return false;
    this.unpoint(entry);
    this.byId.delete(id);
    return true;
  }

  /** Forgets every track. */
  clear(): void {
    this.byId.clear();
    this.generation++; // every row goes stale at once
  }

  /** Stored values with their ids, in insertion order. */
  *entries(): IterableIterator<[number, T]> {
    for (const [id, entry] of this.byId) yield [id, entry.value];
  }

  /** Stored values, in insertion order. */
  *values(): IterableIterator<T> {
    for (const entry of this.byId.values()) yield entry.value;
  }

  private point(row: number, entry: Entry<T>): void {
    if (!(row >= 0) || !Number.isInteger(row) || row >= MAX_ROWS) return; // such rows only miss
    if (row >= this.rowId.length) this.grow(row);
    this.unpoint(entry);
    this.rowId[row] = entry.id;
    this.rowGeneration[row] = this.generation;
    this.rowValue[row] = entry.value;
    entry.row = row;
  }

  private unpoint(entry: Entry<T>): void {
    const row = entry.row;
    if (row >= 0 && this.rowId[row] === entry.id && this.rowGeneration[row] === this.generation) {
      this.rowId[row] = NO_ID;
      this.rowValue[row] = undefined;
    }
    entry.row = -1;
  }

  private grow(row: number): void {
    let size = this.rowId.length;
    while (size <= row) size *= 2;
    const rowId = new Float64Array(size).fill(NO_ID);
    rowId.set(this.rowId);
    const rowGeneration = new Int32Array(size);
    rowGeneration.set(this.rowGeneration);
    const rowValue: (T | undefined)[] = new Array(size).fill(undefined);
    for (let i = 0; i < this.rowValue.length; i++) rowValue[i] = this.rowValue[i];
    this.rowId = rowId;
    this.rowGeneration = rowGeneration;
    this.rowValue = rowValue;
  }
}

/** Rows above this are not cached (a frame source that passes ids as rows stays bounded). */
const MAX_ROWS = 1 << 20;
/** No id (track ids are non-negative integers). */
const NO_ID = -1;

interface Entry<T> {
  id: number;
  value: T;
  /** The row pointing at this entry, or −1. */
  row: number;
}
