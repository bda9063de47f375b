import { fQuantile } from '../../stats/quantiles.js';
import type { SegmentSpectrum } from './segmentSpectrum.js';

/** Which axes the F-test looks at: x and y separately, or their sums (one combined test). */
export type FTestAxes = 'separate' | 'combined';

/** The outcome of one analysis window of the common-mode F-test. */
export interface FTestResult {
  /** F(f_j) per bin for x, y and the axis-summed form; NaN outside the tested bins. */
  statistic: { x: Float64Array; y: Float64Array; xy: Float64Array };
  /** Degrees of freedom of one axis: 2K and 2Σ(N_k−1); the combined form has twice each. */
  df1: number;
  df2: number;
  /** Critical value of the tested form(s) (per axis when separate, of the sum when combined). */
  threshold: number;
  /** Šidák per-bin level α' = 1 − (1−α)^{1/(M·axes)}. */
  perBinAlpha: number;
  /** First and last tested bins (DC, bin 1 and Nyquist are never tested). */
  firstBin: number;
  lastBin: number;
  /** Number of tests made, M × (axes tested). */
  tests: number;
}

/**
 * The cross-particle common-mode spectral F-test (Shumway 1970, JASA 65:1527) over K segments:
 *
 *   F(f) = [Σ_k N_k|Z̄_k|² / (2K)] / [Σ_k Σ_i |Z_ik − Z̄_k|² / (2Σ_k(N_k−1))],
 *
 * which under H0 (independent particles with equal step spectra) is F(2K, 2Σ(N_k−1)) per axis,
 * or F(4K, 4Σ(N_k−1)) when numerators and denominators are summed over the axes. Needs no
 * noise model: localization noise, blur and D drop out. The bins tested are 2…L/2−1 (DC holds
 * a constant drift, bin 1 its Hann leakage, Nyquist is real-valued); the per-bin level is the
 * Šidák split of the per-window α over all tests. O(K·L) per call.
 *
 * @param segments the K segment spectra of the window (each with ≥ 2 particles)
 * @param alpha family-wise false-alarm probability of the window, in (0, 1)
 * @param axes `separate` (x and y, 2M tests) or `combined` (M tests)
 * @param out optional result to reuse (its arrays must have L/2+1 entries)
 * @example
 * const result = commonModeFTest(ring, 1e-4, 'separate');
 * result.threshold; // → F⁻¹(1 − α'; 16, 2Σ(N_k − 1)), about 4.6 for α' = 4e-7, K = 8, N = 40
 */
export function commonModeFTest(
  segments: readonly SegmentSpectrum[],
  alpha: number,
  axes: FTestAxes,
  out?: FTestResult,
): FTestResult {
  if (segments.length < 1) throw new RangeError('commonModeFTest requires at least one segment');
  if (!(alpha > 0 && alpha < 1)) throw new RangeError('commonModeFTest requires alpha in (0, 1)');
  const bins = segments[0].bins;
  const firstBin = 2;
  const lastBin = bins - 2; // Nyquist is bins − 1
  if (lastBin < firstBin) throw new RangeError('commonModeFTest requires segments of length >= 8');
  const result: FTestResult = out ?? {
    statistic: { x: new Float64Array(bins), y: new Float64Array(bins), xy: new Float64Array(bins) },
    df1: 0,
    df2: 0,
    threshold: 0,
    perBinAlpha: 0,
    firstBin,
    lastBin,
    tests: 0,
  };
  const K = segments.length;
  let dfWithin = 0;
  for (let k = 0; k < K; k++) dfWithin += 2 * (segments[k].count - 1);
  const { x, y, xy } = result.statistic;
  x.fill(Number.NaN);
  y.fill(Number.NaN);
  xy.fill(Number.NaN);
  for (let j = firstBin; j <= lastBin; j++) {
    let betweenX = 0;
    let betweenY = 0;
    let withinX = 0;
    let withinY = 0;
    for (let k = 0; k < K; k++) {
      const s = segments[k];
      betweenX += s.between[0][j];
      betweenY += s.between[1][j];
      withinX += s.within[0][j];
      withinY += s.within[1][j];
    }
    // Each mean square: sum over its degrees of freedom (2 per complex value).
    const scale = dfWithin / (2 * K);
    x[j] = withinX > 0 ? (betweenX / withinX) * scale : Number.NaN;
    y[j] = withinY > 0 ? (betweenY / withinY) * scale : Number.NaN;
    xy[j] = withinX + withinY > 0 ? ((betweenX + betweenY) / (withinX + withinY)) * scale : Number.NaN;
  }
  const M = lastBin - firstBin + 1;
  const tests = axes === 'separate' ? 2 * M : M;
  // Šidák: α' = 1 − (1 − α)^{1/tests}, computed stably as −expm1(log1p(−α)/tests).
  const perBinAlpha = -Math.expm1(Math.log1p(-alpha) / tests);
  const factor = axes === 'separate' ? 1 : 2;
  result.df1 = 2 * K;
  result.df2 = dfWithin;
  result.threshold = fQuantile(1 - perBinAlpha, factor * 2 * K, factor * dfWithin);
  result.perBinAlpha = perBinAlpha;
  result.firstBin = firstBin;
  result.lastBin = lastBin;
  result.tests = tests;
  return result;
}
