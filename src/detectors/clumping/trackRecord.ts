/** Length of the per-track intensity history ring (frames). */
export const INTENSITY_HISTORY = 48;

/**
 * What the clumping detector keeps per track id: the last position, the last one-frame step (for
 * the covariance-based estimator's cross products), the running sums of the current segment, and
 * a ring of recent log intensities with their slots. All fields are numbers or small typed arrays
 * allocated once per track.
 *
 * Segment sums follow the covariance-based estimator (CVE) of Vestergaard, Blainey & Flyvbjerg
 * (2014, PRE 89:022726), per axis and pooled over x and y:
 * D̂ = Σd²/(2Δt·n_sq) + Σd_k·d_{k+1}/(Δt·n_cross).
 *
 * @example
 * const r = new TrackRecord(7, 0);
 * r.addStep(0.1, -0.05, 1); r.addStep(0.02, 0.1, 2);
 * r.segmentSteps; // → 2
 */
export class TrackRecord {
  /** Track id. */
  readonly id: number;
  /** Slot where this record began. */
  readonly firstSlot: number;
  /** Last slot the track was seen in. */
  lastSlot: number;
  /** Slot of the last step (−1: none), and that step, µm. */
  lastStepSlot = -1;
  lastDx = 0;
  lastDy = 0;
  /** Current segment: Σ(dx² + dy²), axis-samples, Σ cross products, axis-pairs, steps. */
  sumSquares = 0;
  squareCount = 0;
  sumCross = 0;
  crossCount = 0;
  segmentSteps = 0;
  /** True once a merge into this track has been recorded (counted once). */
  merged = false;
  /** Ring of log intensities and their slots. */
  readonly logIntensity = new Float64Array(INTENSITY_HISTORY);
  readonly intensitySlot = new Float64Array(INTENSITY_HISTORY);
  intensityCount = 0;
  intensityHead = 0;

  constructor(id: number, slot: number) {
    this.id = id;
    this.firstSlot = slot;
    this.lastSlot = slot;
  }

  /** Add a one-frame step (µm) made into `slot`. O(1). */
  addStep(dx: number, dy: number, slot: number): void {
    this.sumSquares += dx * dx + dy * dy;
    this.squareCount += 2;
    if (this.lastStepSlot === slot - 1) {
      this.sumCross += dx * this.lastDx + dy * this.lastDy;
      this.crossCount += 2;
    }
    this.segmentSteps++;
    this.lastStepSlot = slot;
    this.lastDx = dx;
    this.lastDy = dy;
  }

  /** CVE D of the current segment, µm²/s, or NaN without a cross product. */
  segmentDiffusion(frameInterval: number): number {
    if (this.squareCount === 0 || this.crossCount === 0) return Number.NaN;
    return this.sumSquares / (2 * frameInterval * this.squareCount) + this.sumCross / (frameInterval * this.crossCount);
  }

  /** Start a new segment (the last step is kept, so the next cross product still counts). */
  resetSegment(): void {
    this.sumSquares = 0;
    this.squareCount = 0;
    this.sumCross = 0;
    this.crossCount = 0;
    this.segmentSteps = 0;
  }

  /** Record ln I at `slot`. O(1). */
  addIntensity(logIntensity: number, slot: number): void {
    this.logIntensity[this.intensityHead] = logIntensity;
    this.intensitySlot[this.intensityHead] = slot;
    this.intensityHead = (this.intensityHead + 1) % INTENSITY_HISTORY;
    if (this.intensityCount < INTENSITY_HISTORY) this.intensityCount++;
  }

  /**
   * Up to `max` log intensities on one side of `splitSlot` into `out`: the latest ones at or
   * before it (`after` false), or the earliest ones after it (`after` true). Returns the count.
   */
  intensitiesAround(splitSlot: number, after: boolean, max: number, out: Float64Array): number {
    let n = 0;
    const count = this.intensityCount;
    const oldest = (this.intensityHead - count + INTENSITY_HISTORY) % INTENSITY_HISTORY;
    if (after) {
      for (let k = 0; k < count && n < max; k++) {
        const i = (oldest + k) % INTENSITY_HISTORY;
        if (this.intensitySlot[i] > splitSlot) out[n++] = this.logIntensity[i];
      }
    } else {
      for (let k = count - 1; k >= 0 && n < max; k--) {
        const i = (oldest + k) % INTENSITY_HISTORY;
        if (this.intensitySlot[i] <= splitSlot) out[n++] = this.logIntensity[i];
      }
    }
    return n;
  }
}
