/**
 * Physical constants used by the physics module.
 *
 * @module
 */

/**
 * Boltzmann constant k_B, J/K. Exact by definition in the SI since 20 May 2019 (26th CGPM, 2018;
 * BIPM, The International System of Units, 9th edition).
 *
 * @example
 * BOLTZMANN_J_PER_K * 293.15 // → 4.047e-21 (J, thermal energy k_B·T at 20 °C)
 */
export const BOLTZMANN_J_PER_K = 1.380649e-23;

/**
 * Offset between the Celsius and kelvin scales: T/K = t/°C + 273.15, exact by definition.
 *
 * @example
 * 20 + KELVIN_OFFSET // → 293.15 (K)
 */
export const KELVIN_OFFSET = 273.15;
