import { addStats, type StatsLayout } from './statsLayout.js';

/**
 * Pooled statistics per time block (default 1 s of data time), for rolling estimates, the
 * D-over-time series and per-segment estimates. Bounded: when `maxBlocks` would be exceeded,
 * neighbouring blocks merge pairwise and the block length doubles, so memory stays at
 * maxBlocks × width × 8 bytes whatever the run length.
 */
export class TimeBlocks {
  readonly layout: StatsLayout;
  blockSeconds: number;
  readonly maxBlocks: number;
  stats: Float64Array;
  /** First and last data time seen in each block, s. */
  start: Float64Array;
  end: Float64Array;
  count = 0;

  constructor(layout: StatsLayout, blockSeconds: number, maxBlocks: number) {
    this.layout = layout;
    this.blockSeconds = blockSeconds;
    this.maxBlocks = maxBlocks;
    this.stats = new Float64Array(Math.min(maxBlocks, 64) * layout.width);
    this.start = new Float64Array(Math.min(maxBlocks, 64));
    this.end = new Float64Array(Math.min(maxBlocks, 64));
  }

  /** Index of the block for relative time `relative` s (data time `t` s), creating it if needed. */
  blockFor(relative: number, t: number): number {
    let index = Math.floor(relative / this.blockSeconds);
    while (index >= this.maxBlocks) {
      this.mergePairs();
      index = Math.floor(relative / this.blockSeconds);
    }
    if (index >= this.start.length) this.grow(index + 1);
    while (this.count <= index) {
      this.start[this.count] = NaN;
      this.end[this.count] = NaN;
      this.count++;
    }
    if (Number.isNaN(this.start[index])) this.start[index] = t;
    this.end[index] = t;
    return index;
  }

  /** Sum of the blocks whose data overlaps [from, to] s (null `to`: open-ended). */
  sumOver(from: number, to: number | null): { stats: Float64Array; blocks: number } {
    const sum = new Float64Array(this.layout.width);
    let blocks = 0;
    for (let b = 0; b < this.count; b++) {
      if (Number.isNaN(this.start[b])) continue;
      if (this.end[b] < from) continue;
      if (to !== null && this.start[b] > to) continue;
      addStats(this.layout, sum, 0, this.stats, b * this.layout.width);
      blocks++;
    }
    return { stats: sum, blocks };
  }

  private grow(needed: number): void {
    let capacity = this.start.length;
    while (capacity < needed) capacity *= 2;
    capacity = Math.min(capacity, this.maxBlocks);
    const stats = new Float64Array(capacity * this.layout.width);
    stats.set(this.stats);
    const start = new Float64Array(capacity);
    start.set(this.start);
    const end = new Float64Array(capacity);
    end.set(this.end);
    this.stats = stats;
    this.start = start;
    this.end = end;
  }

  private mergePairs(): void {
    const width = this.layout.width;
    const merged = Math.ceil(this.count / 2);
    for (let b = 0; b < merged; b++) {
      const first = 2 * b;
      const second = first + 1;
      if (b !== first) {
        this.stats.copyWithin(b * width, first * width, (first + 1) * width);
        this.start[b] = this.start[first];
        this.end[b] = this.end[first];
      }
      if (second < this.count) {
        addStats(this.layout, this.stats, b * width, this.stats, second * width);
        if (Number.isNaN(this.start[b])) this.start[b] = this.start[second];
        if (!Number.isNaN(this.end[second])) this.end[b] = this.end[second];
      }
    }
    this.stats.fill(0, merged * width);
    this.start.fill(NaN, merged);
    this.end.fill(NaN, merged);
    this.count = merged;
    this.blockSeconds *= 2;
  }
}
