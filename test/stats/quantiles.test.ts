import { describe, expect, it } from 'vitest';
import { chiSquareQuantile, clopperPearson, fQuantile, normalQuantile, studentTQuantile } from '../../src/stats/quantiles.js';

// Table values from standard statistical tables (e.g. NIST/SEMATECH e-Handbook of Statistical
// Methods, §1.3.6.7: critical values of the normal, t, chi-square and F distributions).
describe('quantiles', () => {
  it('normalQuantile(0.975) is 1.95996', () => {
    expect(normalQuantile(0.975)).toBeCloseTo(1.959964, 5);
  });
  it('studentTQuantile(0.975, 10) is 2.228', () => {
    expect(studentTQuantile(0.975, 10)).toBeCloseTo(2.228, 3);
  });
  it('chiSquareQuantile(0.95, 2) is 5.991', () => {
    expect(chiSquareQuantile(0.95, 2)).toBeCloseTo(5.991, 3);
  });
  it('fQuantile(0.95, 5, 10) is 3.326', () => {
    expect(fQuantile(0.95, 5, 10)).toBeCloseTo(3.326, 3);
  });
  it('clopperPearson(0, 10) has a lower bound of 0 and an upper of 0.3085', () => {
    // Clopper & Pearson 1934; the zero-successes upper bound is 1 − 0.025^(1/10) exactly.
    const [low, high] = clopperPearson(0, 10);
    expect(low).toBe(0);
    expect(high).toBeCloseTo(1 - 0.025 ** 0.1, 10);
  });
});
