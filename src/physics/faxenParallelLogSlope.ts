/**
 * Logarithmic slope of Faxén's parallel wall factor f(u) = D∥/D₀ (see {@link faxenParallel}) with
 * respect to the height ratio u = h/r: d ln f / d ln u = u·f′(u)/f(u). With s = 1/u,
 *
 *     u·f′(u) = (9/16)s − (3/8)s³ + (45/64)s⁴ + (5/16)s⁵
 *
 * Used to propagate a radius uncertainty through D = k_BT·f(h/r)/(6πηr): at fixed height,
 * d ln D / d ln r = −(1 + u·f′(u)/f(u)), so a wall makes D more sensitive to the radius.
 *
 * Bad input: u < 1 or NaN gives NaN; u = ∞ gives 0.
 *
 * Complexity: O(1).
 *
 * @param heightOverRadius u = h/r, dimensionless (≥ 1)
 * @returns d ln(D∥/D₀) / d ln(h/r), dimensionless (≥ 0)
 * @example
 * faxenParallelLogSlope(2) // → 0.3993 (a 1 % larger h/r raises D∥ by 0.40 %)
 */
export function faxenParallelLogSlope(heightOverRadius: number): number {
  if (!(heightOverRadius >= 1)) return Number.NaN;
  const s = 1 / heightOverRadius;
  const s3 = s * s * s;
  const slope = (9 / 16) * s - (3 / 8) * s3 + (45 / 64) * s3 * s + (5 / 16) * s3 * s * s;
  const factor = 1 - (9 / 16) * s + (1 / 8) * s3 - (45 / 256) * s3 * s - (1 / 16) * s3 * s * s;
  return slope / factor;
}
