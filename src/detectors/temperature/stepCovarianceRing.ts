import type { FrameSteps, StepSums } from '../frameSteps.js';
import { TrackCache } from '../trackCache.js';

/** Sums over a run of frames, as returned by {@link StepCovarianceRing.sumSince}. */
export interface StepCovarianceSums {
  /** Frames summed. */
  frames: number;
  /** Σ of squared drift-corrected steps over both axes, µm² (N/(N−1)-corrected). */
  sumSquares: number;
  /** Number of axis-steps in `sumSquares` (2 per 2-D step). */
  squareCount: number;
  /** Σ of lag-1 products of consecutive drift-corrected steps of the same track, both axes, µm². */
  sumProducts: number;
  /** Number of axis-pairs in `sumProducts`. */
  productCount: number;
  /** Σ S_t, the per-frame sums of squared residual steps, µm² (not corrected). */
  sumStatistic: number;
  /** Σ of per-frame Gamma shapes (stepCount − 1). */
  sumShape: number;
}

/**
 * Per-frame sums for the covariance-based estimator (CVE) of Vestergaard, Blainey & Flyvbjerg
 * (2014, Phys. Rev. E 89:022726), kept in a ring of the latest frames so that the D̂ and σ̂² of
 * any recent run of frames (for example, since a CUSUM's last zero) come out in O(frames).
 *
 * Per frame the steps are drift-corrected by subtracting the frame's common-mode mean step; the
 * squared residuals and the lag-1 products are multiplied by N/(N−1) to undo the shrinkage of mean
 * subtraction (detectors.md §1). Lag-1 products need the previous step of the same track in the
 * previous slot: the ring keeps each live track's last residual step (released when the track ends).
 * Frames without steps (after a dropped frame) are recorded with zero counts.
 *
 * CVE per axis: D̂ = ⟨Δx²⟩/(2Δt) + ⟨ΔxₙΔxₙ₊₁⟩/Δt, σ̂² = R⟨Δx²⟩ + (2R − 1)⟨ΔxₙΔxₙ₊₁⟩.
 *
 * Complexity: O(stepCount) per frame; memory O(capacity + live tracks).
 *
 * @example
 * const ring = new StepCovarianceRing(1024);
 * ring.push(steps);                 // once per frame
 * const sums = ring.sumSince(100);  // the last 100 frames
 * StepCovarianceRing.diffusion(sums, 0.033);  // → D̂, µm²/s
 */
export class StepCovarianceRing {
  /** Ring capacity, frames. */
  readonly capacity: number;
  /** Frames pushed so far. */
  frames: number;
  /** The statistic S_t (µm²) and shape of the latest frame (shape 0 when it had fewer than 2 steps). */
  lastStatistic: number;
  lastShape: number;
  private readonly sq: Float64Array;
  private readonly sqCount: Float64Array;
  private readonly prod: Float64Array;
  private readonly prodCount: Float64Array;
  private readonly statistic: Float64Array;
  private readonly shape: Float64Array;
  private readonly trackIndex: TrackCache<number>;
  private lastDx: Float64Array;
  private lastDy: Float64Array;
  private lastSlot: Float64Array;
  private freeList: number[];
  private poolSize: number;

  /** @param capacity frames kept (≥ 2) */
  constructor(capacity: number) {
    if (!(capacity >= 2) || !Number.isInteger(capacity)) throw new RangeError('StepCovarianceRing requires an integer capacity >= 2');
    this.capacity = capacity;
    this.frames = 0;
    this.lastStatistic = 0;
    this.lastShape = 0;
    this.sq = new Float64Array(capacity);
    this.sqCount = new Float64Array(capacity);
    this.prod = new Float64Array(capacity);
    this.prodCount = new Float64Array(capacity);
    this.statistic = new Float64Array(capacity);
    this.shape = new Float64Array(capacity);
    this.trackIndex = new TrackCache();
    this.lastDx = new Float64Array(256);
    this.lastDy = new Float64Array(256);
    this.lastSlot = new Float64Array(256);
    this.freeList = [];
    this.poolSize = 0;
  }

  /** Add one frame's steps. O(stepCount). */
  push(steps: FrameSteps): void {
    const slotIndex = this.frames % this.capacity;
    if (steps.sums) {
      this.pushSums(steps.sums, slotIndex);
      return;
    }
    const n = steps.stepCount;
    let sumSquares = 0;
    let sumProducts = 0;
    let pairs = 0;
    let meanX = 0;
    let meanY = 0;
    let valid = 0;
    for (let k = 0; k < n; k++) {
      const dx = steps.dx[k];
      const dy = steps.dy[k];
      if (!Number.isFinite(dx) || !Number.isFinite(dy)) continue; // per-sample skip
      meanX += dx;
      meanY += dy;
      valid++;
    }
    let residualSum = 0;
    if (valid >= 2) {
      meanX /= valid;
      meanY /= valid;
      const factor = valid / (valid - 1);
      for (let k = 0; k < n; k++) {
        const dx = steps.dx[k];
        const dy = steps.dy[k];
        if (!Number.isFinite(dx) || !Number.isFinite(dy)) continue;
        const rx = dx - meanX;
        const ry = dy - meanY;
        const squared = rx * rx + ry * ry;
        residualSum += squared;
        sumSquares += squared * factor;
        const particle = steps.stepParticle[k];
        const id = steps.trackId[particle];
        let index = this.trackIndex.find(id, steps.trackRow[particle]);
        if (index === undefined) {
          index = this.allocate();
          this.trackIndex.set(id, steps.trackRow[particle], index);
        } else if (this.lastSlot[index] === steps.slot - 1) {
          sumProducts += (this.lastDx[index] * rx + this.lastDy[index] * ry) * factor;
          pairs++;
        }
        this.lastDx[index] = rx;
        this.lastDy[index] = ry;
        this.lastSlot[index] = steps.slot;
      }
    }
    for (let e = 0; e < steps.endedCount; e++) {
      const id = steps.endedTrackId[e];
      const index = this.trackIndex.get(id);
      if (index !== undefined) {
        this.trackIndex.delete(id);
        this.freeList.push(index);
      }
    }
    this.sq[slotIndex] = sumSquares;
    this.sqCount[slotIndex] = valid >= 2 ? 2 * valid : 0;
    this.prod[slotIndex] = sumProducts;
    this.prodCount[slotIndex] = 2 * pairs;
    this.statistic[slotIndex] = residualSum;
    this.shape[slotIndex] = valid >= 2 ? valid - 1 : 0;
    this.lastStatistic = residualSum;
    this.lastShape = valid >= 2 ? valid - 1 : 0;
    this.frames++;
  }

  /**
   * The same frame from the pipeline's step sums (FrameSteps.sums), O(1): its residuals are about
   * the frame's mean step, and its residual pairs only those whose previous step was made on a
   * frame of at least 2 steps, as in the loop above (no per-track state is kept on this path).
   */
  private pushSums(sums: StepSums, slotIndex: number): void {
    // a frame of fewer than 2 steps is recorded with zero counts, as in the loop above
    const valid = sums.steps >= 2 ? sums.steps : 0;
    const factor = valid > 0 ? valid / (valid - 1) : 0;
    const residualSum = valid > 0 ? sums.residualSquares : 0;
    this.sq[slotIndex] = residualSum * factor;
    this.sqCount[slotIndex] = 2 * valid;
    this.prod[slotIndex] = valid > 0 ? sums.residualProducts * factor : 0;
    this.prodCount[slotIndex] = valid > 0 ? 2 * sums.residualPairs : 0;
    this.statistic[slotIndex] = residualSum;
    this.shape[slotIndex] = valid > 0 ? valid - 1 : 0;
    this.lastStatistic = residualSum;
    this.lastShape = this.shape[slotIndex];
    this.frames++;
  }

  /** Sums over the latest `frameCount` frames (clamped to what the ring holds). O(frameCount). */
  sumSince(frameCount: number): StepCovarianceSums {
    const count = Math.max(0, Math.min(frameCount, this.frames, this.capacity));
    const sums: StepCovarianceSums = {
      frames: count, sumSquares: 0, squareCount: 0, sumProducts: 0, productCount: 0, sumStatistic: 0, sumShape: 0,
    };
    for (let j = 0; j < count; j++) {
      const index = (this.frames - 1 - j) % this.capacity;
      sums.sumSquares += this.sq[index];
      sums.squareCount += this.sqCount[index];
      sums.sumProducts += this.prod[index];
      sums.productCount += this.prodCount[index];
      sums.sumStatistic += this.statistic[index];
      sums.sumShape += this.shape[index];
    }
    return sums;
  }

  /** CVE D̂ (µm²/s) from sums, or NaN without data. O(1). */
  static diffusion(sums: StepCovarianceSums, frameIntervalSeconds: number): number {
    if (sums.squareCount === 0 || sums.productCount === 0) return Number.NaN;
    return sums.sumSquares / sums.squareCount / (2 * frameIntervalSeconds) + sums.sumProducts / sums.productCount / frameIntervalSeconds;
  }

  /** CVE σ̂² per axis (µm²) from sums and the blur coefficient R, or NaN without data. O(1). */
  static localizationVariance(sums: StepCovarianceSums, blur: number): number {
    if (sums.squareCount === 0 || sums.productCount === 0) return Number.NaN;
    return blur * (sums.sumSquares / sums.squareCount) + (2 * blur - 1) * (sums.sumProducts / sums.productCount);
  }

  private allocate(): number {
    const reused = this.freeList.pop();
    if (reused !== undefined) {
      this.lastSlot[reused] = Number.NaN; // a recycled entry has no previous step
      return reused;
    }
    if (this.poolSize === this.lastDx.length) {
      // Grow the pools geometrically (rare: only when more tracks are live than ever before).
      const size = 2 * this.poolSize;
      const grow = (old: Float64Array): Float64Array => {
        const next = new Float64Array(size);
        next.set(old);
        return next;
      };
      this.lastDx = grow(this.lastDx);
      this.lastDy = grow(this.lastDy);
      this.lastSlot = grow(this.lastSlot);
    }
    this.lastSlot[this.poolSize] = Number.NaN;
    return this.poolSize++;
  }
}
