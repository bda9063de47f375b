/**
 * Siegmund's approximation to the average run length of a one-sided Page CUSUM
 * C_t = max(0, C_{t−1} + z_t − k) on unit-variance normal innovations z_t with mean `mu`,
 * signalling when C_t > h (Siegmund 1985, "Sequential Analysis", §X.2; Page 1954, Biometrika 41:100):
 *
 *     ARL(μ) ≈ [exp(−2Δb) + 2Δb − 1] / (2Δ²),   Δ = μ − k,   b = h + 1.166
 *
 * and its limit b² when Δ → 0. Units: `mu`, `k` and `h` in SD of the innovation; the result is in
 * frames (innovations). O(1).
 *
 * @param mu mean of the standardised innovation (0 in control)
 * @param k reference value (allowance), ≥ 0
 * @param h decision interval, ≥ 0
 * @returns the approximate ARL in frames
 * @example
 * siegmundArl(0, 0.5, 4); // → 338.0 (in-control ARL0)
 * siegmundArl(1, 0.5, 4); // → 8.34  (ARL1 for a one-SD shift)
 */
export function siegmundArl(mu: number, k: number, h: number): number {
  if (!Number.isFinite(mu) || !(k >= 0) || !(h >= 0)) {
    throw new RangeError('siegmundArl requires finite mu, k >= 0 and h >= 0');
  }
  const delta = mu - k;
  const b = h + 1.166;
  const x = 2 * delta * b;
  // For small |Δb| the numerator loses digits; use its series e^{−x} + x − 1 = x²/2 − x³/6 + x⁴/24.
  if (Math.abs(x) < 1e-4) {
    return (b * b) * (1 - x / 3 + (x * x) / 12);
  }
  return (Math.exp(-x) + x - 1) / (2 * delta * delta);
}
