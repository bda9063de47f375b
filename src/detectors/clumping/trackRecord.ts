import { grownArray } from '../../stats/grownArray.js';

/** Length of the per-track intensity history ring (frames). */
export const INTENSITY_HISTORY = 48;

/**
 * What the clumping detector keeps per track, for all tracks at once in typed arrays (struct of
 * arrays) indexed by a record number `k` handed out by `allocate` and reused after `release`:
 * the last slot seen, the last one-frame step (for the covariance-based estimator's cross
 * products), the running sums of the current segment, and a ring of recent log intensities with
 * their slots. The hot loops read and write these arrays in record order and touch no object.
 *
 * Segment sums follow the covariance-based estimator (CVE) of Vestergaard, Blainey & Flyvbjerg
 * (2014, PRE 89:022726), per axis and pooled over x and y:
 * D̂ = Σd²/(2Δt·n_sq) + Σd_k·d_{k+1}/(Δt·n_cross).
 *
 * Memory: 101 bytes per record, plus 768 bytes (2 × 48 × 8) per record once any intensity has been
 * added (the rings are allocated for every record at the first intensity: inputs without
 * intensity pay nothing for them). Storage grows by doubling; the arrays are replaced when it
 * does, so read them again after `allocate`.
 *
 * @example
 * const records = new TrackRecords();
 * const k = records.allocate(0); // a track first seen at slot 0
 * records.addStep(k, 0.1, -0.05, 1); records.addStep(k, 0.02, 0.1, 2);
 * records.segmentSteps[k]; // → 2
 */
export class TrackRecords {
  /** Records the arrays hold. */
  capacity = 0;
  /** Slot where the record began, and the last slot the track was seen in. */
  firstSlot: Float64Array = new Float64Array(0);
  lastSlot: Float64Array = new Float64Array(0);
  /** Slot of the last step (−1: none), and that step, µm. */
  lastStepSlot: Float64Array = new Float64Array(0);
  lastDx: Float64Array = new Float64Array(0);
  lastDy: Float64Array = new Float64Array(0);
  /** Current segment: Σ(dx² + dy²) µm², axis-samples, Σ cross products µm², axis-pairs, steps. */
  sumSquares: Float64Array = new Float64Array(0);
  squareCount: Int32Array = new Int32Array(0);
  sumCross: Float64Array = new Float64Array(0);
  crossCount: Int32Array = new Int32Array(0);
  segmentSteps: Int32Array = new Int32Array(0);
  /** 1 once a merge into this track has been recorded (counted once). */
  merged: Uint8Array = new Uint8Array(0);
  /** Above the look rate: the slot of the track's last look (−1: none) and its position there, µm. */
  lookSlot: Float64Array = new Float64Array(0);
  lookX: Float64Array = new Float64Array(0);
  lookY: Float64Array = new Float64Array(0);
  /** Rings of log intensities and their slots (record k at k·INTENSITY_HISTORY; empty until the first intensity). */
  logIntensity: Float64Array = new Float64Array(0);
  intensitySlot: Float64Array = new Float64Array(0);
  intensityCount: Int32Array = new Int32Array(0);
  intensityHead: Int32Array = new Int32Array(0);
  private readonly free: number[] = [];

  constructor(capacity = 256) {
    this.grow(capacity);
  }

  /** A fresh record for a track first seen at `slot`; returns its number. O(1) amortised. */
  allocate(slot: number): number {
    if (this.free.length === 0) this.grow(2 * this.capacity);
    const k = this.free.pop() as number;
    this.firstSlot[k] = slot;
    this.lastSlot[k] = slot;
    this.lastStepSlot[k] = -1;
    this.lastDx[k] = 0;
    this.lastDy[k] = 0;
    this.sumSquares[k] = 0;
    this.squareCount[k] = 0;
    this.sumCross[k] = 0;
    this.crossCount[k] = 0;
    this.segmentSteps[k] = 0;
    this.merged[k] = 0;
    this.lookSlot[k] = -1;
    this.intensityCount[k] = 0;
    this.intensityHead[k] = 0;
    return k;
  }

  /** Gives record `k` back (its values stay readable until it is handed out again). */
  release(k: number): void {
    this.free.push(k);
  }

  /**
   * Add a step (µm) made into `slot` to record `k`: a one-frame step, or above the look rate the
   * displacement between two looks, `slot` then counting looks. O(1).
   */
  addStep(k: number, dx: number, dy: number, slot: number): void {
    this.sumSquares[k] += dx * dx + dy * dy;
    this.squareCount[k] += 2;
    if (this.lastStepSlot[k] === slot - 1) {
      this.sumCross[k] += dx * this.lastDx[k] + dy * this.lastDy[k];
      this.crossCount[k] += 2;
    }
    this.segmentSteps[k]++;
    this.lastStepSlot[k] = slot;
    this.lastDx[k] = dx;
    this.lastDy[k] = dy;
  }

  /** CVE D of record `k`'s current segment, µm²/s, or NaN without a cross product. */
  segmentDiffusion(k: number, frameInterval: number): number {
    if (this.squareCount[k] === 0 || this.crossCount[k] === 0) return Number.NaN;
    return this.sumSquares[k] / (2 * frameInterval * this.squareCount[k]) + this.sumCross[k] / (frameInterval * this.crossCount[k]);
  }

  /** Start a new segment for record `k` (the last step is kept, so the next cross product still counts). */
  resetSegment(k: number): void {
    this.sumSquares[k] = 0;
    this.squareCount[k] = 0;
    this.sumCross[k] = 0;
    this.crossCount[k] = 0;
    this.segmentSteps[k] = 0;
  }

  /**
   * Where record `k`'s latest log intensity is in `logIntensity` and `intensitySlot`, or −1 when
   * it has none (an index, not an object: this is read per particle per frame).
   */
  latestIntensityAt(k: number): number {
    if (this.intensityCount[k] === 0) return -1;
    return k * INTENSITY_HISTORY + ((this.intensityHead[k] + INTENSITY_HISTORY - 1) % INTENSITY_HISTORY);
  }

  /** Record ln I at `slot` in record `k`. O(1) (the first call allocates the rings). */
  addIntensity(k: number, logIntensity: number, slot: number): void {
    if (this.logIntensity.length === 0) this.growRings();
    const head = this.intensityHead[k];
    this.logIntensity[k * INTENSITY_HISTORY + head] = logIntensity;
    this.intensitySlot[k * INTENSITY_HISTORY + head] = slot;
    this.intensityHead[k] = (head + 1) % INTENSITY_HISTORY;
    if (this.intensityCount[k] < INTENSITY_HISTORY) this.intensityCount[k]++;
  }

  /** Record `k`'s log intensities, in ring order (for a median: the order does not matter). */
  intensities(k: number): Float64Array {
    const from = k * INTENSITY_HISTORY;
    return this.logIntensity.subarray(from, from + this.intensityCount[k]);
  }

  /**
   * Up to `max` log intensities of record `k` on one side of `splitSlot` into `out`: the latest
   * ones at or before it (`after` false), or the earliest ones after it (`after` true). Returns
   * the count.
   */
  intensitiesAround(k: number, splitSlot: number, after: boolean, max: number, out: Float64Array): number {
    let n = 0;
    const count = this.intensityCount[k];
    const base = k * INTENSITY_HISTORY;
    const oldest = (this.intensityHead[k] - count + INTENSITY_HISTORY) % INTENSITY_HISTORY;
    if (after) {
      for (let j = 0; j < count && n < max; j++) {
        const i = base + ((oldest + j) % INTENSITY_HISTORY);
        if (this.intensitySlot[i] > splitSlot) out[n++] = this.logIntensity[i];
      }
    } else {
      for (let j = count - 1; j >= 0 && n < max; j--) {
        const i = base + ((oldest + j) % INTENSITY_HISTORY);
        if (this.intensitySlot[i] <= splitSlot) out[n++] = this.logIntensity[i];
      }
    }
    return n;
  }

  private grow(capacity: number): void {
    const old = this.capacity;
    this.firstSlot = grownArray(this.firstSlot, capacity);
    this.lastSlot = grownArray(this.lastSlot, capacity);
    this.lastStepSlot = grownArray(this.lastStepSlot, capacity);
    this.lastDx = grownArray(this.lastDx, capacity);
    this.lastDy = grownArray(this.lastDy, capacity);
    this.sumSquares = grownArray(this.sumSquares, capacity);
    this.squareCount = grownArray(this.squareCount, capacity);
    this.sumCross = grownArray(this.sumCross, capacity);
    this.crossCount = grownArray(this.crossCount, capacity);
    this.segmentSteps = grownArray(this.segmentSteps, capacity);
    this.merged = grownArray(this.merged, capacity);
    this.lookSlot = grownArray(this.lookSlot, capacity, -1);
    this.lookX = grownArray(this.lookX, capacity);
    this.lookY = grownArray(this.lookY, capacity);
    this.intensityCount = grownArray(this.intensityCount, capacity);
    this.intensityHead = grownArray(this.intensityHead, capacity);
    this.capacity = capacity;
    if (this.logIntensity.length > 0) this.growRings();
    // hand out low numbers first (records in ascending order walk the arrays in order)
    for (let k = capacity - 1; k >= old; k--) this.free.push(k);
  }

  private growRings(): void {
    const size = this.capacity * INTENSITY_HISTORY;
    this.logIntensity = grownArray(this.logIntensity, size);
    this.intensitySlot = grownArray(this.intensitySlot, size);
  }
}
