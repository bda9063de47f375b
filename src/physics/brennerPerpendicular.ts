/** Most terms summed before giving up (only reached for h/r within about 1e-8 of contact). */
const MAX_TERMS = 1_000_000;

/**
 * Wall correction for diffusion **perpendicular** to a plane wall, D⊥/D₀ = 1/λ, from the exact
 * bipolar-coordinate series of H. Brenner, "The slow motion of a sphere through a viscous fluid
 * towards a plane surface", Chem. Eng. Sci. 16, 242–251 (1961):
 *
 *     λ = (4/3) sinh α · Σ_{n≥1} n(n+1)/((2n−1)(2n+3)) ·
 *         [ (2 sinh((2n+1)α) + (2n+1) sinh 2α) / (4 sinh²((n+½)α) − (2n+1)² sinh² α) − 1 ]
 *
 * with α = arccosh(h/r), h the centre height and r the radius.
 *
 * Numerics: with k = 2n+1 and x = kα the bracket is evaluated as
 *
 *     bracket = (2 − 2e^{−x} + k sinh 2α + k² sinh²α) / [(2 sinh(x/2) − k sinh α)(2 sinh(x/2) + k sinh α)]
 *
 * (the "− 1" folded into the numerator, the denominator factored as a difference of squares).
 * Near contact (α → 0) the factor 2 sinh(kα/2) − k sinh α ≈ kα³(k² − 4)/24 cancels in its
 * leading term, so for kα < 0.5 it is summed from its Taylor series instead,
 * Σ_{m odd ≥ 3} k·((k/2)^{m−1} − 1)·α^m/m!. For large x the denominator overflows to ∞ and the
 * term to 0, which is its limit. Terms are summed until one adds less than 1e-16 of the sum:
 * O(1/α) terms, about 300 at h/r = 1.01, 25 at h/r = 2, a few at h/r = 10.
 *
 * Bad input: h/r < 1 or NaN gives NaN; h/r = 1 (contact) gives 0; h/r = ∞ (or above 1e150) gives 1.
 *
 * @param heightOverRadius h/r, dimensionless (≥ 1)
 * @returns D⊥/D₀ = 1/λ, dimensionless, in [0, 1]
 * @example
 * brennerPerpendicular(2)          // → 0.47047
 * 1 / brennerPerpendicular(Math.cosh(1)) // → 3.0361 (Brenner's λ at α = 1)
 */
export function brennerPerpendicular(heightOverRadius: number): number {
  if (!(heightOverRadius >= 1)) return Number.NaN;
  if (heightOverRadius === 1) return 0;
  // Beyond 1e150 sinh²α overflows; λ − 1 ≈ 9r/(8h) < 1e-149 there, so the answer is 1.
  if (heightOverRadius > 1e150) return 1;
  const alpha = Math.acosh(heightOverRadius);
  const sinhAlpha = Math.sinh(alpha);
  const sinhAlphaSquared = sinhAlpha * sinhAlpha;
  const sinhTwoAlpha = Math.sinh(2 * alpha);
  let sum = 0;
  for (let n = 1; n <= MAX_TERMS; n++) {
    const k = 2 * n + 1;
    const x = k * alpha;
    const numerator = -2 * Math.expm1(-x) + k * sinhTwoAlpha + k * k * sinhAlphaSquared;
    const halfSinh = 2 * Math.sinh(x / 2);
    const denominator = halfDifference(k, alpha, sinhAlpha) * (halfSinh + k * sinhAlpha);
    const bracket = numerator / denominator;
    const term = ((n * (n + 1)) / ((2 * n - 1) * (2 * n + 3))) * bracket;
    sum += term;
    if (term <= 1e-16 * sum) break;
  }
  const lambda = (4 / 3) * sinhAlpha * sum;
  return 1 / lambda;
}

/**
 * 2 sinh(kα/2) − k sinh α without cancellation (internal): its Taylor series
 * Σ_{m odd ≥ 3} k·((k/2)^{m−1} − 1)·α^m/m! when kα < 0.5, the direct form otherwise.
 *
 * @param k 2n + 1
 * @param alpha α = arccosh(h/r)
 * @param sinhAlpha sinh α
 * @returns 2 sinh(kα/2) − k sinh α
 * @example
 * halfDifference(3, 1e-3, Math.sinh(1e-3)) // → 6.25e-10 (= kα³(k² − 4)/24)
 */
function halfDifference(k: number, alpha: number, sinhAlpha: number): number {
  const x = k * alpha;
  if (x >= 0.5) return 2 * Math.sinh(x / 2) - k * sinhAlpha;
  let sum = 0;
  let alphaPowerOverFactorial = alpha; // α^m / m!, starting at m = 1
  let halfKPower = 1; // (k/2)^{m−1}, starting at m = 1
  const halfK = k / 2;
  for (let m = 3; m < 60; m += 2) {
    alphaPowerOverFactorial *= (alpha * alpha) / ((m - 1) * m);
    halfKPower *= halfK * halfK;
    const term = k * (halfKPower - 1) * alphaPowerOverFactorial;
    sum += term;
    if (term <= 1e-17 * sum) break;
  }
  return sum;
}
