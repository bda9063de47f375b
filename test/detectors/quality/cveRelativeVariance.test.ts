import { describe, expect, it } from 'vitest';
import { cveRelativeVariance, minimumTrackSteps, pooledCveRelativeVariance } from '../../../src/detectors/quality/cveRelativeVariance.js';
import { binomialUpperTail } from '../../../src/detectors/quality/binomialUpperTail.js';

describe('cveRelativeVariance', () => {
  it('cveRelativeVariance(ε, N) is half the one-axis check values of estimators.md §2', () => {
    // Vestergaard, Blainey & Flyvbjerg 2014 variance; check values estimators.md §2 [C] (one axis; two axes halve it)
    expect(2 * cveRelativeVariance(-1 / 3, 100)).toBeCloseTo(0.049067, 6);
    expect(2 * cveRelativeVariance(1, 200)).toBeCloseTo(0.0604, 4);
    expect(2 * cveRelativeVariance(2 / 3, 50)).toBeCloseTo(0.19556, 5);
  });

  it('pooledCveRelativeVariance divides by the number of tracks', () => {
    // pooling independent tracks; common practice, no source
    expect(pooledCveRelativeVariance(0.5, 100, 10000)).toBeCloseTo(cveRelativeVariance(0.5, 100) / 100, 12);
  });
});

describe('minimumTrackSteps', () => {
  it('minimumTrackSteps(ε, p) reproduces the N_min table of detectors.md §6d', () => {
    // detectors.md §6d table [computed] from the Vestergaard et al. 2014 variance
    const table: [number, number[]][] = [[-1 / 3, [245, 62, 28]], [0, [301, 76, 34]], [1, [602, 152, 68]], [4, [2702, 677, 302]]];
    for (const [epsilon, row] of table) {
      expect([0.1, 0.2, 0.3].map((p) => minimumTrackSteps(epsilon, p))).toEqual(row);
    }
  });

  it('minimumTrackSteps rejects a precision <= 0', () => {
    expect(() => minimumTrackSteps(0, 0)).toThrow(RangeError);
  });
});

describe('binomialUpperTail', () => {
  it('binomialUpperTail(k, n, p) matches hand sums of the binomial pmf', () => {
    // P(X ≥ 3 | 10, 0.5) = 1 − (1 + 10 + 45)/1024 = 0.9453125 (arithmetic by hand)
    expect(binomialUpperTail(3, 10, 0.5)).toBeCloseTo(0.9453125, 10);
    // P(X ≥ 1 | 1000, 0.001) = 1 − 0.999^1000
    expect(binomialUpperTail(1, 1000, 0.001)).toBeCloseTo(1 - 0.999 ** 1000, 8);
    expect(binomialUpperTail(0, 5, 0.2)).toBe(1);
    expect(binomialUpperTail(6, 5, 0.2)).toBe(0);
  });
});
