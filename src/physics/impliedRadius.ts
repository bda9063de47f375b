import type { Estimate } from '../report.js';
import { bisectIncreasing } from './bisectIncreasing.js';
import { checkGeometry } from './checkGeometry.js';
import { faxenParallel } from './faxenParallel.js';
import type { Medium } from './medium.js';
import { mediumViscosity } from './mediumViscosity.js';
import { stokesEinsteinDiffusion } from './stokesEinsteinDiffusion.js';

/** Faxén's parallel factor at contact, f(1) = 1 − 9/16 + 1/8 − 45/256 − 1/16 ≈ 0.3223 (its minimum). */
const FAXEN_AT_CONTACT = 1 - 9 / 16 + 1 / 8 - 45 / 256 - 1 / 16;

/** Inputs of {@link impliedRadius}. */
export interface ImpliedRadiusInput {
  /** Measured in-plane diffusion coefficient with its 95 % CI, µm²/s. */
  diffusion: Estimate;
  /** Sample temperature, °C (taken as exact). */
  celsius: number;
  /** The liquid. */
  medium: Medium;
  /** Height of the particle centre above the coverslip, µm; omit for bulk. */
  height?: number;
}

/** The hydrodynamic radius implied by a diffusion coefficient, µm. */
export interface ImpliedRadius extends Estimate {
  /** Implied hydrodynamic radius, µm. */
  value: number;
  /**
   * 95 % interval, µm, from D's CI alone (r falls as D rises, so the ends swap). The upper end is
   * +∞ when D's lower end is ≤ 0 and no height bounds it.
   */
  ci95: [number, number];
  /**
   * True when, with a height given, the value or the upper CI end was clamped to r = height (a
   * sphere touching the wall): the measured D is below what even a touching sphere would show.
   */
  clampedHigh: boolean;
}

/**
 * The hydrodynamic radius at which Stokes–Einstein in the medium at the given temperature predicts
 * the measured D; the inverse of {@link expectedDiffusion} in r:
 *
 *     bulk:           r = k_B·T / (6π·η·D)                         (closed form)
 *     with height h:  k_B·T·f(h/r) / (6π·η·r) = D,  r ∈ (0, h]     (bisection on r)
 *
 * With a height the left side still falls monotonically with r (d/dr [f(h/r)/r] < 0 because
 * f(u) + u·f′(u) = 1 − s³/4 + (135/256)s⁴ + s⁵/4 > 0 for s = r/h ≤ 1), so the root is unique.
 * It lies in [f(1)·r₀, min(r₀, h)], r₀ the bulk answer.
 *
 * The interval maps D's CI ends through the same inversion; the temperature and the viscosity
 * are taken as exact (a 1 K error is ≈ 2.8 % in r in water at 20 °C: pass the uncertainty on
 * yourself if it matters).
 *
 * Returns null when D̂ is not a finite positive number, or the temperature lies outside the
 * medium's valid range.
 *
 * Complexity: O(1) in bulk; 3 bisections of about 60 steps with a height.
 *
 * @param input see {@link ImpliedRadiusInput}
 * @returns the implied radius, µm, or null
 * @throws RangeError for a height ≤ 0 or not finite
 * @example
 * impliedRadius({ diffusion: { value: 0.42875, ci95: [0.42, 0.44] }, celsius: 20, medium: { kind: 'water' } })
 * // → { value: 0.5000, ci95: [0.4872, 0.5104], clampedHigh: false } (µm)
 */
export function impliedRadius(input: ImpliedRadiusInput): ImpliedRadius | null {
  const { diffusion, celsius, medium, height } = input;
  checkGeometry('impliedRadius', undefined, undefined, height);
  const estimate = diffusion.value;
  if (!(estimate > 0 && Number.isFinite(estimate))) return null;
  // Bulk D of a 1 µm-radius sphere: D(r) = unit / r in bulk.
  const unit = stokesEinsteinDiffusion(celsius, mediumViscosity(medium, celsius), 1);
  if (!Number.isFinite(unit)) return null;

  let clampedHigh = false;
  const solve = (d: number): number => {
    if (!(d > 0)) {
      // D's lower end at or below 0: any radius up to the wall (or without a wall, any) fits.
      if (height === undefined) return Number.POSITIVE_INFINITY;
      clampedHigh = true;
      return height;
    }
    if (!Number.isFinite(d)) return 0;
    const bulkRadius = unit / d;
    if (height === undefined) return bulkRadius;
    // Predicted D at contact (r = h) is the smallest a wall-bounded sphere can show.
    if (d <= (unit * FAXEN_AT_CONTACT) / height) {
      clampedHigh = true;
      return height;
    }
    // g(r) = D(r) is decreasing in r; bisect the increasing function −g on [f(1)·r₀, min(r₀, h)].
    const negativePredicted = (r: number): number => -(unit * faxenParallel(height / r)) / r;
    const low = FAXEN_AT_CONTACT * bulkRadius;
    const high = Math.min(bulkRadius, height);
    return bisectIncreasing(negativePredicted, -d, low, high, 1e-12 * high);
  };
  const value = solve(estimate);
  const [dLow, dHigh] = diffusion.ci95;
  // A NaN CI end is an open end: D's upper end → r = 0, D's lower end → the largest radius.
  const low = solve(Number.isNaN(dHigh) ? Number.POSITIVE_INFINITY : Math.max(dLow, dHigh));
  const high = solve(Number.isNaN(dLow) ? 0 : Math.min(dLow, dHigh));
  return { value, ci95: [low, high], clampedHigh };
}
