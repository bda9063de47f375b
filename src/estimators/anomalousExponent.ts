import { brentMinimum } from './brentMinimum.js';
import { exposureAveragedPowerLaw } from './exposureAveragedPowerLaw.js';

/** An ensemble MSD curve to fit. */
export interface AnomalousExponentInput {
  /** τ, s (> 0). */
  lagsS: ArrayLike<number>;
  /** d-dimensional MSD at each lag (sum over axes), µm². */
  msd: ArrayLike<number>;
  /** Standard error of each MSD value, µm² (> 0); points are weighted by 1/se². */
  se: ArrayLike<number>;
  /** d, number of axes summed in `msd` (1..3). */
  dims: number;
  /** t_E, camera exposure, s (0 for stroboscopic illumination). */
  exposureS: number;
}

/** Fitted anomalous-diffusion model. */
export interface AnomalousExponentEstimate {
  /** α̂ (1 for free diffusion). */
  alpha: number;
  /**
   * SE of α̂ from the curvature of the profile χ²(α) (Δχ² = 1), assuming independent MSD points.
   * Ensemble MSD points are correlated, so prefer a jackknife over tracks (call this function
   * on leave-one-group-out curves) for a CI. NaN if the curvature is not positive.
   */
  alphaSe: number;
  /** K̂, generalised diffusion coefficient, µm²/s^α (MSD = 2d·K·τ^α without errors). */
  k: number;
  /** σ̂², static localization variance per axis, µm² (may be negative; not clipped). */
  localizationVariance: number;
  /** χ² of the best fit with the given se (dimensionless). */
  chiSquare: number;
  /** Number of points used (non-finite or se ≤ 0 points are skipped). */
  points: number;
  /** True when α̂ lies on a bound of [0.05, 2] (the profile minimum may lie outside). */
  atBound: boolean;
}

const alphaLow = 0.05;
const alphaHigh = 2;
const gridSize = 40;
/**
 * Brent's method stops with α known to about 3×10⁻⁸ (α's SE is ≥ 10⁻⁴ in practice; √ε is the
 * useful limit of a minimiser, Brent 1973, ch. 5).
 */
const alphaRelativeTolerance = 1.5e-8;
const alphaAbsoluteTolerance = 1e-10;

/**
 * Fit MSD(τ) = 2d·[K·g(τ; α, t_E) + σ²] to an ensemble MSD curve, with g the exposure-averaged
 * power law ({@link exposureAveragedPowerLaw}; dynamic error of Savin & Doyle, Biophys. J. 88,
 * 623, 2005) and σ² the static error (Martin, Forstner & Käs, Biophys. J. 83, 2109, 2002,
 * showed that an unmodelled σ² makes motion look subdiffusive). Modelling both noise terms is
 * the remedy recommended by Kepten et al., PLoS ONE 10, e0117722 (2015).
 *
 * For fixed α the model is linear in (K, σ²) and is solved by weighted least squares (2 × 2
 * normal equations); α is profiled on [0.05, 2] by a 40-point grid followed by Brent's method
 * (golden section with parabolic steps; {@link brentMinimum}) in the bracket around the best grid
 * point, to about 3×10⁻⁸ (about 10 evaluations). O(n·(40 + 10)) for n points, cheap enough to
 * call ~20 times per report for a jackknife; pass one {@link AnomalousExponentCache} to such a set
 * of fits and the grid part is computed once (O(n·16) per further fit, the SE's curvature included).
 *
 * @returns the estimate, or `undefined` with fewer than 3 usable points.
 * @throws RangeError for dims outside 1..3 or a negative exposure.
 *
 * @example
 * anomalousExponent({ lagsS: [1, 2, 3, 4], msd: [2, 4, 6, 8], se: [1, 1, 1, 1], dims: 1, exposureS: 0 })
 * // → { alpha: 1, k: 1, localizationVariance: 0, ... }
 */
/**
 * The model's shape g(τ; α, t_E) at the 40 grid values of α, kept per lag for one exposure, so
 * that fits of several curves on the same lags (a jackknife) compute each grid shape once. The
 * values are the ones an uncached fit computes, so results are identical. Memory: 40 numbers per
 * distinct lag.
 *
 * @example
 * const cache = new AnomalousExponentCache(0.0008);
 * anomalousExponent(curveA, cache); anomalousExponent(curveB, cache); // grid shapes computed once
 */
export class AnomalousExponentCache {
  private readonly shapes = new Map<number, Float64Array>();

  /** `exposureS`: the t_E of every fit that uses this cache, s. */
  constructor(readonly exposureS: number) {}

  /** g at the grid's α values for lag τ, s. */
  gridShapes(lagS: number): Float64Array {
    let shapes = this.shapes.get(lagS);
    if (!shapes) {
      shapes = new Float64Array(gridSize);
      for (let i = 0; i < gridSize; i++) shapes[i] = exposureAveragedPowerLaw(lagS, gridAlpha(i), this.exposureS);
      this.shapes.set(lagS, shapes);
    }
    return shapes;
  }
}

/** The i-th α of the coarse grid on [0.05, 2] (its ends exactly 0.05 and 2). */
function gridAlpha(i: number): number {
  return i === gridSize - 1 ? alphaHigh : alphaLow + i * ((alphaHigh - alphaLow) / (gridSize - 1));
}

export function anomalousExponent(input: AnomalousExponentInput, cache?: AnomalousExponentCache): AnomalousExponentEstimate | undefined {
  const { dims, exposureS } = input;
  if (!(dims === 1 || dims === 2 || dims === 3)) throw new RangeError('anomalousExponent requires dims of 1, 2 or 3');
  if (!(exposureS >= 0) || !Number.isFinite(exposureS)) throw new RangeError('anomalousExponent requires exposureS >= 0');
  const total = Math.min(input.lagsS.length, input.msd.length, input.se.length);
  const lags = new Float64Array(total);
  const values = new Float64Array(total);
  const weights = new Float64Array(total);
  let used = 0;
  for (let i = 0; i < total; i++) {
    const lag = input.lagsS[i];
    const value = input.msd[i];
    const se = input.se[i];
    if (!(lag > 0) || !Number.isFinite(lag) || !Number.isFinite(value) || !(se > 0) || !Number.isFinite(se)) continue;
    lags[used] = lag;
    values[used] = value;
    weights[used] = 1 / (se * se);
    used++;
  }
  if (used < 3) return undefined;
  if (cache && cache.exposureS !== exposureS) throw new RangeError('anomalousExponent: the cache was made for another exposure');
  const shape = new Float64Array(used);
  const twoD = 2 * dims;
  const gridShapes = cache ? Array.from({ length: used }, (_, i) => cache.gridShapes(lags[i])) : undefined;

  // Profile χ²(α): weighted LS of y = A·g + B, A = 2dK, B = 2dσ².
  // (`gridIndex` ≥ 0 when α is that grid value: its shapes may come from the cache)
  const profile = (alpha: number, out?: { a: number; b: number }, gridIndex = -1): number => {
    let sw = 0;
    let sg = 0;
    let sy = 0;
    let sgg = 0;
    let sgy = 0;
    for (let i = 0; i < used; i++) {
      const g = gridShapes && gridIndex >= 0 ? gridShapes[i][gridIndex] : exposureAveragedPowerLaw(lags[i], alpha, exposureS);
      shape[i] = g;
      const w = weights[i];
      sw += w;
      sg += w * g;
      sy += w * values[i];
      sgg += w * g * g;
      sgy += w * g * values[i];
    }
    const determinant = sw * sgg - sg * sg;
    const a = (sw * sgy - sg * sy) / determinant;
    const b = (sgg * sy - sg * sgy) / determinant;
    let chi = 0;
    for (let i = 0; i < used; i++) {
      const r = values[i] - a * shape[i] - b;
      chi += weights[i] * r * r;
    }
    if (out) {
      out.a = a;
      out.b = b;
    }
    return Number.isFinite(chi) ? chi : Number.POSITIVE_INFINITY;
  };

  // Coarse grid first, so that the search works in a bracket holding the global minimum.
  const step = (alphaHigh - alphaLow) / (gridSize - 1);
  let bestIndex = 0;
  let bestChi = Number.POSITIVE_INFINITY;
  let chiFirst = Number.POSITIVE_INFINITY;
  let chiLast = Number.POSITIVE_INFINITY;
  for (let i = 0; i < gridSize; i++) {
    const chi = profile(gridAlpha(i), undefined, i);
    if (i === 0) chiFirst = chi;
    if (i === gridSize - 1) chiLast = chi;
    if (chi < bestChi) {
      bestChi = chi;
      bestIndex = i;
    }
  }
  const low = alphaLow + Math.max(0, bestIndex - 1) * step;
  const high = alphaLow + Math.min(gridSize - 1, bestIndex + 1) * step;
  // Brent's method in the bracket around the best grid point (about 10 evaluations; golden
  // section took about 35 for the same precision).
  const best = brentMinimum((a) => profile(a), low, high, alphaRelativeTolerance, alphaAbsoluteTolerance);
  let alpha = best.x;
  // Compare with the bounds themselves (Brent's method never evaluates the end points; the grid did).
  const fit = { a: 0, b: 0 };
  let chiSquare = best.fx;
  if (chiFirst < chiSquare) {
    chiSquare = chiFirst;
    alpha = gridAlpha(0);
  }
  if (chiLast < chiSquare) {
    chiSquare = chiLast;
    alpha = gridAlpha(gridSize - 1);
  }
  chiSquare = profile(alpha, fit);
  const atBound = alpha - alphaLow < 1e-6 || alphaHigh - alpha < 1e-6;

  // Curvature of the profile by a central second difference; SE from Δχ² = 1.
  const h = 1e-3;
  const lowAlpha = Math.max(alphaLow, alpha - h);
  const highAlpha = Math.min(alphaHigh, alpha + h);
  const centre = (lowAlpha + highAlpha) / 2;
  const half = (highAlpha - lowAlpha) / 2;
  const curvature = (profile(highAlpha) - 2 * profile(centre) + profile(lowAlpha)) / (half * half);
  const alphaSe = curvature > 0 ? Math.sqrt(2 / curvature) : Number.NaN;

  return {
    alpha,
    alphaSe,
    k: fit.a / twoD,
    localizationVariance: fit.b / twoD,
    chiSquare,
    points: used,
    atBound,
  };
}
