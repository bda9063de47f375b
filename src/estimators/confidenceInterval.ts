import { normalQuantile, studentTQuantile } from '../stats/quantiles.js';

/**
 * Two-sided 95 % confidence interval value ± q·se, with q the normal quantile z_0.975 = 1.95996,
 * or the Student t quantile t_0.975(df) when `df` is given (common practice, no source).
 * Here a 95 % CI means: over repeated experiments under the model, the interval built this way
 * contains the true value 95 % of the time (tested by simulation for the diffusion
 * estimators). O(1) (the t quantile is a numerical inversion).
 *
 * @param value point estimate (any unit).
 * @param se its standard error (same unit, ≥ 0; NaN propagates).
 * @param df degrees of freedom (> 0) for a Student t interval; omit for normal.
 * @returns [low, high].
 * @throws RangeError for a negative se or a non-positive df.
 *
 * @example
 * confidenceInterval(1, 0.1) // → [0.80400, 1.19600]
 */
export function confidenceInterval(value: number, se: number, df?: number): [number, number] {
  if (se < 0) throw new RangeError('confidenceInterval requires se >= 0');
  if (df !== undefined && !(df > 0)) throw new RangeError('confidenceInterval requires df > 0');
  const quantile = df === undefined ? normalQuantile(0.975) : studentTQuantile(0.975, df);
  return [value - quantile * se, value + quantile * se];
}
