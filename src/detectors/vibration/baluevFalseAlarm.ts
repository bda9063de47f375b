/**
 * False-alarm probability of the highest Lomb–Scargle peak z_max (psd normalisation, known
 * noise variance) over frequencies up to f_max, after Baluev (2008, MNRAS 385:1279):
 *
 *   FAP(z) ≈ 1 − (1 − e^{−z}) · exp(−W e^{−z} √z),   W = f_max · √(4π Var(t)),
 *
 * where Var(t) is the variance of the sample times (s²). For small values FAP ≈ W e^{−z} √z.
 * It bounds the maximum over a continuous frequency range, so on a discrete grid it is
 * slightly conservative. O(1).
 *
 * @param z peak power (exponential with mean 1 at a single frequency under H0)
 * @param maxFrequencyHz f_max, Hz
 * @param timeVariance Var(t_i), s²
 * @example
 * baluevFalseAlarm(12, 50, 100); // → 0.037 (W = 1772)
 */
export function baluevFalseAlarm(z: number, maxFrequencyHz: number, timeVariance: number): number {
  if (!(z >= 0)) return 1;
  const W = maxFrequencyHz * Math.sqrt(4 * Math.PI * timeVariance);
  const single = -Math.expm1(-z); // 1 − e^{−z}
  const tail = W * Math.exp(-z) * Math.sqrt(z);
  // 1 − single·exp(−tail), written to keep precision when the result is small.
  return -Math.expm1(Math.log(single) - tail);
}

/**
 * Inverse of `baluevFalseAlarm`: the peak power z_α whose false-alarm probability is α, by
 * bisection on the monotone tail (40 halvings of [0, 200]). O(1).
 *
 * @example
 * baluevThreshold(0.01, 50, 100); // → z with baluevFalseAlarm(z, 50, 100) = 0.01
 */
export function baluevThreshold(alpha: number, maxFrequencyHz: number, timeVariance: number): number {
  if (!(alpha > 0 && alpha < 1)) throw new RangeError('baluevThreshold requires alpha in (0, 1)');
  let low = 0;
  let high = 200;
  for (let i = 0; i < 60; i++) {
    const mid = 0.5 * (low + high);
    if (baluevFalseAlarm(mid, maxFrequencyHz, timeVariance) > alpha) low = mid;
    else high = mid;
  }
  return 0.5 * (low + high);
}
