import { describe, expect, it } from 'vitest';
import { iapwsViscosity } from '../../src/physics/iapwsViscosity.js';
import { waterViscosity } from '../../src/physics/waterViscosity.js';
import { waterDensityKell } from './waterDensityKell.js';

/**
 * Vogel-type approximation η = A·10^{B/(T − C)}, A = 2.414e-5 Pa·s, B = 247.8 K, C = 140 K
 * (usually attributed to T. Al-Shemmeri, Engineering Fluid Mechanics, 2012; attribution from
 * memory, estimators.md §6c). Implemented here only, as an independent cross-check. Returns mPa·s.
 */
function vogelViscosity(celsius: number): number {
  return 2.414e-5 * 10 ** (247.8 / (celsius + 273.15 - 140)) * 1000;
}

describe('waterViscosity(celsius)', () => {
  it('waterViscosity(t) matches the Pátek et al. 2009 values at 0.1 MPa to 0.01 µPa·s', () => {
    // Pátek et al., J. Phys. Chem. Ref. Data 38, 21 (2009); values computed from the published
    // correlation, estimators.md §6b table, column "Pátek 2009" [C]; tolerance from there.
    const table: [number, number][] = [
      [0, 1791.78], [10, 1305.9], [15, 1137.55], [20, 1001.57], [25, 890.0], [30, 797.21], [37, 691.3], [40, 652.73],
    ];
    for (const [celsius, microPascalSeconds] of table) {
      expect(Math.abs(waterViscosity(celsius) * 1000 - microPascalSeconds)).toBeLessThanOrEqual(0.01);
    }
  });

  it('waterViscosity(t) agrees with the full IAPWS 2008 formulation to 5e-5 relative over 0–40 °C', () => {
    // IAPWS R12-08 (Huber et al. 2009) with the density of Kell 1975 at 101.325 kPa; tolerance
    // from estimators.md §6b ("Pátek vs full IAPWS, relative 5e-5").
    for (let celsius = 0; celsius <= 40; celsius += 2.5) {
      const full = iapwsViscosity(celsius + 273.15, waterDensityKell(celsius)) / 1000;
      expect(Math.abs(waterViscosity(celsius) / full - 1)).toBeLessThan(5e-5);
    }
  });

  it('waterViscosity(t) rounds to the handbook values in mPa·s', () => {
    // CRC-style rounded column of estimators.md §6b (IAPWS-based handbook tables; CRC page and
    // edition not checked, from memory there).
    const rounded: [number, number][] = [
      [0, 1.792], [10, 1.306], [15, 1.138], [20, 1.002], [25, 0.89], [30, 0.797], [37, 0.691], [40, 0.653],
    ];
    for (const [celsius, milliPascalSeconds] of rounded) {
      expect(Math.round(waterViscosity(celsius) * 1000) / 1000).toBeCloseTo(milliPascalSeconds, 10);
    }
    // Two independent public tables (estimators.md §6b [S]) list 1.307 at 10 °C: within 0.001 mPa·s.
    expect(Math.abs(waterViscosity(10) - 1.307)).toBeLessThanOrEqual(0.0011);
  });

  it('waterViscosity(t) differs from the Vogel form by the published deviations, and by < 2.5 % over 0–100 °C', () => {
    // Vogel check values first: 1.0018 mPa·s at 293.15 K and 0.89044 at 298.15 K (estimators.md §6c, 1e-4 relative).
    expect(Math.abs(vogelViscosity(20) / 1.0018 - 1)).toBeLessThan(1e-4);
    expect(Math.abs(vogelViscosity(25) / 0.89044 - 1)).toBeLessThan(1e-4);
    // Deviations of Vogel from IAPWS (estimators.md §6c [C]): +0.015 % at 20 °C, +0.05 % at 25 °C,
    // −0.13 % at 37 °C, −2.2 % at 0 °C; each printed to its last digit, so ±half a unit of it.
    const deviations: [number, number, number][] = [[20, 0.00015, 0.00005], [25, 0.0005, 0.00005], [37, -0.0013, 0.00005], [0, -0.022, 0.0005]];
    for (const [celsius, deviation, tolerance] of deviations) {
      expect(Math.abs(vogelViscosity(celsius) / waterViscosity(celsius) - 1 - deviation)).toBeLessThanOrEqual(tolerance);
    }
    // the form's claimed accuracy is ±2.5 % (from memory, estimators.md §6c [M])
    for (let celsius = 0; celsius <= 100; celsius += 5) {
      expect(Math.abs(vogelViscosity(celsius) / waterViscosity(celsius) - 1)).toBeLessThan(0.025);
    }
  });

  it('waterViscosity(t) falls monotonically with temperature over its valid range', () => {
    // a fact of the trade (liquid viscosity falls with T), common practice, no source
    let previous = Number.POSITIVE_INFINITY;
    for (let celsius = -20; celsius <= 110; celsius += 0.5) {
      const eta = waterViscosity(celsius);
      expect(eta).toBeLessThan(previous);
      previous = eta;
    }
  });

  it('waterViscosity(t) is NaN outside 253.15–383.15 K and for NaN', () => {
    // validity range of Pátek et al. 2009 (abstract): 253.15–383.15 K
    expect(waterViscosity(-20)).toBeGreaterThan(0);
    expect(waterViscosity(110)).toBeGreaterThan(0);
    expect(waterViscosity(-20.01)).toBeNaN();
    expect(waterViscosity(110.01)).toBeNaN();
    expect(waterViscosity(Number.NaN)).toBeNaN();
  });
});
