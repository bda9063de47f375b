/**
 * Exposure-averaged power law g(τ; α, t_E): the apparent MSD shape of a per-axis true MSD
 * ∝ τ^α seen through a camera that averages positions uniformly over an exposure t_E
 * (general dynamic-error formula of T. Savin & P. S. Doyle, "Static and dynamic errors in
 * particle tracking microrheology", Biophys. J. 88, 623, 2005):
 *
 *   g = [|τ + t_E|^{α+2} + |τ − t_E|^{α+2} − 2τ^{α+2} − 2t_E^{α+2}] / [(α + 1)(α + 2)·t_E²]
 *
 * (the second difference of |t|^{α+2}/((α+1)(α+2)), exact for every τ ≥ 0), and g = τ^α for
 * t_E = 0. For t_E/τ < 0.05 a Taylor series replaces the second difference to avoid
 * cancellation: g ≈ τ^α + α(α−1)t_E²τ^{α−2}/12 + α(α−1)(α−2)(α−3)t_E⁴τ^{α−4}/360
 * − 2t_E^α/((α+1)(α+2)). For α = 1: g = τ − t_E/3. O(1).
 *
 * @param lagS τ, s (≥ 0).
 * @param alpha α (> 0).
 * @param exposureS t_E, s (≥ 0).
 * @returns g, s^α.
 *
 * @example
 * exposureAveragedPowerLaw(1, 1, 1) // → 0.6667
 */
export function exposureAveragedPowerLaw(lagS: number, alpha: number, exposureS: number): number {
  if (exposureS <= 0) return Math.pow(lagS, alpha);
  const a2 = alpha + 2;
  const denominator = (alpha + 1) * a2;
  const ratio = exposureS / lagS;
  if (ratio < 0.05) {
    const h2 = exposureS * exposureS;
    return (
      Math.pow(lagS, alpha) +
      (alpha * (alpha - 1) * h2 * Math.pow(lagS, alpha - 2)) / 12 +
      (alpha * (alpha - 1) * (alpha - 2) * (alpha - 3) * h2 * h2 * Math.pow(lagS, alpha - 4)) / 360 -
      (2 * Math.pow(exposureS, alpha)) / denominator
    );
  }
  return (
    (Math.pow(lagS + exposureS, a2) +
      Math.pow(Math.abs(lagS - exposureS), a2) -
      2 * Math.pow(lagS, a2) -
      2 * Math.pow(exposureS, a2)) /
    (denominator * exposureS * exposureS)
  );
}
