/**
 * Sub-bin position of a spectral peak by a parabola through the logarithms of the three powers
 * around it (Gaussian interpolation: Gasior M, Gonzalez JL 2004, AIP Conf. Proc. 732:276 [from
 * memory]); with a Hann window its bias is a few hundredths of a bin. Returns the offset δ in
 * [−0.5, 0.5] bins from the centre bin; 0 when any power is not positive. O(1).
 *
 * @param below power at bin j−1
 * @param centre power at bin j (the local maximum)
 * @param above power at bin j+1
 * @example
 * peakInterpolation(1, 4, 1); // → 0
 * peakInterpolation(Math.exp(-1), 1, Math.exp(-1) * Math.exp(0.5)); // → positive, toward bin j+1
 */
export function peakInterpolation(below: number, centre: number, above: number): number {
  if (!(below > 0 && centre > 0 && above > 0)) return 0;
  const a = Math.log(below);
  const b = Math.log(centre);
  const c = Math.log(above);
  const curvature = a - 2 * b + c;
  if (!(curvature < 0)) return 0;
  const delta = (0.5 * (a - c)) / curvature;
  return Math.max(-0.5, Math.min(0.5, delta));
}
