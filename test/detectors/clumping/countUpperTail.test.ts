import { describe, expect, it } from 'vitest';
import { countUpperTail } from '../../../src/detectors/clumping/countUpperTail.js';

describe('countUpperTail', () => {
  it('countUpperTail(k, μ) equals the Poisson sum 1 − Σ_{j<k} e^{−μ} μ^j/j!', () => {
    // definition of the Poisson distribution (Abramowitz & Stegun 1964, 26.4.21)
    for (const mu of [0.01, 0.7, 3.2]) {
      for (const k of [1, 2, 5]) {
        let below = 0, term = Math.exp(-mu);
        for (let j = 0; j < k; j++) { below += term; term *= mu / (j + 1); }
        expect(countUpperTail(k, mu)).toBeCloseTo(1 - below, 10);
      }
    }
    expect(countUpperTail(0, 2)).toBe(1);
  });

  it('countUpperTail(k, p, n) equals the binomial sum; 3 of 10 at p = 0.5 gives 0.9453', () => {
    // binomial distribution by direct summation (Abramowitz & Stegun 1964, 26.1.20): 1 − 56/1024
    expect(countUpperTail(3, 0.5, 10)).toBeCloseTo(1 - 56 / 1024, 10);
    expect(countUpperTail(11, 0.5, 10)).toBe(0);
    expect(countUpperTail(2, 0, 10)).toBe(0);
  });
});
