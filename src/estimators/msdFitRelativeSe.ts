import { msdCovariance } from './msdCovariance.js';

/**
 * Relative standard error SE(D̂)/D of the unweighted MSD line fit over n = 1..p of one axis
 * ({@link msdFit}; Michalet, Phys. Rev. E 82, 041914, 2010), computed exactly from the MSD
 * covariance of {@link msdCovariance}: the slope is b̂ = Σ w_n ρ_n with
 * w_n = (n − n̄)/Σ(n − n̄)², so Var(b̂)/b² = wᵀCw in units of (2DΔt)². Divide by √d for d
 * axes and by √M for M independent tracks of the same length. O(p³).
 *
 * @param x reduced error σ²/(DΔt) − 2R.
 * @param framesN N frames per track.
 * @param points p (2 ≤ p ≤ N − 1).
 * @returns SE(D̂)/D, dimensionless.
 * @throws RangeError for an invalid p or N.
 *
 * @example
 * msdFitRelativeSe(10, 100, 8) // → 0.4942 (estimators.md §3)
 */
export function msdFitRelativeSe(x: number, framesN: number, points: number): number {
  if (!Number.isInteger(points) || points < 2) throw new RangeError('msdFitRelativeSe requires an integer points >= 2');
  const covariance = msdCovariance(x, framesN, points);
  return slopeRelativeSe(covariance, points, points);
}

/**
 * √(wᵀCw) for the OLS slope over lags 1..points, C the leading points × points block of a
 * row-major matrix with row length `stride`. Internal helper shared with optimalMsdPoints.
 */
export function slopeRelativeSe(covariance: Float64Array, stride: number, points: number): number {
  const meanLag = (points + 1) / 2;
  let sumXX = 0;
  for (let n = 1; n <= points; n++) sumXX += (n - meanLag) * (n - meanLag);
  let variance = 0;
  for (let n = 1; n <= points; n++) {
    const wn = (n - meanLag) / sumXX;
    for (let m = 1; m <= points; m++) {
      variance += wn * ((m - meanLag) / sumXX) * covariance[(n - 1) * stride + (m - 1)];
    }
  }
  return Math.sqrt(variance);
}
