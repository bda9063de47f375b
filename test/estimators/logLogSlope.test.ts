import { describe, expect, it } from 'vitest';
import { exposureAveragedPowerLaw } from '../../src/estimators/exposureAveragedPowerLaw.js';
import { logLogSlope } from '../../src/estimators/logLogSlope.js';

const lagsUpTo = (p: number): number[] => Array.from({ length: p }, (_, i) => i + 1);

// estimators.md §4 bias table [C]: exact expected MSD ∝ n + x, bare OLS log-log slope.
const biasRows: Array<[number, number, number, number]> = [
  [-1 / 3, 1.3219, 1.2336, 1.1447],
  [0, 1, 1, 1],
  [0.5, 0.737, 0.7895, 0.8551],
  [1, 0.585, 0.6566, 0.7539],
];

describe('logLogSlope', () => {
  for (const [x, two, four, ten] of biasRows) {
    it(`logLogSlope(n, n + ${x.toFixed(3)}) gives ${two}, ${four}, ${ten} over 2, 4, 10 points`, () => {
      const slope = (p: number) => logLogSlope(lagsUpTo(p), lagsUpTo(p).map((n) => n + x))!;
      expect(slope(2)).toBeCloseTo(two, 4);
      expect(slope(4)).toBeCloseTo(four, 4);
      expect(slope(10)).toBeCloseTo(ten, 4);
      // the 2-point value is log((2 + x)/(1 + x))/log 2 (estimators.md §4)
      expect(slope(2)).toBeCloseTo(Math.log((2 + x) / (1 + x)) / Math.log(2), 12);
    });
  }
  it('logLogSlope of a blurred power law (t_E = Δt) gives 0.9829, 1.3219, 1.6616 for α = 0.5, 1, 1.5', () => {
    // estimators.md §4: un-modelled blur makes subdiffusion look free (2-point estimate)
    const expected: Array<[number, number]> = [[0.5, 0.9829], [1, 1.3219], [1.5, 1.6616]];
    for (const [alpha, slope] of expected) {
      const msd = [1, 2].map((lag) => exposureAveragedPowerLaw(lag, alpha, 1));
      expect(logLogSlope([1, 2], msd)).toBeCloseTo(slope, 4);
    }
  });
  it('logLogSlope skips non-positive points and needs two', () => {
    // bad-input policy (STYLE.md §7)
    expect(logLogSlope([1, 2, 3], [2, Number.NaN, 6])).toBeCloseTo(1, 12);
    expect(logLogSlope([1, 2], [1, 0])).toBeUndefined();
    expect(logLogSlope([], [])).toBeUndefined();
  });
});
