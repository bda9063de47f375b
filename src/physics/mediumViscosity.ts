import { glycerolWaterViscosity } from './glycerolWaterViscosity.js';
import type { Medium } from './medium.js';
import { waterViscosity } from './waterViscosity.js';

/**
 * Dynamic viscosity of the medium at a temperature, mPa·s: Pátek et al. 2009 for `water`,
 * Cheng 2008 for `glycerol-water`, the fixed value for `viscosity` (any temperature, even NaN).
 *
 * Bad input: outside the medium's validity range ({@link mediumTemperatureRange}) the result is
 * NaN, never a throw, so a sample path can skip and count it.
 *
 * Complexity: O(1).
 *
 * @param medium a medium
 * @param celsius temperature, °C
 * @returns viscosity η, mPa·s (NaN outside the valid range)
 * @example
 * mediumViscosity({ kind: 'water' }, 20)                                 // → 1.00157
 * mediumViscosity({ kind: 'glycerol-water', glycerolMassFraction: 0.5 }, 20) // → 6.002
 * mediumViscosity({ kind: 'viscosity', milliPascalSeconds: 2 }, 80)      // → 2
 */
export function mediumViscosity(medium: Medium, celsius: number): number {
  switch (medium.kind) {
    case 'water':
      return waterViscosity(celsius);
    case 'glycerol-water':
      return glycerolWaterViscosity(medium.glycerolMassFraction, celsius);
    case 'viscosity':
      return medium.milliPascalSeconds;
  }
}
