import { describe, expect, it } from 'vitest';
import { chooseEstimator } from '../../src/estimators/chooseEstimator.js';

// estimators.md §2 table "When the CVE is (not) optimal" [C]: Var(D̂)/D², 1 axis, N = 100
// displacements (101 frames): CVE, and MSD-OLS at the best p.
const rows: Array<[number, number, number, number]> = [
  [0, 0.0604, 0.0608, 2],
  [0.1, 0.0647, 0.0651, 2],
  [0.5, 0.0859, 0.0829, 3],
  [1, 0.1216, 0.097, 3],
  [2, 0.2236, 0.1219, 4],
  [10, 2.508, 0.2416, 8],
];

describe('chooseEstimator', () => {
  for (const [x, cve, msd, points] of rows) {
    it(`chooseEstimator(${x}, 101) reproduces the §2 variances ${cve} (CVE) and ${msd} (MSD, p = ${points})`, () => {
      const choice = chooseEstimator(x, 101);
      expect(choice.cveRelativeSe ** 2).toBeCloseTo(cve, cve > 1 ? 3 : 4);
      expect(choice.msdFitRelativeSe ** 2).toBeCloseTo(msd, 4);
      // Selection rule: the smaller variance wins (CVE for x ≲ 0.5, estimators.md §2 conclusion)
      expect(choice.name).toBe(cve <= msd ? 'cve' : 'msd-fit');
      if (choice.name === 'msd-fit') expect(choice.points).toBe(points);
    });
  }
  it('chooseEstimator(x, N).reason states x and both relative SEs', () => {
    // report wording (jostle's own)
    expect(chooseEstimator(10, 101).reason).toBe('x = 10: MSD fit over 8 points (rel. SE 0.49) beats CVE (1.6)');
    expect(chooseEstimator(0, 101).reason).toBe('x = 0: CVE (rel. SE 0.25) beats MSD fit over 2 points (0.25)');
  });
  it('chooseEstimator rejects a non-finite x or N < 3', () => {
    // bad-parameter policy (STYLE.md §7)
    expect(() => chooseEstimator(Number.NaN, 100)).toThrow(RangeError);
    expect(() => chooseEstimator(0, 2)).toThrow(RangeError);
  });
});
