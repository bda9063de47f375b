/**
 * Reduced-temperature coefficients H_i of the dilute-gas term μ₀, Huber et al. 2009, Table 2.
 */
const H0 = [1.67752, 2.20462, 0.6366564, -0.241605] as const;

/**
 * The 21 nonzero coefficients H_ij of the residual term μ₁, Huber et al. 2009, Table 3, stored as a
 * dense 6 × 7 matrix (row i: power of (1/T̄ − 1), column j: power of (ρ̄ − 1)).
 */
const H1 = new Float64Array(42);
// (i, j, H_ij)
const H1_ENTRIES: readonly (readonly [number, number, number])[] = [
  [0, 0, 0.520094], [1, 0, 0.0850895], [2, 0, -1.08374], [3, 0, -0.289555],
  [0, 1, 0.222531], [1, 1, 0.999115], [2, 1, 1.88797], [3, 1, 1.26613], [5, 1, 0.120573],
  [0, 2, -0.281378], [1, 2, -0.906851], [2, 2, -0.772479], [3, 2, -0.489837], [4, 2, -0.25704],
  [0, 3, 0.161913], [1, 3, 0.257399],
  [0, 4, -0.0325372], [3, 4, 0.0698452],
  [4, 5, 0.00872102],
  [3, 6, -0.00435673], [5, 6, -0.000593264],
];
for (const [i, j, value] of H1_ENTRIES) H1[i * 7 + j] = value;

/** Critical-point reducing constants of IAPWS R12-08: T* = 647.096 K, ρ* = 322.0 kg/m³. */
const REDUCING_KELVIN = 647.096;
const REDUCING_DENSITY_KG_PER_M3 = 322.0;

/**
 * Viscosity of ordinary water substance from temperature and density, by the IAPWS 2008
 * formulation (IAPWS R12-08; M. L. Huber et al., "New international formulation for the viscosity
 * of H₂O", J. Phys. Chem. Ref. Data 38, 101–125, 2009), without the critical enhancement
 * (μ₂ = 1, as the release recommends for industrial use):
 *
 *     η = μ* · μ₀(T̄) · μ₁(T̄, ρ̄),  μ* = 1 µPa·s, T̄ = T / 647.096 K, ρ̄ = ρ / 322 kg/m³
 *     μ₀ = 100 √T̄ / Σ_{i=0..3} H_i / T̄^i                                   (Eq. 11)
 *     μ₁ = exp[ ρ̄ Σ_{i=0..5} (1/T̄ − 1)^i Σ_{j=0..6} H_ij (ρ̄ − 1)^j ]       (Eq. 12)
 *
 * The density must come from an equation of state; for liquid water at 0.1 MPa use
 * {@link waterViscosity} instead, which needs only the temperature.
 *
 * Bad input: a non-finite or non-positive temperature or density gives NaN (no throw, so a sample
 * path can skip and count it). No range check beyond that: the release's own validity region
 * (up to 1173.15 K and 1000 MPa) is the caller's business.
 *
 * Complexity: O(1) (42 multiply-adds).
 *
 * @param kelvin temperature T, K
 * @param densityKgPerM3 density ρ, kg/m³
 * @returns dynamic viscosity η, µPa·s
 * @example
 * iapwsViscosity(298.15, 998) // → 889.7351 (µPa·s; IAPWS R12-08 check table)
 */
export function iapwsViscosity(kelvin: number, densityKgPerM3: number): number {
  if (!(kelvin > 0) || !(densityKgPerM3 > 0) || !Number.isFinite(kelvin) || !Number.isFinite(densityKgPerM3)) {
    return Number.NaN;
  }
  const tBar = kelvin / REDUCING_KELVIN;
  const rhoBar = densityKgPerM3 / REDUCING_DENSITY_KG_PER_M3;

  // μ₀: Horner-free sum, four terms.
  let denominator = 0;
  let inversePower = 1;
  for (let i = 0; i < 4; i++) {
    denominator += H0[i] * inversePower;
    inversePower /= tBar;
  }
  const mu0 = (100 * Math.sqrt(tBar)) / denominator;

  // μ₁: double sum, inner sums in (ρ̄ − 1) by Horner's rule.
  const x = 1 / tBar - 1;
  const y = rhoBar - 1;
  let outer = 0;
  let xPower = 1;
  for (let i = 0; i < 6; i++) {
    let inner = 0;
    for (let j = 6; j >= 0; j--) inner = inner * y + H1[i * 7 + j];
    outer += xPower * inner;
    xPower *= x;
  }
  const mu1 = Math.exp(rhoBar * outer);
  return mu0 * mu1;
}
