import { describe, expect, it } from 'vitest';
import { siegmundArl } from '../../../src/detectors/drift/siegmundArl.js';
import { siegmundThreshold } from '../../../src/detectors/drift/siegmundThreshold.js';
import { PageCusum } from '../../../src/detectors/drift/pageCusum.js';
import { Random } from '../../../src/stats/random.js';

describe('siegmundArl', () => {
  it('siegmundArl(0, 0.5, h) gives ARL0 338 at h = 4 and 938 at h = 5', () => {
    // Siegmund (1985) approximation; check values detectors.md §1 [V]
    expect(siegmundArl(0, 0.5, 4)).toBeCloseTo(338, 0);
    expect(siegmundArl(0, 0.5, 5)).toBeCloseTo(938, 0);
  });

  it('siegmundArl(1, 0.5, h) gives ARL1 8.3 at h = 4 and 10.3 at h = 5', () => {
    // Siegmund (1985) approximation; check values detectors.md §1 [V]
    expect(siegmundArl(1, 0.5, 4)).toBeCloseTo(8.3, 1);
    expect(siegmundArl(1, 0.5, 5)).toBeCloseTo(10.3, 1);
  });

  it('siegmundArl(mu, k, h) is continuous through mu = k (limit (h + 1.166)²)', () => {
    // limit of the formula as Δ → 0, derived; common practice, no source
    const b = 5 + 1.166;
    expect(siegmundArl(0.5, 0.5, 5)).toBeCloseTo(b * b, 6);
    expect(siegmundArl(0.5 + 1e-7, 0.5, 5)).toBeCloseTo(b * b, 3);
  });

  it('siegmundArl rejects negative k or h with a RangeError', () => {
    expect(() => siegmundArl(0, -1, 4)).toThrow(RangeError);
    expect(() => siegmundArl(0, 0.5, -1)).toThrow(RangeError);
  });
});

describe('siegmundThreshold', () => {
  it('siegmundThreshold(0.5, arl0) inverts the check values 338 → 4 and 938 → 5', () => {
    // detectors.md §1 [V] check values, inverted
    expect(siegmundThreshold(0.5, siegmundArl(0, 0.5, 4))).toBeCloseTo(4, 6);
    expect(siegmundThreshold(0.5, 938.2224)).toBeCloseTo(5, 4);
  });

  it('siegmundThreshold(k, arl0) round-trips for small k and large ARL0', () => {
    // round trip of the bisection; common practice, no source
    for (const k of [0.05, 0.127, 0.281, 1.5]) {
      const h = siegmundThreshold(k, 2e6);
      expect(siegmundArl(0, k, h) / 2e6).toBeCloseTo(1, 6);
    }
  });

  it('siegmundThreshold rejects k <= 0 and arl0 <= 1', () => {
    expect(() => siegmundThreshold(0, 100)).toThrow(RangeError);
    expect(() => siegmundThreshold(0.5, 1)).toThrow(RangeError);
  });
});

describe('PageCusum (own Monte Carlo against Siegmund)', () => {
  function meanRunLength(k: number, h: number, mu: number, runs: number, seed: number): number {
    const random = new Random(seed);
    let total = 0;
    for (let r = 0; r < runs; r++) {
      const chart = new PageCusum(k, h);
      let n = 0;
      for (;;) {
        n++;
        if (chart.push(mu + random.normal())) break;
      }
      total += n;
    }
    return total / runs;
  }

  it('#push: ARL0 at k = 0.5, h = 4 is within 10 % of Siegmund (MC 320 in detectors.md §1)', () => {
    // detectors.md §1 [V]: Monte Carlo 320 against Siegmund 338; SE of our mean ≈ 320/√1500 ≈ 2.6 %
    const arl = meanRunLength(0.5, 4, 0, 1500, 11);
    expect(arl).toBeGreaterThan(0.9 * 320);
    expect(arl).toBeLessThan(1.1 * 338);
  });

  it('#push: ARL1 at mu = 1, k = 0.5, h = 5 is within 5 % of 10.5 (detectors.md §1 MC)', () => {
    // detectors.md §1 [V]: Monte Carlo 10.5, Siegmund 10.3
    const arl = meanRunLength(0.5, 5, 1, 4000, 12);
    expect(arl).toBeGreaterThan(10.5 * 0.95);
    expect(arl).toBeLessThan(10.5 * 1.05);
  });

  it('#push signals and restarts at 0, recording the pre-restart value', () => {
    // Page (1954) recursion, worked by hand
    const chart = new PageCusum(0.5, 4);
    expect(chart.push(3)).toBe(false);
    expect(chart.value).toBeCloseTo(2.5, 12);
    expect(chart.push(2.5)).toBe(true);
    expect(chart.lastSignalValue).toBeCloseTo(4.5, 12);
    expect(chart.value).toBe(0);
    expect(chart.push(-3)).toBe(false);
    expect(chart.lastZero).toBe(3);
  });
});
