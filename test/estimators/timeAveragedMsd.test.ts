import { describe, expect, it } from 'vitest';
import { timeAveragedMsd } from '../../src/estimators/timeAveragedMsd.js';

describe('timeAveragedMsd', () => {
  it('timeAveragedMsd([0, 1, 3, 6], 3) gives 14/3, 17, 36', () => {
    // estimators.md §1 check values (exact arithmetic: lag 1 steps 1, 2, 3 → (1 + 4 + 9)/3).
    const msd = timeAveragedMsd([0, 1, 3, 6], 3);
    expect(msd.length).toBe(3);
    expect(msd[0]).toBeCloseTo(14 / 3, 12);
    expect(msd[1]).toBeCloseTo(17, 12);
    expect(msd[2]).toBeCloseTo(36, 12);
  });
  it('timeAveragedMsd(positions) does not mutate its input', () => {
    // common practice, no source
    const positions = Object.freeze([0, 2, 1, 5, 4]);
    expect(Array.from(timeAveragedMsd(positions, 2))).toEqual([(4 + 1 + 16 + 1) / 4, (1 + 9 + 9) / 3]);
  });
  it('timeAveragedMsd(positions, maxLag) rejects lags outside [1, frames - 1]', () => {
    // bad-parameter policy (STYLE.md §7)
    expect(() => timeAveragedMsd([0, 1], 2)).toThrow(RangeError);
    expect(() => timeAveragedMsd([0, 1, 2], 0)).toThrow(RangeError);
    expect(() => timeAveragedMsd([0, 1, 2], 1.5)).toThrow(RangeError);
  });
});
