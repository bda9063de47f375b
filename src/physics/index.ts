/**
 * The physics module: viscosity of the medium, Stokes–Einstein prediction with wall corrections,
 * and its inversions (implied temperature, implied radius). Pure functions, no I/O.
 *
 * @example
 * import { expectedDiffusion, parseMedium } from './physics/index.js';
 * expectedDiffusion({ celsius: 20, radius: 0.5, medium: parseMedium('water') }) // → { value: 0.42875, sd: 0.008575 }
 *
 * @module
 */

// Constants
export { BOLTZMANN_J_PER_K, KELVIN_OFFSET } from './constants.js';
export { DIMER_DIFFUSION_RATIO, LINEAR_TRIMER_DIFFUSION_RATIO, TRIANGULAR_TRIMER_DIFFUSION_RATIO } from './clusterDiffusionRatios.js';
export { DEFAULT_RADIUS_RELATIVE_SD, defaultRadiusSd } from './defaultRadiusSd.js';

// Viscosity
export { iapwsViscosity } from './iapwsViscosity.js';
export { WATER_VISCOSITY_MAX_CELSIUS, WATER_VISCOSITY_MIN_CELSIUS, waterViscosity } from './waterViscosity.js';
export { GLYCEROL_WATER_MAX_CELSIUS, GLYCEROL_WATER_MIN_CELSIUS, glycerolWaterViscosity } from './glycerolWaterViscosity.js';

// Medium
export type { Medium } from './medium.js';
export { MEDIUM_ERROR_CODE, MediumError, parseMedium } from './parseMedium.js';
export { formatMedium } from './formatMedium.js';
export { isTemperatureDependent } from './isTemperatureDependent.js';
export { mediumTemperatureRange } from './mediumTemperatureRange.js';
export { mediumViscosity } from './mediumViscosity.js';

// Diffusion of a sphere, free and near a wall
export { stokesEinsteinDiffusion } from './stokesEinsteinDiffusion.js';
export { faxenParallel } from './faxenParallel.js';
export { faxenParallelLogSlope } from './faxenParallelLogSlope.js';
export { brennerPerpendicular } from './brennerPerpendicular.js';
export { bevanPrievePerpendicular } from './bevanPrievePerpendicular.js';

// Prediction and inversion
export type { DiffusionPrediction, ExpectedDiffusionInput } from './expectedDiffusion.js';
export { expectedDiffusion } from './expectedDiffusion.js';
export type { ImpliedTemperature, ImpliedTemperatureInput } from './impliedTemperature.js';
export { impliedTemperature } from './impliedTemperature.js';
export type { ImpliedRadius, ImpliedRadiusInput } from './impliedRadius.js';
export { impliedRadius } from './impliedRadius.js';
