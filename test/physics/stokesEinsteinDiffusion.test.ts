import { describe, expect, it } from 'vitest';
import { DIMER_DIFFUSION_RATIO } from '../../src/physics/clusterDiffusionRatios.js';
import { BOLTZMANN_J_PER_K, KELVIN_OFFSET } from '../../src/physics/constants.js';
import { stokesEinsteinDiffusion } from '../../src/physics/stokesEinsteinDiffusion.js';
import { waterViscosity } from '../../src/physics/waterViscosity.js';

describe('constants', () => {
  it('BOLTZMANN_J_PER_K and KELVIN_OFFSET are the exact SI values', () => {
    // BIPM, SI Brochure 9th ed. (2019): k = 1.380 649 × 10⁻²³ J/K exactly; T/K = t/°C + 273.15
    expect(BOLTZMANN_J_PER_K).toBe(1.380649e-23);
    expect(KELVIN_OFFSET).toBe(273.15);
  });
});

describe('stokesEinsteinDiffusion(celsius, viscosity, radius)', () => {
  it('a 1 µm bead in water gives 0.429 µm²/s at 20 °C and 0.491 at 25 °C', () => {
    // estimators.md §5 worked values [C] (η from IAPWS 2008): 0.42875 and 0.49073 µm²/s
    expect(stokesEinsteinDiffusion(20, waterViscosity(20), 0.5)).toBeCloseTo(0.429, 3);
    expect(stokesEinsteinDiffusion(25, waterViscosity(25), 0.5)).toBeCloseTo(0.491, 3);
  });

  it('matches the worked table at 15/20/25/30/37 °C to 1e-4 relative', () => {
    // estimators.md §5 worked values [C], tolerance 1e-4 relative with the Pátek/IAPWS viscosity
    const table: [number, number][] = [[15, 0.37107], [20, 0.42875], [25, 0.49073], [30, 0.55705], [37, 0.65723]];
    for (const [celsius, expected] of table) {
      expect(Math.abs(stokesEinsteinDiffusion(celsius, waterViscosity(celsius), 0.5) / expected - 1)).toBeLessThan(1e-4);
    }
  });

  it('with the tabulated viscosities it reproduces the table, and scales as 1/r', () => {
    // estimators.md §5: η column 1.00160 mPa·s at 20 °C; r = 50 nm gives 4.2875 µm²/s
    expect(stokesEinsteinDiffusion(20, 1.0016, 0.5)).toBeCloseTo(0.42875, 5);
    expect(stokesEinsteinDiffusion(37, 0.6913, 0.5)).toBeCloseTo(0.65723, 5);
    expect(stokesEinsteinDiffusion(20, 1.0016, 0.05)).toBeCloseTo(4.2875, 4);
  });

  it('the temperature sensitivity d ln D/dT in water is 2.79 %/K at 20 °C (2.61 at 25, 2.27 at 37)', () => {
    // estimators.md §5 "Temperature sensitivity" [C], printed to 0.01 %/K
    const slope = (celsius: number): number => {
      const h = 1e-3;
      const d = (t: number): number => stokesEinsteinDiffusion(t, waterViscosity(t), 0.5);
      return (Math.log(d(celsius + h)) - Math.log(d(celsius - h))) / (2 * h);
    };
    expect(Math.abs(slope(20) * 100 - 2.79)).toBeLessThanOrEqual(0.005);
    expect(Math.abs(slope(25) * 100 - 2.61)).toBeLessThanOrEqual(0.005);
    expect(Math.abs(slope(37) * 100 - 2.27)).toBeLessThanOrEqual(0.005);
  });

  it('a dimer of 1 µm beads in water at 20 °C diffuses at 0.308 µm²/s', () => {
    // estimators.md §8: D̄_dimer/D₀ = 0.718 ± 0.003 (Stimson & Jeffery 1926 axial friction,
    // transverse friction after Goldman, Cox & Brenner 1966; bead-shell computation [C])
    expect(DIMER_DIFFUSION_RATIO).toBeGreaterThanOrEqual(0.715);
    expect(DIMER_DIFFUSION_RATIO).toBeLessThanOrEqual(0.721);
    expect(DIMER_DIFFUSION_RATIO * stokesEinsteinDiffusion(20, waterViscosity(20), 0.5)).toBeCloseTo(0.308, 3);
  });

  it('gives NaN for non-positive or non-finite input', () => {
    // bad-input policy (STYLE.md §7)
    expect(stokesEinsteinDiffusion(20, 0, 0.5)).toBeNaN();
    expect(stokesEinsteinDiffusion(20, 1, -0.5)).toBeNaN();
    expect(stokesEinsteinDiffusion(-300, 1, 0.5)).toBeNaN();
    expect(stokesEinsteinDiffusion(Number.NaN, 1, 0.5)).toBeNaN();
    expect(stokesEinsteinDiffusion(20, Number.POSITIVE_INFINITY, 0.5)).toBeNaN();
  });
});
