/**
 * The bare anomalous-exponent estimate: OLS slope of log MSD against log lag (the estimator
 * studied by Kepten et al., PLoS ONE 10, e0117722, 2015). Biased by localization error and
 * blur; use {@link anomalousExponent} for a fit that models both. Points with a non-positive
 * or non-finite lag or MSD are skipped. O(n).
 *
 * @param lags lags (any unit, e.g. s or frames; only ratios matter).
 * @param msd MSD values, µm².
 * @returns the slope α̂, or `undefined` with fewer than 2 usable points.
 *
 * @example
 * logLogSlope([1, 2], [3, 4]) // → 0.4150 (= log2(4/3))
 */
export function logLogSlope(lags: ArrayLike<number>, msd: ArrayLike<number>): number | undefined {
  const count = Math.min(lags.length, msd.length);
  let used = 0;
  let sumX = 0;
  let sumY = 0;
  for (let i = 0; i < count; i++) {
    if (!(lags[i] > 0) || !(msd[i] > 0) || !Number.isFinite(lags[i]) || !Number.isFinite(msd[i])) continue;
    used++;
    sumX += Math.log(lags[i]);
    sumY += Math.log(msd[i]);
  }
  if (used < 2) return undefined;
  const meanX = sumX / used;
  const meanY = sumY / used;
  let sxy = 0;
  let sxx = 0;
  for (let i = 0; i < count; i++) {
    if (!(lags[i] > 0) || !(msd[i] > 0) || !Number.isFinite(lags[i]) || !Number.isFinite(msd[i])) continue;
    const dx = Math.log(lags[i]) - meanX;
    sxy += dx * (Math.log(msd[i]) - meanY);
    sxx += dx * dx;
  }
  return sxx > 0 ? sxy / sxx : undefined;
}
