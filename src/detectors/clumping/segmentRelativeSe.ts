/**
 * Relative standard error of a 2-D covariance-based D estimate (CVE) from N steps:
 * Var(D̂)/D² = [(6 + 4ε + 2ε²)/N + 4(1 + ε)²/N²]/2 with ε = x − 2R, x = σ²/(DΔt) the reduced
 * localization error and R the blur coefficient (Vestergaard, Blainey & Flyvbjerg 2014, PRE
 * 89:022726; 2-D form of detectors.md §6d).
 *
 * @param steps N (≥ 1)
 * @param reducedError x = σ²/(DΔt) (≥ 0)
 * @param blur R = t_E/(6Δt)
 * @returns SE(D̂)/D
 * @example segmentRelativeSe(100, 1, 0) // → 0.2466
 */
export function segmentRelativeSe(steps: number, reducedError: number, blur: number): number {
  const e = reducedError - 2 * blur;
  return Math.sqrt(((6 + 4 * e + 2 * e * e) / steps + (4 * (1 + e) * (1 + e)) / (steps * steps)) / 2);
}
