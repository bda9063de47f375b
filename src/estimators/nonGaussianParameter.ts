/** Non-Gaussian parameter with its standard error. */
export interface NonGaussianEstimate {
  /** α̂2 (dimensionless; 0 for Gaussian displacements). */
  value: number;
  /** SE under the Gaussian null, √(8/(d(d+2)M)); 1/√M in 2-D. */
  se: number;
}

/**
 * Non-Gaussian parameter α2 = d⟨Δr⁴⟩/((d + 2)⟨Δr²⟩²) − 1 (A. Rahman, "Correlations in the
 * motion of atoms in liquid argon", Phys. Rev. 136, A405, 1964; volume and page from memory) from running sums of
 * displacements at one lag. It is 0 for homogeneous Brownian motion with Gaussian localization
 * error, and CV²(D) for a population with heterogeneous D (σ = 0). Drift or vibration push it
 * below 0: remove them first.
 *
 * SE: the delta method on (⟨Δr²⟩, ⟨Δr⁴⟩) for r²/s² ~ χ²_d gives Var(α̂2) = 8/(d(d + 2)M) for M
 * independent (non-overlapping) displacements, i.e. 1/√M in 2-D (our derivation; it agrees with
 * detectors.md §6b). The bias is about −1/M. O(1).
 *
 * @param sumSquares ΣΔr², µm² (Δr² summed over the d axes for each displacement).
 * @param sumFourth Σ(Δr²)², µm⁴.
 * @param count M displacements.
 * @param dims d, 1..3.
 * @returns the estimate, or `undefined` when M < 2 or ΣΔr² ≤ 0.
 * @throws RangeError for dims outside 1..3.
 *
 * @example
 * nonGaussianParameter(4, 16, 2, 2) // → { value: 0, se: 0.7071 }
 */
export function nonGaussianParameter(
  sumSquares: number,
  sumFourth: number,
  count: number,
  dims: number,
): NonGaussianEstimate | undefined {
  if (!(dims === 1 || dims === 2 || dims === 3)) throw new RangeError('nonGaussianParameter requires dims of 1, 2 or 3');
  if (!(count >= 2) || !(sumSquares > 0) || !Number.isFinite(sumSquares) || !Number.isFinite(sumFourth)) return undefined;
  const second = sumSquares / count;
  const fourth = sumFourth / count;
  const value = (dims * fourth) / ((dims + 2) * second * second) - 1;
  return { value, se: Math.sqrt(8 / (dims * (dims + 2) * count)) };
}
