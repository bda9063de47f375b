import { describe, expect, it } from 'vitest';
import { bevanPrievePerpendicular } from '../../src/physics/bevanPrievePerpendicular.js';
import { brennerPerpendicular } from '../../src/physics/brennerPerpendicular.js';
import { faxenParallel } from '../../src/physics/faxenParallel.js';
import { faxenParallelLogSlope } from '../../src/physics/faxenParallelLogSlope.js';

// Check values: estimators.md §7 [C] (Faxén series as in Happel & Brenner 1965; Brenner,
// Chem. Eng. Sci. 16, 242 (1961); Bevan & Prieve, J. Chem. Phys. 113, 1228 (2000)); 1e-4 absolute.
const table: [number, number, number, number][] = [
  [1.1, 0.42368, 0.08727, 0.08784],
  [1.5, 0.61908, 0.31197, 0.3125],
  [2, 0.72144, 0.47047, 0.47059],
  [3, 0.8147, 0.63727, 0.63636],
  [5, 0.8882, 0.77816, 0.77612],
  [10, 0.94386, 0.88795, 0.88576],
];

describe('faxenParallel(heightOverRadius)', () => {
  it('faxenParallel(h/r) matches the check table to 1e-4', () => {
    for (const [u, parallel] of table) expect(Math.abs(faxenParallel(u) - parallel)).toBeLessThan(1e-4);
  });
  it('faxenParallel is 1 far from the wall, NaN inside it', () => {
    // the series → 1 as r/h → 0 (Faxén); h < r is not a physical geometry
    expect(faxenParallel(Number.POSITIVE_INFINITY)).toBe(1);
    expect(faxenParallel(0.99)).toBeNaN();
    expect(faxenParallel(Number.NaN)).toBeNaN();
  });
});

describe('faxenParallelLogSlope(heightOverRadius)', () => {
  it('faxenParallelLogSlope(u) equals a numerical d ln f / d ln u', () => {
    // definition of the log-derivative (common practice, no source); central difference
    for (const u of [1.05, 1.5, 2, 5, 20]) {
      const h = 1e-5;
      const numerical = (Math.log(faxenParallel(u * Math.exp(h))) - Math.log(faxenParallel(u * Math.exp(-h)))) / (2 * h);
      expect(faxenParallelLogSlope(u)).toBeCloseTo(numerical, 7);
    }
  });
});

describe('brennerPerpendicular(heightOverRadius)', () => {
  it('brennerPerpendicular(h/r) matches the check table to 1e-4', () => {
    for (const [u, , perpendicular] of table) expect(Math.abs(brennerPerpendicular(u) - perpendicular)).toBeLessThan(1e-4);
  });

  it("1/brennerPerpendicular(cosh α) reproduces Brenner's λ table", () => {
    // Brenner 1961 table, values recalled (estimators.md §7 [C] on an implementation, [M] on the
    // table itself); printed to 1e-4, so tolerance 1e-4 absolute (0.5 printed unit + rounding)
    const lambdas: [number, number][] = [[0.5, 9.2518], [1, 3.0361], [1.5, 1.8375], [2, 1.4129], [2.5, 1.222], [3, 1.1252]];
    for (const [alpha, lambda] of lambdas) {
      expect(Math.abs(1 / brennerPerpendicular(Math.cosh(alpha)) - lambda)).toBeLessThan(1e-4);
    }
  });

  it('brennerPerpendicular approaches the lubrication limit near contact and 1 − 9r/(8h) far away', () => {
    // Near contact λ ≈ r/g − (1/5) ln(g/r) + 0.9713 (Cox & Brenner, Chem. Eng. Sci. 22, 1753,
    // 1967; formula and constant from memory); its next term is O((g/r) ln(g/r)), so 1e-3 at g ≤ 1e-3 r.
    for (const gap of [1e-3, 1e-4, 1e-5]) {
      const lubrication = 1 / gap - 0.2 * Math.log(gap) + 0.9713;
      expect(Math.abs(1 / brennerPerpendicular(1 + gap) - lubrication)).toBeLessThan(1e-3);
    }
    // Far away the leading reflection term: D⊥/D₀ ≈ 1 − (9/8)(r/h) (Lorentz 1907, via Happel &
    // Brenner 1965, from memory); the next term is O((r/h)³)
    expect(brennerPerpendicular(1000)).toBeCloseTo(1 - 9 / 8000, 6);
    expect(brennerPerpendicular(1)).toBe(0);
    expect(brennerPerpendicular(1e200)).toBe(1);
    expect(brennerPerpendicular(0.5)).toBeNaN();
  });

  it('brennerPerpendicular rises monotonically from 0 at contact to 1', () => {
    // the wall hinders motion less the farther away it is (common practice, no source)
    let previous = 0;
    for (let u = 1 + 1e-6; u < 1e6; u *= 1.05) {
      const value = brennerPerpendicular(u);
      expect(value).toBeGreaterThan(previous);
      expect(value).toBeLessThan(1);
      previous = value;
    }
  });
});

describe('bevanPrievePerpendicular(heightOverRadius)', () => {
  it('bevanPrievePerpendicular(h/r) matches the check table to 1e-4, with 8/17 at h/r = 2', () => {
    for (const [u, , , rational] of table) expect(Math.abs(bevanPrievePerpendicular(u) - rational)).toBeLessThan(1e-4);
    expect(bevanPrievePerpendicular(2)).toBeCloseTo(8 / 17, 14);
  });

  it('bevanPrievePerpendicular stays within 0.71 % of Brenner at every height', () => {
    // estimators.md §7: within 0.71 % everywhere [C], worst near h/r ≈ 1.06
    let worst = 0;
    let worstAt = 0;
    for (let u = 1.001; u < 50; u *= 1.002) {
      const relative = Math.abs(bevanPrievePerpendicular(u) / brennerPerpendicular(u) - 1);
      if (relative > worst) {
        worst = relative;
        worstAt = u;
      }
    }
    expect(worst).toBeLessThan(0.0071);
    expect(worst).toBeGreaterThan(0.006);
    expect(worstAt).toBeGreaterThan(1.03);
    expect(worstAt).toBeLessThan(1.09);
  });
});
