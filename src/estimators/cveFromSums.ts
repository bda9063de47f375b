/**
 * One-pass sufficient statistics of one axis for the covariance-based estimator (CVE).
 * They may be pooled over many tracks by adding the fields.
 */
export interface CveSums {
  /** N: number of steps Δx_k (displacements between consecutive frames). */
  steps: number;
  /** ΣΔx_k² over the N steps, µm². */
  sumSquares: number;
  /** Number of adjacent step pairs (N − 1 for one track; N − M for M pooled tracks). */
  pairs: number;
  /** ΣΔx_k·Δx_{k+1} over the adjacent pairs, µm². */
  sumProducts: number;
}

/** The CVE result for one axis. Values may be negative for short or noisy data; they are never clipped. */
export interface CveEstimate {
  /** D̂, µm²/s. */
  diffusion: number;
  /** σ̂², localization variance per axis, µm². */
  localizationVariance: number;
  /**
   * ε̂ = σ̂²/(D̂Δt) − 2R, the reduced localization error with the blur term subtracted (dimensionless),
   * the quantity the variance formulas need. NaN when D̂ ≤ 0. The report's `reducedError`
   * (blur not subtracted) is this value + 2R.
   */
  reducedError: number;
}

/**
 * Covariance-based diffusion estimator (CVE) of Vestergaard, Blainey & Flyvbjerg,
 * "Optimal estimation of diffusion coefficients from single-particle trajectories",
 * Phys. Rev. E 89, 022726 (2014), for one axis:
 *
 *   D̂  = mean(Δx_k²)/(2Δt) + mean(Δx_kΔx_{k+1})/Δt
 *   σ̂² = R·mean(Δx_k²) + (2R − 1)·mean(Δx_kΔx_{k+1})
 *
 * Unbiased when the steps have the tridiagonal covariance of free diffusion with Gaussian
 * localization error and motion blur. O(1).
 *
 * @param sums the running sums (see {@link CveSums}); pooled sums are fine.
 * @param frameIntervalS Δt, s (> 0).
 * @param blur the motion-blur coefficient R = t_E/(6Δt) for uniform illumination during an
 *   exposure t_E (0 ≤ R ≤ 1/4).
 * @returns the estimate, or `undefined` while there are fewer than 1 pair (too little data).
 * @throws RangeError for a non-positive frame interval or R outside [0, 1/4].
 *
 * @example
 * cveFromSums({ steps: 4, sumSquares: 4, pairs: 3, sumProducts: -3 }, 1, 0)
 * // → { diffusion: -0.5, localizationVariance: 1, reducedError: NaN }
 */
export function cveFromSums(sums: CveSums, frameIntervalS: number, blur: number): CveEstimate | undefined {
  if (!(frameIntervalS > 0) || !Number.isFinite(frameIntervalS)) {
    throw new RangeError('cveFromSums requires a finite frameIntervalS > 0');
  }
  if (!(blur >= 0 && blur <= 0.25)) {
    throw new RangeError('cveFromSums requires blur in [0, 1/4]');
  }
  const { steps, sumSquares, pairs, sumProducts } = sums;
  if (!(steps >= 1) || !(pairs >= 1) || !Number.isFinite(sumSquares) || !Number.isFinite(sumProducts)) {
    return undefined;
  }
  const meanSquare = sumSquares / steps;
  const meanProduct = sumProducts / pairs;
  const diffusion = meanSquare / (2 * frameIntervalS) + meanProduct / frameIntervalS;
  const localizationVariance = blur * meanSquare + (2 * blur - 1) * meanProduct;
  const reducedError = diffusion > 0 ? localizationVariance / (diffusion * frameIntervalS) - 2 * blur : Number.NaN;
  return { diffusion, localizationVariance, reducedError };
}
