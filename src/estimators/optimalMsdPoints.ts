import { msdCovariance } from './msdCovariance.js';
import { slopeRelativeSe } from './msdFitRelativeSe.js';

/** The best number of MSD points for the line fit, with the relative SE it achieves. */
export interface OptimalMsdPoints {
  /** p, the number of lags n = 1..p that minimises SE(D̂)/D. */
  points: number;
  /** SE(D̂)/D at that p, one axis, one track (dimensionless). */
  relativeSe: number;
}

const cache = new Map<string, OptimalMsdPoints>();
const cacheLimit = 512;

/**
 * The number of points p that minimises the exact relative SE of D̂ from the unweighted MSD
 * fit (the "optimal number of points" of X. Michalet, Phys. Rev. E 82, 041914, 2010; here found
 * exactly from {@link msdCovariance} rather than by a closed-form approximation). Searches
 * p = 2..min(maxPoints, N − 1); p_opt does not depend on the number of axes or tracks.
 * O(maxPoints³) for the covariance plus O(maxPoints³) for the scan; results are memoised
 * (pure, at most 512 entries).
 *
 * @param x reduced error σ²/(DΔt) − 2R.
 * @param framesN N frames per track (≥ 3).
 * @param maxPoints largest p considered (default 32).
 * @throws RangeError for N < 3 or maxPoints < 2.
 *
 * @example
 * optimalMsdPoints(10, 100) // → { points: 8, relativeSe: 0.4942 }
 */
export function optimalMsdPoints(x: number, framesN: number, maxPoints = 32): OptimalMsdPoints {
  if (!Number.isInteger(framesN) || framesN < 3) throw new RangeError('optimalMsdPoints requires an integer framesN >= 3');
  if (!Number.isInteger(maxPoints) || maxPoints < 2) throw new RangeError('optimalMsdPoints requires an integer maxPoints >= 2');
  const key = `${x}|${framesN}|${maxPoints}`;
  const cached = cache.get(key);
  if (cached) return { ...cached };
  const largest = Math.min(maxPoints, framesN - 1);
  const covariance = msdCovariance(x, framesN, largest);
  let best: OptimalMsdPoints = { points: 2, relativeSe: Number.POSITIVE_INFINITY };
  for (let p = 2; p <= largest; p++) {
    const relativeSe = slopeRelativeSe(covariance, largest, p);
    if (relativeSe < best.relativeSe) best = { points: p, relativeSe };
  }
  if (cache.size >= cacheLimit) cache.clear();
  cache.set(key, best);
  return { ...best };
}
