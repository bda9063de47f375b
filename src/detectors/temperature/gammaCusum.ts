/**
 * One-sided log-likelihood-ratio CUSUM for a change of Gamma scale θ0 → qθ0 (Page 1954,
 * Biometrika 41:100; the LLR form is optimal in Lorden's sense, Lorden 1971, Ann. Math. Stat.
 * 42:1897).
 *
 * Each frame gives S_t, a sum of `shape` independent squared steps with scale θ:
 * S_t ~ Gamma(shape, θ). The increment is ℓ_t = n_t ln(1/q) + S_t(1/θ0 − 1/(qθ0)), where n_t is
 * the shape divided by the dispersion φ ≥ 1 and S_t is divided by φ too (a quasi-likelihood: when
 * the frame-to-frame variance of S_t exceeds the Gamma value, as with heterogeneous D, each frame
 * counts for fewer independent steps). W_t = max(0, W_{t−1} + ℓ_t); the chart fires when W_t > h.
 * The estimated change time is the frame after the last zero of W (the maximum-likelihood change
 * point of the CUSUM).
 *
 * Complexity: O(1) time and memory per frame.
 *
 * @example
 * const chart = new GammaCusum(1.05, 6.5);
 * chart.setBaseline(0.1, 1);
 * chart.push(12.5, 100, 3.0); // → false (S/n = 0.125 is a rise, but W = 1.07 < 6.5)
 * chart.value;                // → 1.0730…
 */
export class GammaCusum {
  /** Design ratio q = θ1/θ0. */
  readonly ratio: number;
  /** Threshold h, nats. */
  threshold: number;
  /** Current chart value W, nats. */
  value: number;
  /** Time (s) of the first frame after the last zero of W: the estimated change time. */
  changeTime: number;
  /** Frame count since the last zero of W. */
  framesSinceZero: number;
  private inverseBaseline: number;
  private inverseDispersion: number;
  private readonly logInverseRatio: number;

  /**
   * @param ratio design ratio q (> 0, ≠ 1)
   * @param threshold h in nats (> 0)
   */
  constructor(ratio: number, threshold: number) {
    if (!(ratio > 0) || ratio === 1 || !Number.isFinite(ratio)) throw new RangeError('GammaCusum requires ratio > 0 and ratio != 1');
    if (!(threshold > 0)) throw new RangeError('GammaCusum requires threshold > 0');
    this.ratio = ratio;
    this.threshold = threshold;
    this.value = 0;
    this.changeTime = Number.NaN;
    this.framesSinceZero = 0;
    this.inverseBaseline = 0;
    this.inverseDispersion = 1;
    this.logInverseRatio = -Math.log(ratio);
  }

  /** Set the in-control scale θ0 (µm², > 0) and the dispersion φ (≥ 1), and restart at W = 0. O(1). */
  setBaseline(baselineScale: number, dispersion: number): void {
    this.inverseBaseline = 1 / baselineScale;
    this.inverseDispersion = 1 / Math.max(1, dispersion);
    this.reset();
  }

  /** Restart the chart at W = 0. O(1). */
  reset(): void {
    this.value = 0;
    this.changeTime = Number.NaN;
    this.framesSinceZero = 0;
  }

  /**
   * Add one frame: `sum` = S_t (µm²), `shape` = independent squared steps in it, `t` = frame time
   * (s). Returns true when the chart is above its threshold after this frame. O(1).
   */
  push(sum: number, shape: number, t: number): boolean {
    if (!(shape > 0) || !(sum >= 0)) return this.value > this.threshold;
    const increment =
      this.inverseDispersion * (shape * this.logInverseRatio + sum * this.inverseBaseline * (1 - 1 / this.ratio));
    const next = this.value + increment;
    if (next <= 0) {
      this.value = 0;
      this.framesSinceZero = 0;
      this.changeTime = Number.NaN;
    } else {
      if (this.value === 0) this.changeTime = t;
      this.value = next;
      this.framesSinceZero++;
    }
    return this.value > this.threshold;
  }
}
