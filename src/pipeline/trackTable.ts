import { cveOffset, CVE_WIDTH, type StatsLayout } from './statsLayout.js';

/** lastSlot of a track with no position yet (far below any real slot, so no step or lag matches). */
export const NO_SLOT = -1_000_000_000;

/** Largest id kept in the dense id → row table (4 bytes per id below it): 2²⁰. */
const DENSE_ID_LIMIT = 1 << 20;

const NO_TRACKS: EndedTrack[] = [];

/** A track that has ended, as reported to detectors and kept in the per-track table. */
export interface EndedTrack {
  id: number;
  /** Positions in the track. */
  length: number;
  /** First and last time, s. */
  start: number;
  end: number;
  lastX: number;
  lastY: number;
  /** The track's covariance-estimator sums (CVE_WIDTH values per axis). */
  cve: Float64Array;
}

/**
 * The live tracks, in struct-of-arrays form: per track one statistics record (see statsLayout),
 * a ring of its last maxLag + 1 positions, and its bookkeeping. The rings are stored slot-major:
 * cell (slot mod ringSize) × capacity + row, with x and y side by side in `ring` and z in `ringZ`
 * (3-D only), so that one lag's reads over the tracks of a frame walk memory in order (rows are
 * handed out in ascending order) instead of touching one cache line per track and lag; a grown
 * table is laid out again (O(capacity × ringSize), at each doubling). Storage grows by doubling
 * and ended tracks' rows are reused.
 * Ended tracks are folded into per-group totals (for the ensemble and the jackknife) and kept in
 * a bounded table (longest tracks win when it is full).
 *
 * Memory per live track: 8·(trackWidth + dims·ringSize) + 4·ringSize + ~80 bytes (bookkeeping, the
 * dense id table, the Map entry): ≈ 2.8 KiB at 2 axes, 16 lags, maxLag 128 (tools/bench/trackMemory.ts).
 */
export class TrackTable {
  readonly layout: StatsLayout;
  readonly ringSize: number;
  readonly groups: number;
  readonly maxTable: number;
  capacity = 0;
  /**
   * Values per track in `stats`: the record's CVE part, the previous step and its slot
   * (`layout.lagBase`, 21 at 2 axes). A track's lag sums are not kept per track (see `groupLag`).
   */
  readonly trackWidth: number;
  /** Per track (row × trackWidth): the first `trackWidth` values of a statistics record. */
  stats: Float64Array = new Float64Array(0);
  /** x, y of each ring cell (see the class doc): offset 2·cell. */
  ring: Float64Array = new Float64Array(0);
  /** z of each ring cell (3-D only, else empty): offset cell. */
  ringZ: Float64Array = new Float64Array(0);
  /** Slot whose position a ring cell holds (−1: none). */
  ringSlot: Int32Array = new Int32Array(0);
  lastSlot: Int32Array = new Int32Array(0);
  /** First slot of the track's current unbroken run of slots (its ring is filled from there on). */
  runStart: Int32Array = new Int32Array(0);
  /** Slot of the frame being gathered in which the track was already seen (duplicate-id check). */
  mark: Int32Array = new Int32Array(0);
  length: Uint32Array = new Uint32Array(0);
  id: Uint32Array = new Uint32Array(0);
  firstT: Float64Array = new Float64Array(0);
  lastT: Float64Array = new Float64Array(0);
  group: Uint16Array = new Uint16Array(0);
  /** Per-group totals of ended tracks (groups × width). */
  readonly closed: Float64Array;
  /** Ended tracks kept for the report. */
  readonly table: EndedTrack[] = [];
  /** Ended tracks not kept in the table. */
  omitted = 0;
  /** Of those, tracks that had at least one step. */
  omittedWithSteps = 0;
  /** Tracks ever started. */
  started = 0;
  /**
   * Per-group lag sums (groups × width, lag part only): the pipeline adds every frame's lag sums
   * here once per group instead of into each track's record (one hot destination instead of one
   * per track; the per-track lag sums were only ever read summed over a group).
   */
  readonly groupLag: Float64Array;
  private readonly live = new Map<number, number>();
  private readonly free: number[] = [];
  private shortestInTable = 0;
  // Dense id → row + 1 (0: not live) for small integer ids, so the hot lookup is one typed-array
  // read instead of a Map probe; ids ≥ DENSE_ID_LIMIT fall back to the Map.
  private dense: Int32Array = new Int32Array(0);
  // Live tracks per last-seen slot, in a ring of maxGap + 1 slots (see endStale): lets the
  // O(live tracks) sweep be skipped on frames where no track can have gone stale.
  private recentCount: Int32Array = new Int32Array(0);
  private recentSlot: Int32Array = new Int32Array(0);

  constructor(layout: StatsLayout, ringSize: number, groups: number, maxTable: number) {
    this.layout = layout;
    this.ringSize = ringSize;
    this.groups = groups;
    this.maxTable = maxTable;
    this.trackWidth = layout.lagBase;
    this.closed = new Float64Array(groups * layout.width);
    this.groupLag = new Float64Array(groups * layout.width);
    this.grow(256);
  }

  /** Tracks (ended and live) with at least one step. O(live tracks). */
  tracksWithSteps(): number {
    let n = this.endedWithSteps;
    for (const index of this.live.values()) if (this.stats[index * this.trackWidth] > 0) n++;
    return n;
  }

  /** Ended tracks that had at least one step. */
  endedWithSteps = 0;

  /** Number of live tracks. */
  liveCount(): number {
    return this.live.size;
  }

  /** Iterates over the row indices of live tracks. */
  liveRows(): IterableIterator<number> {
    return this.live.values();
  }

  /** Row of track `id`, creating a new track (first seen at `slot`, time `t`) if needed. O(1) amortised. */
  lookupOrCreate(id: number, slot: number, t: number): number {
    if (id < this.dense.length) {
      const row = this.dense[id];
      if (row > 0) return row - 1;
    } else if (id >= DENSE_ID_LIMIT) {
      const known = this.live.get(id);
      if (known !== undefined) return known;
    }
    if (this.free.length === 0) this.grow(this.capacity * 2);
    const index = this.free.pop() as number;
    const trackWidth = this.trackWidth;
    this.stats.fill(0, index * trackWidth, (index + 1) * trackWidth);
    // no previous step yet
    this.stats[index * trackWidth + this.layout.previousOffset + 2 * this.layout.dims] = -2;
    for (let cell = index; cell < this.ringSlot.length; cell += this.capacity) this.ringSlot[cell] = -1;
    this.lastSlot[index] = NO_SLOT;
    this.runStart[index] = NO_SLOT;
    this.mark[index] = NO_SLOT;
    this.length[index] = 0;
    this.id[index] = id;
    this.firstT[index] = t;
    this.lastT[index] = t;
    this.group[index] = this.started % this.groups;
    this.started++;
    this.live.set(id, index);
    if (id < DENSE_ID_LIMIT) {
      if (id >= this.dense.length) {
        let size = Math.max(1024, this.dense.length);
        while (size <= id) size *= 2;
        const dense = new Int32Array(Math.min(size, DENSE_ID_LIMIT));
        dense.set(this.dense);
        this.dense = dense;
      }
      this.dense[id] = index + 1;
    }
    void slot;
    return index;
  }

  /** Ring cell of `slot` of track row `index`: x, y at 2·cell in `ring`, z at cell in `ringZ`. */
  ringCell(index: number, slot: number): number {
    return (slot % this.ringSize) * this.capacity + index;
  }

  /** Records that track row `index` has a position at `slot`, time `t`. */
  touch(index: number, slot: number, t: number): void {
    this.forgetRecent(this.lastSlot[index]);
    this.noteRecent(slot);
    this.lastSlot[index] = slot;
    this.length[index]++;
    this.lastT[index] = t;
  }

  /**
   * Ends the tracks not seen for more than `maxGap` slots before `slot`. O(maxGap) when every
   * live track was seen within the allowance (the usual frame: the counts of live tracks per
   * recent last-seen slot add up to the live count), else O(live tracks). The sweep, when it
   * runs, visits tracks in the order they started, as before.
   */
  endStale(slot: number, maxGap: number): EndedTrack[] {
    if (this.recentCount.length !== maxGap + 1) this.resetRecent(maxGap + 1);
    let recent = 0;
    const size = this.recentCount.length;
    for (let k = slot - maxGap; k <= slot; k++) {
      if (k < 0) continue;
      const at = k % size;
      if (this.recentSlot[at] === k) recent += this.recentCount[at];
    }
    if (recent === this.live.size) return NO_TRACKS;
    const ended: EndedTrack[] = [];
    for (const [id, index] of this.live) {
      if (slot - this.lastSlot[index] > maxGap) {
        ended.push(this.end(id, index));
      }
    }
    return ended;
  }

  /** Ends every live track (end of the run). */
  endAll(): EndedTrack[] {
    const ended: EndedTrack[] = [];
    for (const [id, index] of this.live) ended.push(this.end(id, index));
    return ended;
  }

  /**
   * Per-group totals over ended and live tracks: a (groups × width) array.
   * O(live tracks × trackWidth).
   */
  groupTotals(): Float64Array {
    const totals = Float64Array.from(this.closed);
    const width = this.layout.width;
    for (let i = 0; i < totals.length; i++) totals[i] += this.groupLag[i];
    for (const index of this.live.values()) {
      this.addTrackCve(totals, this.group[index] * width, index);
    }
    return totals;
  }

  /** Snapshot of a live track as an EndedTrack-like row (for the per-track table). */
  liveRow(index: number): EndedTrack {
    return this.snapshot(index);
  }

  private end(id: number, index: number): EndedTrack {
    const row = this.snapshot(index);
    this.addTrackCve(this.closed, this.group[index] * this.layout.width, index);
    this.keep(row);
    this.forgetRecent(this.lastSlot[index]);
    this.live.delete(id);
    if (id < this.dense.length) this.dense[id] = 0;
    this.free.push(index);
    return row;
  }

  /** Adds track `index`'s CVE sums into the statistics record at `offset` of `target`. */
  private addTrackCve(target: Float64Array, offset: number, index: number): void {
    const source = index * this.trackWidth;
    for (let i = 0; i < this.layout.previousOffset; i++) target[offset + i] += this.stats[source + i];
  }

  private snapshot(index: number): EndedTrack {
    const width = this.trackWidth;
    const dims = this.layout.dims;
    const lastRing = 2 * this.ringCell(index, Math.max(0, this.lastSlot[index]));
    return {
      id: this.id[index],
      length: this.length[index],
      start: this.firstT[index],
      end: this.lastT[index],
      lastX: this.ring[lastRing],
      lastY: this.ring[lastRing + 1],
      cve: this.stats.slice(index * width + cveOffset(0), index * width + cveOffset(0) + CVE_WIDTH * dims),
    };
  }

  private keep(row: EndedTrack): void {
    if (row.cve[0] > 0) this.endedWithSteps++;
    if (row.length < 2) {
      this.omitted++;
      return;
    }
    if (this.table.length < this.maxTable) {
      this.table.push(row);
      if (this.table.length === this.maxTable) this.shortestInTable = this.findShortest();
      return;
    }
    this.omitted++;
    this.omittedWithSteps++;
    if (row.length <= this.table[this.shortestInTable].length) return;
    this.table[this.shortestInTable] = row;
    this.shortestInTable = this.findShortest();
  }

  private findShortest(): number {
    let best = 0;
    for (let i = 1; i < this.table.length; i++) if (this.table[i].length < this.table[best].length) best = i;
    return best;
  }

  private noteRecent(slot: number): void {
    const size = this.recentCount.length;
    if (size === 0 || slot < 0) return;
    const at = slot % size;
    if (this.recentSlot[at] !== slot) {
      this.recentSlot[at] = slot;
      this.recentCount[at] = 0;
    }
    this.recentCount[at]++;
  }

  private forgetRecent(slot: number): void {
    const size = this.recentCount.length;
    if (size === 0 || slot < 0) return;
    const at = slot % size;
    if (this.recentSlot[at] === slot) this.recentCount[at]--;
  }

  private resetRecent(size: number): void {
    // Rebuild the counts from the live tracks (first call, or a different allowance).
    this.recentCount = new Int32Array(size);
    this.recentSlot = new Int32Array(size).fill(-1);
    let newest = -1;
    for (const index of this.live.values()) newest = Math.max(newest, this.lastSlot[index]);
    for (const index of this.live.values()) {
      const last = this.lastSlot[index];
      if (last >= 0 && newest - last < size) this.noteRecent(last);
    }
  }

  private grow(capacity: number): void {
    const old = this.capacity;
    const ringSize = this.ringSize;
    const stats = new Float64Array(capacity * this.trackWidth);
    stats.set(this.stats);
    // Slot-major rings: each slot's block of `old` rows moves to its new place.
    const ring = new Float64Array(capacity * ringSize * 2);
    const ringZ = new Float64Array(this.layout.dims === 3 ? capacity * ringSize : 0);
    const ringSlot = new Int32Array(capacity * ringSize).fill(-1);
    for (let k = 0; k < ringSize && old > 0; k++) {
      ring.set(this.ring.subarray(2 * k * old, 2 * (k + 1) * old), 2 * k * capacity);
      if (ringZ.length > 0) ringZ.set(this.ringZ.subarray(k * old, (k + 1) * old), k * capacity);
      ringSlot.set(this.ringSlot.subarray(k * old, (k + 1) * old), k * capacity);
    }
    const lastSlot = new Int32Array(capacity);
    lastSlot.set(this.lastSlot);
    const runStart = new Int32Array(capacity);
    runStart.set(this.runStart);
    const mark = new Int32Array(capacity);
    mark.set(this.mark);
    const length = new Uint32Array(capacity);
    length.set(this.length);
    const id = new Uint32Array(capacity);
    id.set(this.id);
    const firstT = new Float64Array(capacity);
    firstT.set(this.firstT);
    const lastT = new Float64Array(capacity);
    lastT.set(this.lastT);
    const group = new Uint16Array(capacity);
    group.set(this.group);
    this.stats = stats;
    this.ring = ring;
    this.ringZ = ringZ;
    this.ringSlot = ringSlot;
    this.lastSlot = lastSlot;
    this.runStart = runStart;
    this.mark = mark;
    this.length = length;
    this.id = id;
    this.firstT = firstT;
    this.lastT = lastT;
    this.group = group;
    for (let i = capacity - 1; i >= old; i--) this.free.push(i);
    this.capacity = capacity;
  }
}
