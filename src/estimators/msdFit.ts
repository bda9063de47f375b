/** Result of an MSD line fit for one axis. */
export interface MsdFitEstimate {
  /** D̂ = b/(2Δt), µm²/s. */
  diffusion: number;
  /** σ̂² = a/2 + 2R·D̂·Δt, localization variance per axis, µm². */
  localizationVariance: number;
}

/**
 * Unweighted least-squares line MSD_n = a + b·n over n = 1..p of one axis (X. Michalet,
 * "Mean square displacement analysis of single-particle trajectories with localization error:
 * Brownian motion in an isotropic medium", Phys. Rev. E 82, 041914, 2010). Expected
 * MSD_n = 2DΔt(n + x) with x = σ²/(DΔt) − 2R, so D = b/(2Δt) and σ² = a/2 + 2RDΔt.
 * Choose p with {@link optimalMsdPoints}. O(p).
 *
 * @param msdPerAxis MSD_n of one axis for n = 1..P (index n − 1), µm².
 * @param points p, number of lags fitted (2 ≤ p ≤ P).
 * @param frameIntervalS Δt, s.
 * @param blur R = t_E/(6Δt).
 * @returns the estimate, or `undefined` if one of the first p values is not finite.
 * @throws RangeError for p outside [2, P], a non-positive Δt, or R outside [0, 1/4].
 *
 * @example
 * msdFit(Float64Array.of(3, 5, 7), 3, 1, 0) // → { diffusion: 1, localizationVariance: 0.5 }
 */
export function msdFit(
  msdPerAxis: Float64Array,
  points: number,
  frameIntervalS: number,
  blur: number,
): MsdFitEstimate | undefined {
  if (!Number.isInteger(points) || points < 2 || points > msdPerAxis.length) {
    throw new RangeError('msdFit requires an integer points in [2, msdPerAxis.length]');
  }
  if (!(frameIntervalS > 0) || !Number.isFinite(frameIntervalS)) {
    throw new RangeError('msdFit requires a finite frameIntervalS > 0');
  }
  if (!(blur >= 0 && blur <= 0.25)) throw new RangeError('msdFit requires blur in [0, 1/4]');
  const meanLag = (points + 1) / 2;
  let sumY = 0;
  let sumXY = 0;
  let sumXX = 0;
  for (let n = 1; n <= points; n++) {
    const y = msdPerAxis[n - 1];
    if (!Number.isFinite(y)) return undefined;
    const centred = n - meanLag;
    sumY += y;
    sumXY += centred * y;
    sumXX += centred * centred;
  }
  const slope = sumXY / sumXX;
  const intercept = sumY / points - slope * meanLag;
  const diffusion = slope / (2 * frameIntervalS);
  return { diffusion, localizationVariance: intercept / 2 + 2 * blur * diffusion * frameIntervalS };
}
