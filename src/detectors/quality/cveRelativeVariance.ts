/**
 * Relative variance Var(D̂)/D² of the covariance-based estimator (CVE) of D in 2-D, for tracks of
 * `stepsPerTrack` steps (Vestergaard, Blainey & Flyvbjerg 2014, Phys. Rev. E 89:022726; formula as
 * in estimators.md §2, averaged over two axes):
 *
 *     Var(D̂)/D² = [(6 + 4ε + 2ε²)/N + 4(1 + ε)²/N²] / 2,   ε = x − 2R
 *
 * Pooling M independent tracks divides it by M. O(1).
 *
 * @param epsilon ε = σ²/(DΔt) − 2R (the reduced localization error less twice the blur coefficient)
 * @param stepsPerTrack N, steps per track (≥ 1)
 * @returns Var(D̂)/D² of one track
 * @example
 * cveRelativeVariance(0, 100);  // → 0.0302 (2-D; one axis is twice this, 0.0604)
 */
export function cveRelativeVariance(epsilon: number, stepsPerTrack: number): number {
  const n = stepsPerTrack;
  return ((6 + 4 * epsilon + 2 * epsilon * epsilon) / n + (4 * (1 + epsilon) * (1 + epsilon)) / (n * n)) / 2;
}

/**
 * Relative variance of the pooled CVE D̂ from `totalSteps` particle steps in tracks of mean length
 * `stepsPerTrack` (M = totalSteps/N tracks): [(6 + 4ε + 2ε²) + 4(1 + ε)²/N] / (2·totalSteps).
 * O(1).
 *
 * @example
 * pooledCveRelativeVariance(0, 100, 10000); // → 3.02e-4
 */
export function pooledCveRelativeVariance(epsilon: number, stepsPerTrack: number, totalSteps: number): number {
  return (cveRelativeVariance(epsilon, stepsPerTrack) * stepsPerTrack) / totalSteps;
}

/**
 * Smallest number of steps N for which one track's CVE reaches relative SE `precision` in 2-D:
 * the positive root of p²N² − (a/2)N − b/2 = 0 with a = 6 + 4ε + 2ε², b = 4(1 + ε)², rounded up.
 * Reproduces the table of detectors.md §6d. O(1).
 *
 * @param epsilon ε = x − 2R
 * @param precision target relative SE of D, in (0, 1)
 * @example
 * minimumTrackSteps(0, 0.1); // → 301
 * minimumTrackSteps(1, 0.2); // → 152
 */
export function minimumTrackSteps(epsilon: number, precision: number): number {
  if (!(precision > 0)) throw new RangeError('minimumTrackSteps requires precision > 0');
  const a = 6 + 4 * epsilon + 2 * epsilon * epsilon;
  const b = 4 * (1 + epsilon) * (1 + epsilon);
  const p2 = precision * precision;
  return Math.ceil((a / 2 + Math.sqrt((a * a) / 4 + 2 * p2 * b)) / (2 * p2));
}
