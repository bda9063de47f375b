import { describe, expect, it } from 'vitest';
import { msdFitRelativeSe } from '../../src/estimators/msdFitRelativeSe.js';
import { optimalMsdPoints } from '../../src/estimators/optimalMsdPoints.js';

// estimators.md §3 table of exact optimal p (relative SE of D̂, 1 axis) for the unweighted MSD fit
// of Michalet 2010; [C]: computed from the exact MSD covariance and checked by MC there.
const table: Array<[number, Array<[number, string]>]> = [
  [-1 / 3, [[2, '0.522'], [2, '0.320'], [2, '0.224'], [2, '0.070']]],
  [0, [[2, '0.582'], [2, '0.355'], [2, '0.248'], [2, '0.078']]],
  [0.1, [[2, '0.603'], [2, '0.367'], [2, '0.256'], [2, '0.080']]],
  [1, [[3, '0.748'], [3, '0.450'], [3, '0.313'], [3, '0.098']]],
  [10, [[7, '1.30'], [8, '0.727'], [8, '0.494'], [8, '0.151']]],
  [100, [[12, '3.70'], [24, '1.47'], [24, '0.93'], [26, '0.26']]],
];
const frames = [20, 50, 100, 1000];

describe('optimalMsdPoints', () => {
  for (const [x, row] of table) {
    it(`optimalMsdPoints(${x.toFixed(3)}, N) reproduces the §3 row for N = 20, 50, 100, 1000`, () => {
      row.forEach(([points, printed], i) => {
        const best = optimalMsdPoints(x, frames[i]);
        expect(best.points).toBe(points);
        // agree with the printed value to half a unit in its last printed digit, plus 1e-5 because
        // the table double-rounds one entry (x = −1/3, N = 100: exact 0.223497 printed 0.224)
        const decimals = printed.split('.')[1].length;
        expect(Math.abs(best.relativeSe - Number(printed))).toBeLessThanOrEqual(0.5 * 10 ** -decimals + 1e-5);
      });
    });
  }
  it('msdFitRelativeSe(10, 100, 8) is 0.4942', () => {
    // estimators.md §3 check table ("N = 100 frames, x = 10, p = 8")
    expect(msdFitRelativeSe(10, 100, 8)).toBeCloseTo(0.4942, 4);
  });
  it('optimalMsdPoints(x, N) is the minimum of msdFitRelativeSe over p', () => {
    // common practice, no source (definition of the optimum)
    const best = optimalMsdPoints(3, 60);
    for (let p = 2; p <= 32; p++) expect(msdFitRelativeSe(3, 60, p)).toBeGreaterThanOrEqual(best.relativeSe - 1e-15);
    expect(msdFitRelativeSe(3, 60, best.points)).toBeCloseTo(best.relativeSe, 14);
  });
  it('optimalMsdPoints returns the same answer from its memo and a fresh copy', () => {
    // purity: a caller mutating the result must not change later answers (common practice, no source)
    const first = optimalMsdPoints(0.37, 77);
    first.points = 99;
    expect(optimalMsdPoints(0.37, 77).points).not.toBe(99);
  });
  it('optimalMsdPoints never goes past N − 1 points or maxPoints', () => {
    // common practice, no source
    expect(optimalMsdPoints(1000, 6).points).toBeLessThanOrEqual(5);
    expect(optimalMsdPoints(100, 1000, 10).points).toBe(10);
  });
  it('optimalMsdPoints and msdFitRelativeSe reject bad N or p', () => {
    // bad-parameter policy (STYLE.md §7)
    expect(() => optimalMsdPoints(0, 2)).toThrow(RangeError);
    expect(() => optimalMsdPoints(0, 50, 1)).toThrow(RangeError);
    expect(() => msdFitRelativeSe(0, 50, 1)).toThrow(RangeError);
    expect(() => msdFitRelativeSe(0, 50, 50)).toThrow(RangeError);
  });
});
