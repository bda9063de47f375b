import type { Medium } from './medium.js';

/**
 * Whether the medium's viscosity depends on temperature, i.e. whether a diffusion coefficient can
 * be turned into an implied temperature ({@link impliedTemperature}). False only for a fixed
 * `viscosity:<mPa·s>` medium.
 *
 * Complexity: O(1).
 *
 * @param medium a medium
 * @returns true for `water` and `glycerol-water`
 * @example
 * isTemperatureDependent({ kind: 'water' })                          // → true
 * isTemperatureDependent({ kind: 'viscosity', milliPascalSeconds: 1 }) // → false
 */
export function isTemperatureDependent(medium: Medium): boolean {
  return medium.kind !== 'viscosity';
}
