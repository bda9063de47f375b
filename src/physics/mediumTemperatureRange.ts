import { GLYCEROL_WATER_MAX_CELSIUS, GLYCEROL_WATER_MIN_CELSIUS } from './glycerolWaterViscosity.js';
import type { Medium } from './medium.js';
import { WATER_VISCOSITY_MAX_CELSIUS, WATER_VISCOSITY_MIN_CELSIUS } from './waterViscosity.js';

/**
 * The temperature range over which the medium's viscosity correlation is valid, °C:
 * −20…110 °C for `water` (Pátek et al. 2009, 253.15–383.15 K) and 0…100 °C for `glycerol-water`
 * (Cheng 2008). A fixed `viscosity` medium has no range (any temperature; returns null).
 *
 * Complexity: O(1).
 *
 * @param medium a medium
 * @returns [lowest, highest] °C, or null for a fixed viscosity
 * @example
 * mediumTemperatureRange({ kind: 'water' }) // → [-20, 110] (°C)
 */
export function mediumTemperatureRange(medium: Medium): [number, number] | null {
  switch (medium.kind) {
    case 'water':
      return [WATER_VISCOSITY_MIN_CELSIUS, WATER_VISCOSITY_MAX_CELSIUS];
    case 'glycerol-water':
      return [GLYCEROL_WATER_MIN_CELSIUS, GLYCEROL_WATER_MAX_CELSIUS];
    case 'viscosity':
      return null;
  }
}
