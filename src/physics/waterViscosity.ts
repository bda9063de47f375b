import { KELVIN_OFFSET } from './constants.js';

/** Pátek et al. 2009 viscosity coefficients a_i, µPa·s. */
const A = [280.68, 511.45, 61.131, 0.45903] as const;
/** Pátek et al. 2009 viscosity exponents b_i. */
const B = [-1.9, -7.7, -19.6, -40.0] as const;

/** Lower end of the validity range of {@link waterViscosity}, °C (253.15 K, supercooled liquid). */
export const WATER_VISCOSITY_MIN_CELSIUS = -20;
/** Upper end of the validity range of {@link waterViscosity}, °C (383.15 K). */
export const WATER_VISCOSITY_MAX_CELSIUS = 110;

/**
 * Viscosity of liquid water at 0.1 MPa, from the reference correlation of J. Pátek, J. Hrubý,
 * J. Klomfar, M. Součková & A. H. Harvey, "Reference correlations for thermophysical properties of
 * liquid water at 0.1 MPa", J. Phys. Chem. Ref. Data 38, 21–29 (2009):
 *
 *     η / (µPa·s) = Σ_{i=1..4} a_i (T / 300 K)^{b_i}
 *
 * It agrees with the full IAPWS 2008 formulation ({@link iapwsViscosity} with the density at
 * 0.1 MPa) to better than 5e-5 relative between 0 and 40 °C (tested). Valid 253.15–383.15 K,
 * i.e. −20 to 110 °C, including supercooled and slightly superheated liquid.
 *
 * Bad input policy (chosen for sample paths, e.g. a temperature log): a temperature outside the
 * validity range, or not finite, returns NaN; it never throws. Callers skip and count NaN.
 *
 * Complexity: O(1).
 *
 * @param celsius temperature, °C (ITS-90)
 * @returns dynamic viscosity η, mPa·s; NaN outside −20…110 °C
 * @example
 * waterViscosity(20) // → 1.00157 (mPa·s)
 * waterViscosity(25) // → 0.89000 (mPa·s)
 * waterViscosity(150) // → NaN (outside 253.15–383.15 K)
 */
export function waterViscosity(celsius: number): number {
  if (!(celsius >= WATER_VISCOSITY_MIN_CELSIUS && celsius <= WATER_VISCOSITY_MAX_CELSIUS)) return Number.NaN;
  const reduced = (celsius + KELVIN_OFFSET) / 300;
  let microPascalSeconds = 0;
  for (let i = 0; i < 4; i++) microPascalSeconds += A[i] * reduced ** B[i];
  return microPascalSeconds / 1000;
}
