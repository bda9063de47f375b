import type { Estimate } from '../report.js';
import { bisectIncreasing } from './bisectIncreasing.js';
import { checkGeometry } from './checkGeometry.js';
import { defaultRadiusSd } from './defaultRadiusSd.js';
import { faxenParallel } from './faxenParallel.js';
import { faxenParallelLogSlope } from './faxenParallelLogSlope.js';
import type { Medium } from './medium.js';
import { mediumTemperatureRange } from './mediumTemperatureRange.js';
import { mediumViscosity } from './mediumViscosity.js';
import { stokesEinsteinDiffusion } from './stokesEinsteinDiffusion.js';

/** z for a two-sided 95 % interval, Φ⁻¹(0.975). */
const Z95 = 1.959963984540054;

/** Inputs of {@link impliedTemperature}. */
export interface ImpliedTemperatureInput {
  /** Measured in-plane diffusion coefficient with its 95 % CI, µm²/s. */
  diffusion: Estimate;
  /** Nominal hydrodynamic radius, µm (> 0). */
  radius: number;
  /** Standard uncertainty of the radius, µm (≥ 0); default {@link defaultRadiusSd} (2 %). */
  radiusSd?: number;
  /** The liquid (must be temperature dependent, else the result is null). */
  medium: Medium;
  /** Height of the particle centre above the coverslip, µm (≥ radius); omit for bulk. */
  height?: number;
}

/** The temperature implied by a diffusion coefficient, °C. */
export interface ImpliedTemperature extends Estimate {
  /** Implied temperature, °C. */
  value: number;
  /** 95 % interval, °C (from D's CI and the radius uncertainty). */
  ci95: [number, number];
  /**
   * True when the lower CI end (and, if the value also lies below, the value) was clamped to the
   * lower end of the medium's valid range: the data allow temperatures below it.
   */
  clampedLow: boolean;
  /** True when the upper CI end (and possibly the value) was clamped to the upper end of the range. */
  clampedHigh: boolean;
  /** The medium's valid temperature range that was searched, °C. */
  validRange: [number, number];
}

/**
 * The sample temperature at which Stokes–Einstein in the medium (times Faxén's parallel factor
 * when a height is given) predicts the measured D: the inverse of {@link expectedDiffusion} in
 * temperature. D rises monotonically with T (T/η(T) increases), so the equation is solved by
 * bisection over the medium's valid range ({@link mediumTemperatureRange}) to 1e-9 K.
 *
 * **Interval.** Two independent uncertainties are combined in quadrature on the log scale of D,
 * separately for each side (D's CI may be asymmetric), and the two ends are inverted:
 *
 *     ln D_low  = ln D̂ − √[(ln D̂ − ln D_lo)² + (1.96·s_r)²]
 *     ln D_high = ln D̂ + √[(ln D_hi − ln D̂)² + (1.96·s_r)²]
 *     s_r = (radiusSd / r) · (1 + u·f′(u)/f(u))      (radius → log D sensitivity; u = h/r)
 *
 * `ci95 = [T(D_low), T(D_high)]`. **Coverage** means: over repeated runs in which both the
 * estimate D̂ scatters about the true D (as its CI states) and the particles' actual radius differs
 * from the nominal by a random error of sd `radiusSd` (a batch-to-batch or calibration error),
 * the interval contains the true temperature 95 % of the time. The radius error is common to all
 * particles of a run: it does not shrink with more data, so for long runs it dominates
 * (2 % in r ≈ 0.7 K in water at 20 °C). Valid to first order; tested by Monte Carlo.
 *
 * A CI end (or the value) with no solution inside the valid range is clamped to the range and
 * flagged (`clampedLow`, `clampedHigh`); a lower D CI end ≤ 0 (or NaN) clamps the low end and
 * an infinite upper end clamps the high end.
 *
 * Returns null for a fixed-viscosity medium (no temperature dependence) and when D̂ is not a
 * finite positive number (no estimate yet).
 *
 * Complexity: 3 bisections of about 40 viscosity evaluations each.
 *
 * @param input see {@link ImpliedTemperatureInput}
 * @returns the implied temperature, °C, or null
 * @throws RangeError for radius ≤ 0, radiusSd < 0, height < radius
 * @example
 * impliedTemperature({ diffusion: { value: 0.5, ci95: [0.49, 0.51] }, radius: 0.5, radiusSd: 0,
 *   medium: { kind: 'water' } })
 * // → { value: 25.72, ci95: [24.94, 26.49], clampedLow: false, clampedHigh: false, validRange: [-20, 110] }
 */
export function impliedTemperature(input: ImpliedTemperatureInput): ImpliedTemperature | null {
  const { diffusion, radius, medium, height } = input;
  const radiusSd = input.radiusSd ?? defaultRadiusSd(radius);
  checkGeometry('impliedTemperature', radius, radiusSd, height);
  const range = mediumTemperatureRange(medium);
  if (range === null) return null;
  const estimate = diffusion.value;
  if (!(estimate > 0 && Number.isFinite(estimate))) return null;

  const wallFactor = height === undefined ? 1 : faxenParallel(height / radius);
  const radiusLogSensitivity = height === undefined ? 1 : 1 + faxenParallelLogSlope(height / radius);
  const radiusHalfWidth = Z95 * (radiusSd / radius) * radiusLogSensitivity;

  const [dLow, dHigh] = diffusion.ci95;
  const lowerLogHalfWidth = dLow > 0 ? Math.log(estimate / dLow) : Number.POSITIVE_INFINITY;
  const upperLogHalfWidth = dHigh > 0 && Number.isFinite(dHigh) ? Math.log(dHigh / estimate) : Number.POSITIVE_INFINITY;
  // Math.hypot(∞, x) is ∞, and exp(−∞) = 0, so an open CI end falls through to clamping below.
  // Math.abs: a CI given the wrong way round still yields a two-sided interval.
  const targetLow = estimate * Math.exp(-Math.hypot(Math.abs(lowerLogHalfWidth), radiusHalfWidth));
  const targetHigh = estimate * Math.exp(Math.hypot(Math.abs(upperLogHalfWidth), radiusHalfWidth));

  const predicted = (celsius: number): number =>
    stokesEinsteinDiffusion(celsius, mediumViscosity(medium, celsius), radius) * wallFactor;
  const [minCelsius, maxCelsius] = range;
  const atMin = predicted(minCelsius);
  const atMax = predicted(maxCelsius);
  let clampedLow = false;
  let clampedHigh = false;
  const solve = (target: number): number => {
    if (!(target > atMin)) {
      clampedLow = true;
      return minCelsius;
    }
    if (!(target < atMax)) {
      clampedHigh = true;
      return maxCelsius;
    }
    return bisectIncreasing(predicted, target, minCelsius, maxCelsius, 1e-9);
  };
  const value = solve(estimate);
  const low = solve(targetLow);
  const high = solve(targetHigh);
  return { value, ci95: [low, high], clampedLow, clampedHigh, validRange: [minCelsius, maxCelsius] };
}
