import { BOLTZMANN_J_PER_K, KELVIN_OFFSET } from './constants.js';

/**
 * k_B / (6π) in units that take T in K, η in mPa·s and r in µm and give D in µm²/s:
 * D[m²/s] = k_B T / (6π · η·10⁻³ Pa·s · r·10⁻⁶ m), times 10¹² µm²/m², i.e. a factor 10²¹.
 */
const SCALE = (BOLTZMANN_J_PER_K * 1e21) / (6 * Math.PI);

/**
 * Translational diffusion coefficient of a sphere in an unbounded liquid, the Stokes–Einstein
 * relation (A. Einstein, Ann. Phys. 17, 549, 1905, with Stokes' drag 6πηr):
 *
 *     D = k_B·T / (6π·η·r),   T = t + 273.15 K
 *
 * with r the hydrodynamic radius. Near a wall, multiply by {@link faxenParallel} (in-plane) or
 * {@link brennerPerpendicular} (along the normal).
 *
 * Bad input: a non-finite argument, T ≤ 0 K, η ≤ 0 or r ≤ 0 gives NaN; it never throws.
 *
 * Complexity: O(1).
 *
 * @param celsius temperature, °C
 * @param viscosityMilliPascalSeconds dynamic viscosity η, mPa·s
 * @param radiusMicrometres hydrodynamic radius r, µm
 * @returns D, µm²/s
 * @example
 * stokesEinsteinDiffusion(20, 1.0016, 0.5) // → 0.42875 (µm²/s; a 1 µm bead in water at 20 °C)
 */
export function stokesEinsteinDiffusion(
  celsius: number,
  viscosityMilliPascalSeconds: number,
  radiusMicrometres: number,
): number {
  const kelvin = celsius + KELVIN_OFFSET;
  if (!(kelvin > 0) || !(viscosityMilliPascalSeconds > 0) || !(radiusMicrometres > 0)) return Number.NaN;
  if (!Number.isFinite(kelvin) || !Number.isFinite(viscosityMilliPascalSeconds) || !Number.isFinite(radiusMicrometres)) {
    return Number.NaN;
  }
  return (SCALE * kelvin) / (viscosityMilliPascalSeconds * radiusMicrometres);
}
