/**
 * Wall correction for diffusion **parallel** to a plane wall, D∥/D₀, by Faxén's method-of-
 * reflections series (H. Faxén 1923, as given in J. Happel & H. Brenner, *Low Reynolds Number
 * Hydrodynamics*, 1965):
 *
 *     D∥/D₀ ≈ 1 − (9/16)(r/h) + (1/8)(r/h)³ − (45/256)(r/h)⁴ − (1/16)(r/h)⁵
 *
 * with h the height of the sphere **centre** above the wall and r its radius. 2-D tracking in the
 * image plane (a coverslip below) measures this parallel coefficient. The series loses accuracy
 * for gaps h − r below about 0.1 r.
 *
 * Bad input: h/r < 1 (the sphere would cut the wall) or NaN gives NaN; h/r = ∞ gives 1.
 *
 * Complexity: O(1).
 *
 * @param heightOverRadius h/r, dimensionless (≥ 1)
 * @returns D∥/D₀, dimensionless, in (0.32, 1]
 * @example
 * faxenParallel(2)  // → 0.72144
 * faxenParallel(10) // → 0.94386
 */
export function faxenParallel(heightOverRadius: number): number {
  if (!(heightOverRadius >= 1)) return Number.NaN;
  const s = 1 / heightOverRadius;
  const s3 = s * s * s;
  return 1 - (9 / 16) * s + (1 / 8) * s3 - (45 / 256) * s3 * s - (1 / 16) * s3 * s * s;
}
