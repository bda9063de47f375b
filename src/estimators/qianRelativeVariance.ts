/**
 * Relative variance Var(ρ_n)/⟨ρ_n⟩² of the time-averaged MSD at lag n of one track of pure
 * free diffusion without localization error (H. Qian, M. P. Sheetz & E. L. Elson, "Single
 * particle tracking. Analysis of diffusion and flow in two-dimensional systems",
 * Biophys. J. 60, 910–921, 1991). With K = N − n overlapping displacements, in 2-D:
 *
 *   n ≤ K:  (4n²K + 2K + n − n³)/(6nK²)
 *   n > K:  1 + (K³ − 4nK² + 4n − K)/(6n²K)
 *
 * For d independent axes the 2-D value is multiplied by 2/d (1-D: × 2). O(1).
 *
 * @param lag n, frames (1 ≤ n ≤ N − 1).
 * @param framesN N, number of frames.
 * @param dims d, 1..3.
 * @throws RangeError for an invalid lag, N or d.
 *
 * @example
 * qianRelativeVariance(1, 50, 1) // → 0.0408163 (= 2/49)
 */
export function qianRelativeVariance(lag: number, framesN: number, dims: number): number {
  if (!Number.isInteger(framesN) || framesN < 2) throw new RangeError('qianRelativeVariance requires an integer framesN >= 2');
  if (!Number.isInteger(lag) || lag < 1 || lag > framesN - 1) {
    throw new RangeError('qianRelativeVariance requires an integer lag in [1, framesN - 1]');
  }
  if (!(dims === 1 || dims === 2 || dims === 3)) throw new RangeError('qianRelativeVariance requires dims of 1, 2 or 3');
  const n = lag;
  const k = framesN - lag;
  const twoD =
    n <= k ? (4 * n * n * k + 2 * k + n - n * n * n) / (6 * n * k * k) : 1 + (k * k * k - 4 * n * k * k + 4 * n - k) / (6 * n * n * k);
  return (twoD * 2) / dims;
}
