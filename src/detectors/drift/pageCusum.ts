/**
 * One-sided upper Page CUSUM on standardised innovations (Page 1954, Biometrika 41:100):
 * C_t = max(0, C_{t−1} + z_t − k); it signals when C_t > h and then restarts at 0
 * ("signal and restart"), so that signals form a renewal process with mean spacing ARL0 under
 * control. For the lower side feed −z. `lastZero` is the frame count at which C was last 0,
 * the usual estimate of the change point. O(1) per push.
 *
 * @example
 * const chart = new PageCusum(0.5, 4);
 * chart.push(3); chart.push(2.5); // → true on the second push (C = 2.5 + 2.0 = 4.5 > 4)
 */
export class PageCusum {
  /** Reference value k, SD units. */
  readonly k: number;
  /** Decision interval h, SD units. */
  readonly h: number;
  /** Current statistic C_t, SD units. */
  value: number;
  /** Innovations pushed so far. */
  count: number;
  /** Value of `count` when C was last 0 (change-point estimate). */
  lastZero: number;
  /** Number of signals so far. */
  signals: number;
  /** Value of C_t at the latest signal, before the restart, SD units (0 before any signal). */
  lastSignalValue: number;

  constructor(k: number, h: number) {
    if (!(k >= 0) || !Number.isFinite(k)) throw new RangeError('PageCusum requires k >= 0');
    if (!(h > 0) || !Number.isFinite(h)) throw new RangeError('PageCusum requires h > 0');
    this.k = k;
    this.h = h;
    this.value = 0;
    this.count = 0;
    this.lastZero = 0;
    this.signals = 0;
    this.lastSignalValue = 0;
  }

  /** Push one innovation z (SD units); returns true when the chart signals (and restarts). */
  push(z: number): boolean {
    this.count++;
    const next = this.value + z - this.k;
    if (next <= 0) {
      this.value = 0;
      this.lastZero = this.count;
      return false;
    }
    if (next > this.h) {
      this.signals++;
      this.lastSignalValue = next;
      this.value = 0;
      this.lastZero = this.count;
      return true;
    }
    this.value = next;
    return false;
  }
}
