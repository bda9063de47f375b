/**
 * Variance of the CVE D̂ for one axis (Vestergaard, Blainey & Flyvbjerg, Phys. Rev. E 89,
 * 022726, 2014), extended to M pooled tracks:
 *
 *   Var(D̂) = D²·[ (6 + 4ε + 2ε²)/N + 4(1 + ε)²·M/N² ]
 *
 * with N the total number of steps over the M tracks and ε = σ²/(DΔt) − 2R. For M = 1 this is the
 * paper's formula. For M tracks of equal length N/M it is exactly the variance of the mean of the
 * M per-track estimates; pooling the sums (our pipeline) weights steps and pairs slightly
 * differently and the track lengths differ, so for pooled sums it is an approximation (checked by
 * Monte Carlo to a few per cent for 20 tracks × 50 steps). Averaging d independent axes divides
 * it by d. O(1).
 *
 * @param diffusion D, µm²/s (the estimate, as a plug-in).
 * @param epsilon ε, the reduced error with blur subtracted (dimensionless, ≥ −1/2 physically).
 * @param steps N, total steps pooled (≥ 1).
 * @param tracks M, number of tracks pooled (1 ≤ M ≤ N).
 * @returns Var(D̂), (µm²/s)².
 * @throws RangeError for steps < 1 or tracks outside [1, steps].
 *
 * @example
 * cveVariance(1, -1 / 3, 100) // → 0.049067 (estimators.md §2)
 */
export function cveVariance(diffusion: number, epsilon: number, steps: number, tracks = 1): number {
  if (!(steps >= 1)) throw new RangeError('cveVariance requires steps >= 1');
  if (!(tracks >= 1 && tracks <= steps)) throw new RangeError('cveVariance requires 1 <= tracks <= steps');
  const onePlus = 1 + epsilon;
  return (
    diffusion * diffusion *
    ((6 + 4 * epsilon + 2 * epsilon * epsilon) / steps + (4 * onePlus * onePlus * tracks) / (steps * steps))
  );
}
