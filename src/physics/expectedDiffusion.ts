import { checkGeometry } from './checkGeometry.js';
import { defaultRadiusSd } from './defaultRadiusSd.js';
import { faxenParallel } from './faxenParallel.js';
import { faxenParallelLogSlope } from './faxenParallelLogSlope.js';
import type { Medium } from './medium.js';
import { mediumViscosity } from './mediumViscosity.js';
import { stokesEinsteinDiffusion } from './stokesEinsteinDiffusion.js';

/** Inputs of {@link expectedDiffusion}. */
export interface ExpectedDiffusionInput {
  /** Sample temperature, °C. */
  celsius: number;
  /** Nominal hydrodynamic radius r, µm (> 0). */
  radius: number;
  /** Standard uncertainty of the radius, µm (≥ 0); default {@link defaultRadiusSd} (2 %). */
  radiusSd?: number;
  /** The liquid. */
  medium: Medium;
  /** Height h of the particle centre above the coverslip, µm (≥ radius); omit for bulk. */
  height?: number;
}

/** A predicted diffusion coefficient with its standard uncertainty, µm²/s. */
export interface DiffusionPrediction {
  /** Predicted D, µm²/s. */
  value: number;
  /** Its standard uncertainty from the radius uncertainty alone (first order), µm²/s. */
  sd: number;
}

/**
 * The diffusion coefficient that 2-D tracking in the image plane should measure: Stokes–Einstein
 * in the medium at that temperature ({@link stokesEinsteinDiffusion}, {@link mediumViscosity}),
 * times Faxén's parallel wall factor ({@link faxenParallel}) when a height is given:
 *
 *     D = k_B·T / (6π·η(T)·r) · f(h/r)
 *
 * The standard uncertainty is propagated from `radiusSd` to first order (delta method). At fixed
 * height the wall factor also depends on r, so
 *
 *     sd = D · (radiusSd / r) · (1 + u·f′(u)/f(u)),   u = h/r   (no height: sd = D·radiusSd/r)
 *
 * ({@link faxenParallelLogSlope}). Temperature and viscosity are taken as exact.
 *
 * Bad input: radius, radiusSd and height are parameters, checked with a RangeError. A temperature
 * outside the medium's valid range (a sample, e.g. from a log) gives `{ value: NaN, sd: NaN }`.
 *
 * Complexity: O(1).
 *
 * @param input see {@link ExpectedDiffusionInput}
 * @returns `{ value, sd }`, µm²/s
 * @throws RangeError for radius ≤ 0, radiusSd < 0, height < radius or a non-finite parameter
 * @example
 * expectedDiffusion({ celsius: 20, radius: 0.5, radiusSd: 0.01, medium: { kind: 'water' } })
 * // → { value: 0.42875, sd: 0.008575 } (µm²/s)
 * expectedDiffusion({ celsius: 20, radius: 0.5, medium: { kind: 'water' }, height: 1 })
 * // → { value: 0.30933, sd: 0.008657 } (µm²/s; Faxén factor 0.72144 at h/r = 2)
 */
export function expectedDiffusion(input: ExpectedDiffusionInput): DiffusionPrediction {
  const { celsius, radius, medium, height } = input;
  const radiusSd = input.radiusSd ?? defaultRadiusSd(radius);
  checkGeometry('expectedDiffusion', radius, radiusSd, height);
  const bulk = stokesEinsteinDiffusion(celsius, mediumViscosity(medium, celsius), radius);
  if (height === undefined) return { value: bulk, sd: (bulk * radiusSd) / radius };
  const heightOverRadius = height / radius;
  const value = bulk * faxenParallel(heightOverRadius);
  const logSensitivity = 1 + faxenParallelLogSlope(heightOverRadius);
  return { value, sd: (value * radiusSd * logSensitivity) / radius };
}
