import { describe, expect, it } from 'vitest';
import { iapwsViscosity } from '../../src/physics/iapwsViscosity.js';
import { waterDensityKell } from './waterDensityKell.js';

describe('iapwsViscosity(kelvin, densityKgPerM3)', () => {
  // IAPWS R12-08 (Release on the IAPWS Formulation 2008 for the Viscosity of Ordinary Water
  // Substance), table of check values for μ₂ = 1; Huber et al., J. Phys. Chem. Ref. Data 38, 101
  // (2009). Values printed to 1e-6 µPa·s; tolerance 1e-6 µPa·s (half a printed unit plus margin).
  const checkTable: [number, number, number][] = [
    [298.15, 998, 889.7351],
    [298.15, 1200, 1437.649467],
    [373.15, 1000, 307.883622],
    [433.15, 1, 14.538324],
    [433.15, 1000, 217.685358],
    [873.15, 1, 32.619287],
    [873.15, 100, 35.802262],
    [873.15, 600, 77.430195],
    [1173.15, 1, 44.217245],
    [1173.15, 100, 47.640433],
    [1173.15, 400, 64.154608],
  ];
  for (const [kelvin, density, expected] of checkTable) {
    it(`iapwsViscosity(${kelvin}, ${density}) is ${expected} µPa·s`, () => {
      // IAPWS R12-08 check table (see above)
      expect(Math.abs(iapwsViscosity(kelvin, density) - expected)).toBeLessThan(1e-6);
    });
  }

  it('iapwsViscosity(T, ρ at 0.1 MPa) reproduces the full-formulation column at 0.1 MPa', () => {
    // estimators.md §6b table, column "full IAPWS 2008" (computed there with IF97 density [C]).
    // Here the density is Kell 1975 instead of IF97, so allow 0.03 µPa·s (the 0 °C entry differs
    // by 0.02 µPa·s, a 1e-5 relative density difference between the two density sources).
    const column: [number, number][] = [
      [0, 1791.75], [10, 1305.9], [15, 1137.57], [20, 1001.6], [25, 890.02], [30, 797.22], [37, 691.3], [40, 652.73],
    ];
    for (const [celsius, expected] of column) {
      expect(Math.abs(iapwsViscosity(celsius + 273.15, waterDensityKell(celsius)) - expected)).toBeLessThan(0.03);
    }
  });

  it('iapwsViscosity(kelvin, density) is NaN for non-positive or non-finite input', () => {
    // bad-input policy (STYLE.md §7), no source needed
    expect(iapwsViscosity(0, 998)).toBeNaN();
    expect(iapwsViscosity(298.15, -1)).toBeNaN();
    expect(iapwsViscosity(Number.NaN, 998)).toBeNaN();
    expect(iapwsViscosity(298.15, Number.POSITIVE_INFINITY)).toBeNaN();
  });
});
