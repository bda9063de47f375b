import { describe, expect, it } from 'vitest';
import { qianRelativeVariance } from '../../src/estimators/qianRelativeVariance.js';

describe('qianRelativeVariance', () => {
  it('qianRelativeVariance(1, N, 2) is exactly 1/K with K = N − 1', () => {
    // Qian, Sheetz & Elson 1991; estimators.md §3 check table
    for (const framesN of [5, 20, 101]) expect(qianRelativeVariance(1, framesN, 2)).toBeCloseTo(1 / (framesN - 1), 14);
  });
  it('qianRelativeVariance(n, 50, 1) gives 0.0408163, 0.0620660, 0.1471605, 0.314375, 0.742222', () => {
    // estimators.md §3 check table (1-D, N_frames = 50)
    const expected = [0.0408163, 0.062066, 0.1471605, 0.314375, 0.742222];
    [1, 2, 5, 10, 20].forEach((n, i) => expect(qianRelativeVariance(n, 50, 1)).toBeCloseTo(expected[i], 6));
  });
  it('qianRelativeVariance(n, N, 2) ≈ (2n² + 1)/(3nK) for n ≪ K', () => {
    // estimators.md §3, the small-lag form of Qian, Sheetz & Elson 1991
    const value = qianRelativeVariance(3, 10_003, 2);
    expect(value / ((2 * 9 + 1) / (3 * 3 * 10_000)) - 1).toBeLessThan(1e-3);
  });
  it('qianRelativeVariance is continuous across n = K and scales as 2/d', () => {
    // common practice, no source: the two branches agree at n = K; d independent axes average
    const framesN = 40;
    const atK = qianRelativeVariance(20, framesN, 2);
    const k = 20;
    const n = 20;
    expect(1 + (k ** 3 - 4 * n * k ** 2 + 4 * n - k) / (6 * n * n * k)).toBeCloseTo(atK, 12);
    expect(qianRelativeVariance(7, framesN, 3)).toBeCloseTo((qianRelativeVariance(7, framesN, 2) * 2) / 3, 14);
  });
  it('qianRelativeVariance rejects a lag outside [1, N − 1] or dims outside 1..3', () => {
    // bad-parameter policy (STYLE.md §7)
    expect(() => qianRelativeVariance(0, 10, 2)).toThrow(RangeError);
    expect(() => qianRelativeVariance(10, 10, 2)).toThrow(RangeError);
    expect(() => qianRelativeVariance(1, 10, 4)).toThrow(RangeError);
  });
});
