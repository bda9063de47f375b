/**
 * Rational approximation to the perpendicular wall correction D⊥/D₀, from M. A. Bevan &
 * D. C. Prieve, "Hindered diffusion of colloidal particles very near to a wall: revisited",
 * J. Chem. Phys. 113, 1228 (2000), with gap g = h − r:
 *
 *     D⊥/D₀ ≈ (6g² + 2rg) / (6g² + 9rg + 2r²)
 *
 * Within about 0.7 % of the exact series ({@link brennerPerpendicular}) at every height (worst
 * near h/r ≈ 1.06), and cheap.
 *
 * Bad input: h/r < 1 or NaN gives NaN; h/r = 1 gives 0; h/r = ∞ gives 1.
 *
 * Complexity: O(1).
 *
 * @param heightOverRadius h/r, dimensionless (≥ 1)
 * @returns D⊥/D₀, dimensionless, in [0, 1)
 * @example
 * bevanPrievePerpendicular(2) // → 0.470588 (= 8/17)
 */
export function bevanPrievePerpendicular(heightOverRadius: number): number {
  if (!(heightOverRadius >= 1)) return Number.NaN;
  if (heightOverRadius === Number.POSITIVE_INFINITY) return 1;
  const gap = heightOverRadius - 1; // g/r
  return (6 * gap * gap + 2 * gap) / (6 * gap * gap + 9 * gap + 2);
}
