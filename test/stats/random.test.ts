import { describe, expect, it } from 'vitest';
import { Random } from '../../src/stats/random.js';

describe('Random', () => {
  it('repeats its sequence for the same seed', () => {
    const a = new Random(7);
    const b = new Random(7);
    for (let i = 0; i < 100; i++) expect(a.uniform()).toBe(b.uniform());
  });
  it('normal() has mean 0 and variance 1 within Monte Carlo error', () => {
    // common practice, no source: a standard normal has mean 0 and variance 1.
    const random = new Random(11);
    const n = 200_000;
    let sum = 0;
    let sumSq = 0;
    for (let i = 0; i < n; i++) {
      const z = random.normal();
      sum += z;
      sumSq += z * z;
    }
    const mean = sum / n;
    expect(Math.abs(mean)).toBeLessThan(4 / Math.sqrt(n));
    expect(Math.abs(sumSq / n - mean * mean - 1)).toBeLessThan(4 * Math.sqrt(2 / n));
  });
  it('uniform() stays in [0, 1)', () => {
    const random = new Random(3);
    for (let i = 0; i < 10_000; i++) {
      const u = random.uniform();
      expect(u >= 0 && u < 1).toBe(true);
    }
  });
});
