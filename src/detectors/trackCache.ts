/**
 * A detector's per-track values, keyed by track id, with a fast path for the hot loop: each
 * frame's particles carry a row (`FrameSteps.trackRow`, the pipeline's table row: small,
 * stable while the track lives, reused after it ends), and the value last found for a row is
 * kept in an array, so that the usual lookup is one array read and an id check instead of a Map
 * probe. The Map stays the one source of truth: a row's cached entry is used only when it holds
 * the same id, is still stored and belongs to the current generation (see `clear`); otherwise
 * the Map answers and the row is re-pointed. Any row numbering is correct (a poor one only
 * misses the cache), so hand-made frames may pass the particle's index.
 *
 * Memory: the Map's entries plus one pointer per row ever used (rows ≥ 2²⁰ are not cached).
 * Operations O(1) amortised; `clear` leaves the rows to go stale by generation.
 *
 * @example
 * const cache = new TrackCache<{ steps: number }>();
 * cache.set(7, 0, { steps: 1 });
 * cache.find(7, 0)?.steps // → 1 (from the row, no Map probe)
 */
export class TrackCache<T> {
  private readonly byId = new Map<number, Entry<T>>();
  private byRow: (Entry<T> | undefined)[] = new Array(1024).fill(undefined);
  private generation = 0;

  /** Number of tracks stored. */
  get size(): number {
    return this.byId.size;
  }

  /** The value of track `id`, found through `row` when the row still points at it. */
  find(id: number, row: number): T | undefined {
    const hit = row < this.byRow.length ? this.byRow[row] : undefined;
    if (hit !== undefined && hit.id === id && hit.stored && hit.generation === this.generation) return hit.value;
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
    if (old) old.stored = false;
    const entry: Entry<T> = { id, value, stored: true, generation: this.generation };
    this.byId.set(id, entry);
    this.point(row, entry);
  }

  /** Forgets track `id`. */
  delete(id: number): boolean {
    const entry = this.byId.get(id);
    if (!entry) return false;
    entry.stored = false;
    this.byId.delete(id);
    return true;
  }

  /** Forgets every track. */
  clear(): void {
    this.byId.clear();
    this.generation++;
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
    if (row >= this.byRow.length) {
      let size = this.byRow.length;
      while (size <= row) size *= 2;
      const grown: (Entry<T> | undefined)[] = new Array(size).fill(undefined);
      for (let i = 0; i < this.byRow.length; i++) grown[i] = this.byRow[i];
      this.byRow = grown;
    }
    this.byRow[row] = entry;
  }
}

/** Rows above this are not cached (a frame source that passes ids as rows stays bounded). */
const MAX_ROWS = 1 << 20;

interface Entry<T> {
  id: number;
  value: T;
  stored: boolean;
  generation: number;
}
