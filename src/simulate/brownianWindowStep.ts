import type { Random } from '../stats/random.js';

/**
 * The stepping core of the simulator: one exact step of 1-D Brownian motion over a window of
 * `duration` s, returning both the end displacement W(h) and the time average of the path over
 * the window, Ā = (1/h)∫₀ʰ W(t) dt, both relative to the start position, µm.
 *
 * The pair is jointly Gaussian with Var W = 2Dh, Var Ā = 2Dh/3 and Cov(W, Ā) = Dh (integrals of
 * the Wiener covariance min(s, t)), so it is drawn exactly as W = √(2Dh)·ξ₁ and
 * Ā = W/2 + √(2Dh/12)·ξ₂ (the mean of a Brownian bridge plus its fluctuation). Averaging these
 * sub-window means over an exposure reproduces the blur of Savin & Doyle (2005), the
 * −2D·t_E/3 term of estimators.md §1, exactly and at any number of sub-steps; the sub-steps
 * only serve the time-dependent parts (D(t), drift, vibration, rotation).
 *
 * Writes `out[0]` = W (µm) and `out[1]` = Ā (µm). Uses two normal deviates. O(1), no allocation.
 *
 * @param random seeded generator
 * @param diffusion D, µm²/s (≥ 0)
 * @param duration window length h, s (≥ 0)
 * @param out a Float64Array of length ≥ 2, overwritten
 * @example
 * const out = new Float64Array(2);
 * brownianWindowStep(new Random(1), 0.5, 0.01, out);
 * out[0]; // → end displacement, SD √(2·0.5·0.01) = 0.1 µm
 * out[1]; // → mean displacement over the window, SD √(2·0.5·0.01/3) ≈ 0.058 µm
 */
export function brownianWindowStep(random: Random, diffusion: number, duration: number, out: Float64Array): void {
  const variance = 2 * diffusion * duration;
  const end = Math.sqrt(variance) * random.normal();
  out[0] = end;
  // Conditional variance of Ā given W: 2Dh/3 − (Dh)²/(2Dh) = 2Dh/12.
  out[1] = 0.5 * end + Math.sqrt(variance / 12) * random.normal();
}
