import { describe, expect, it } from 'vitest';
import { confidenceInterval } from '../../src/estimators/confidenceInterval.js';

describe('confidenceInterval', () => {
  it('confidenceInterval(1, 0.1) is 1 ± 1.959964·0.1', () => {
    // z_0.975 = 1.959964 (standard normal table, NIST/SEMATECH e-Handbook of Statistical Methods; section number from memory)
    const [low, high] = confidenceInterval(1, 0.1);
    expect(low).toBeCloseTo(1 - 0.1959964, 6);
    expect(high).toBeCloseTo(1 + 0.1959964, 6);
  });
  it('confidenceInterval(0, 1, 10) uses t_0.975(10) = 2.228', () => {
    // Student t table, t_0.975 with 10 df = 2.228 (NIST/SEMATECH e-Handbook of Statistical Methods, t table; from memory)
    const [low, high] = confidenceInterval(0, 1, 10);
    expect(high).toBeCloseTo(2.228, 3);
    expect(low).toBeCloseTo(-2.228, 3);
  });
  it('confidenceInterval(value, 0) is the point itself and NaN se propagates', () => {
    // common practice, no source
    expect(confidenceInterval(3, 0)).toEqual([3, 3]);
    expect(confidenceInterval(3, Number.NaN).every(Number.isNaN)).toBe(true);
  });
  it('confidenceInterval rejects a negative se or df ≤ 0', () => {
    // bad-parameter policy (STYLE.md §7)
    expect(() => confidenceInterval(1, -1)).toThrow(RangeError);
    expect(() => confidenceInterval(1, 1, 0)).toThrow(RangeError);
  });
});
