import { cveVariance } from './cveVariance.js';
import { optimalMsdPoints } from './optimalMsdPoints.js';

/** Which diffusion estimator to use, and why. */
export interface EstimatorChoice {
  /** 'cve' ({@link cveFromSums}) or 'msd-fit' ({@link msdFit} over `points` lags). */
  name: 'cve' | 'msd-fit';
  /** Number of MSD points for 'msd-fit' (the optimal p); 2 for 'cve' (what it performs like). */
  points: number;
  /** One line stating x and both relative SEs, for the report. */
  reason: string;
  /** SE(D̂)/D of the CVE, one axis, one track of N frames. */
  cveRelativeSe: number;
  /** SE(D̂)/D of the optimal-p MSD fit, same basis. */
  msdFitRelativeSe: number;
}

/**
 * Pick the estimator with the smaller variance at reduced error x for tracks of N frames:
 * the CVE (Vestergaard, Blainey & Flyvbjerg, Phys. Rev. E 89, 022726, 2014), near-optimal for
 * small x, or the optimal-p unweighted MSD fit (Michalet, Phys. Rev. E 82, 041914, 2010), better
 * at large x (Michalet & Berglund, Phys. Rev. E 85, 061916, 2012). Compares
 * {@link cveVariance}/D² (N − 1 steps) with {@link optimalMsdPoints}' relativeSe². Pooling M
 * equal tracks divides both by M, so the choice does not depend on M. O(32³) first call per
 * (x, N), memoised after.
 *
 * @param x reduced error σ²/(DΔt) − 2R (a plug-in estimate).
 * @param framesN N frames per track (≥ 3).
 * @throws RangeError for N < 3 or a non-finite x.
 *
 * @example
 * chooseEstimator(10, 101).name // → 'msd-fit' (reason "x = 10: MSD fit over 8 points (rel. SE 0.49) beats CVE (1.6)")
 */
export function chooseEstimator(x: number, framesN: number): EstimatorChoice {
  if (!Number.isFinite(x)) throw new RangeError('chooseEstimator requires a finite x');
  if (!Number.isInteger(framesN) || framesN < 3) throw new RangeError('chooseEstimator requires an integer framesN >= 3');
  const cveRelativeSe = Math.sqrt(cveVariance(1, x, framesN - 1, 1));
  const best = optimalMsdPoints(x, framesN);
  const xText = `x = ${formatNumber(x)}`;
  if (cveRelativeSe <= best.relativeSe) {
    return {
      name: 'cve',
      points: 2,
      reason: `${xText}: CVE (rel. SE ${formatNumber(cveRelativeSe)}) beats MSD fit over ${best.points} points (${formatNumber(best.relativeSe)})`,
      cveRelativeSe,
      msdFitRelativeSe: best.relativeSe,
    };
  }
  return {
    name: 'msd-fit',
    points: best.points,
    reason: `${xText}: MSD fit over ${best.points} points (rel. SE ${formatNumber(best.relativeSe)}) beats CVE (${formatNumber(cveRelativeSe)})`,
    cveRelativeSe,
    msdFitRelativeSe: best.relativeSe,
  };
}

/** Two significant digits, no trailing zeros. */
function formatNumber(value: number): string {
  return String(Number(value.toPrecision(2)));
}
