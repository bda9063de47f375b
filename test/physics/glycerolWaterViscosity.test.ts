import { describe, expect, it } from 'vitest';
import { glycerolWaterViscosity } from '../../src/physics/glycerolWaterViscosity.js';

describe('glycerolWaterViscosity(massFraction, celsius)', () => {
  it('glycerolWaterViscosity(C_m, t) matches the Cheng 2008 check values to 1e-3 relative', () => {
    // N.-S. Cheng, Ind. Eng. Chem. Res. 47, 3285 (2008), Eqs. 6, 21, 22; check values computed
    // from the published formula, estimators.md §6d [C]
    const table: [number, number, number][] = [
      [0, 20, 1.0049], [1, 20, 1413.8], [0.5, 20, 6.002], [0.5, 25, 5.004], [0.5, 37, 3.396], [0.8, 20, 60.86], [0.9, 20, 223.7],
    ];
    for (const [fraction, celsius, expected] of table) {
      expect(Math.abs(glycerolWaterViscosity(fraction, celsius) / expected - 1)).toBeLessThan(1e-3);
    }
  });

  it('glycerolWaterViscosity(C_m, 20) is within 2 % of the Segur & Oberstar measurements', () => {
    // Segur & Oberstar, Ind. Eng. Chem. 43, 2117 (1951), values at 20 °C from memory
    // (estimators.md §6d [M]); Cheng 2008 reports agreement of about 2 %.
    const measured: [number, number][] = [[0.5, 6.0], [0.6, 10.8], [0.8, 60.1], [0.9, 219], [1, 1412]];
    for (const [fraction, expected] of measured) {
      expect(Math.abs(glycerolWaterViscosity(fraction, 20) / expected - 1)).toBeLessThan(0.025);
    }
  });

  it('glycerolWaterViscosity(C_m, t) rises with C_m and falls with t', () => {
    // common practice, no source (glycerol is ~1400 times more viscous than water)
    for (let celsius = 0; celsius <= 100; celsius += 10) {
      let previous = 0;
      for (let fraction = 0; fraction <= 1.0001; fraction += 0.05) {
        const eta = glycerolWaterViscosity(Math.min(fraction, 1), celsius);
        expect(eta).toBeGreaterThan(previous);
        previous = eta;
      }
    }
    for (const fraction of [0, 0.3, 0.6, 0.9, 1]) {
      expect(glycerolWaterViscosity(fraction, 30)).toBeLessThan(glycerolWaterViscosity(fraction, 20));
    }
  });

  it('glycerolWaterViscosity(C_m, t) is NaN outside C_m 0–1 or 0–100 °C', () => {
    // validity range stated by Cheng 2008
    expect(glycerolWaterViscosity(-0.01, 20)).toBeNaN();
    expect(glycerolWaterViscosity(1.01, 20)).toBeNaN();
    expect(glycerolWaterViscosity(0.5, -1)).toBeNaN();
    expect(glycerolWaterViscosity(0.5, 101)).toBeNaN();
    expect(glycerolWaterViscosity(Number.NaN, 20)).toBeNaN();
  });
});
