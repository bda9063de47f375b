/**
 * Test-only helper: density of air-free liquid water at 101.325 kPa, G. S. Kell, "Density,
 * thermal expansivity, and compressibility of liquid water from 0° to 150 °C", J. Chem. Eng. Data
 * 20, 97–105 (1975), Eq. as quoted by F. E. Jones & G. L. Harris, J. Res. NIST 97, 335 (1992),
 * Eq. (1). Kell's t is on IPTS-68; t68 ≈ 1.00024·t90 near room temperature (common practice,
 * no source; the difference is a few mK and negligible here).
 *
 * @param celsius temperature, °C (ITS-90), 0–150
 * @returns density, kg/m³
 * @example
 * waterDensityKell(20) // → 998.203 (kg/m³)
 */
export function waterDensityKell(celsius: number): number {
  const t = 1.00024 * celsius;
  return (
    (999.83952 + 16.945176 * t - 7.9870401e-3 * t ** 2 - 46.170461e-6 * t ** 3 + 105.56302e-9 * t ** 4 - 280.54253e-12 * t ** 5) /
    (1 + 16.87985e-3 * t)
  );
}
