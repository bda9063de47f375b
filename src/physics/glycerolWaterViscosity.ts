/** Lower end of the validity range of {@link glycerolWaterViscosity}, °C. */
export const GLYCEROL_WATER_MIN_CELSIUS = 0;
/** Upper end of the validity range of {@link glycerolWaterViscosity}, °C. */
export const GLYCEROL_WATER_MAX_CELSIUS = 100;

/**
 * Viscosity of a glycerol–water mixture, by N.-S. Cheng, "Formula for the viscosity of a
 * glycerol−water mixture", Ind. Eng. Chem. Res. 47, 3285–3288 (2008):
 *
 *     μ = μ_w^α · μ_g^(1−α)                                          (Eq. 6)
 *     α = 1 − C_m + a·b·C_m(1 − C_m) / (a·C_m + b(1 − C_m))
 *     a = 0.705 − 0.0017·T,   b = (4.9 + 0.036·T)·a^2.5
 *     μ_w = 1.790·exp[(−1230 − T)·T / (36100 + 360·T)]                (Eq. 21)
 *     μ_g = 12100·exp[(−1233 + T)·T / (9900 + 70·T)]                  (Eq. 22)
 *
 * with T in °C and C_m the glycerol mass fraction. Valid 0–100 °C, C_m 0–1. Caution: at C_m = 0
 * this gives Cheng's own water fit (1.0049 mPa·s at 20 °C), about 0.3 % above the IAPWS value
 * of {@link waterViscosity}; use the `water` medium for pure water. The fraction is by **mass**;
 * converting a volume fraction needs densities (A. Volk & C. J. Kähler, Exp. Fluids 59, 75, 2018).
 *
 * Bad input: a mass fraction outside [0, 1] or a temperature outside 0–100 °C (or not finite)
 * returns NaN; it never throws.
 *
 * Complexity: O(1).
 *
 * @param massFraction glycerol mass fraction C_m, 0..1 (dimensionless)
 * @param celsius temperature, °C
 * @returns dynamic viscosity μ, mPa·s; NaN outside the validity range
 * @example
 * glycerolWaterViscosity(0.5, 20) // → 6.002 (mPa·s)
 * glycerolWaterViscosity(1, 20)   // → 1413.8 (mPa·s)
 */
export function glycerolWaterViscosity(massFraction: number, celsius: number): number {
  if (!(massFraction >= 0 && massFraction <= 1)) return Number.NaN;
  if (!(celsius >= GLYCEROL_WATER_MIN_CELSIUS && celsius <= GLYCEROL_WATER_MAX_CELSIUS)) return Number.NaN;
  const t = celsius;
  const c = massFraction;
  const a = 0.705 - 0.0017 * t;
  const b = (4.9 + 0.036 * t) * a ** 2.5;
  // At C_m = 0 and C_m = 1 the correction term is 0/b and 0/a: both finite, no special case needed.
  const alpha = 1 - c + (a * b * c * (1 - c)) / (a * c + b * (1 - c));
  const waterMilliPascalSeconds = 1.79 * Math.exp(((-1230 - t) * t) / (36100 + 360 * t));
  const glycerolMilliPascalSeconds = 12100 * Math.exp(((-1233 + t) * t) / (9900 + 70 * t));
  return waterMilliPascalSeconds ** alpha * glycerolMilliPascalSeconds ** (1 - alpha);
}
