import { describe, expect, it } from 'vitest';
import { brentMinimum } from '../../src/estimators/brentMinimum.js';
import { Random } from '../../src/stats/random.js';

// Brent's method (Brent 1973, ch. 5) against analytic minima, and against a plain golden-section
// search written here as a second, independent implementation.

/** Golden-section search on [low, high] down to a bracket of `width` (the reference). */
function goldenSection(f: (x: number) => number, low: number, high: number, width = 1e-9): { x: number; evaluations: number } {
  const r = (Math.sqrt(5) - 1) / 2;
  let c = high - r * (high - low);
  let d = low + r * (high - low);
  let fc = f(c);
  let fd = f(d);
  let evaluations = 2;
  while (high - low > width) {
    if (fc < fd) {
      high = d;
      d = c;
      fd = fc;
      c = high - r * (high - low);
      fc = f(c);
    } else {
      low = c;
      c = d;
      fc = fd;
      d = low + r * (high - low);
      fd = f(d);
    }
    evaluations++;
  }
  return { x: (low + high) / 2, evaluations };
}

describe('brentMinimum', () => {
  it('finds analytic minima: a parabola, cos on [0, 2π], and a kink', () => {
    // analytic: (x − 0.3)² is least at 0.3; cos at π; |x − 0.7| at 0.7
    const parabola = brentMinimum((x) => (x - 0.3) ** 2, 0, 1);
    expect(parabola.x).toBeCloseTo(0.3, 7);
    expect(parabola.evaluations).toBeLessThan(10);
    const cosine = brentMinimum(Math.cos, 0, 2 * Math.PI);
    expect(cosine.x).toBeCloseTo(Math.PI, 7);
    expect(cosine.fx).toBeCloseTo(-1, 12);
    // no parabola helps at a kink: the golden-section steps still close in on it
    const kink = brentMinimum((x) => Math.abs(x - 0.7), 0, 1);
    expect(kink.x).toBeCloseTo(0.7, 7);
  });

  it('agrees with golden section on random smooth unimodal functions, in fewer evaluations', () => {
    const rng = new Random(20261202);
    const random = (): number => rng.uniform();
    for (let trial = 0; trial < 50; trial++) {
      const centre = 0.05 + 1.9 * random();
      const power = 2 + 2 * random();
      const tilt = random();
      // unimodal on [0.05, 2]: |x − c|^p plus a small convex term
      const f = (x: number): number => Math.abs(x - centre) ** power + tilt * (x - centre) ** 2 + Math.exp(0.1 * (x - centre)) * 1e-3;
      const brent = brentMinimum(f, 0.05, 2);
      const golden = goldenSection(f, 0.05, 2);
      expect(Math.abs(brent.x - golden.x)).toBeLessThan(1e-5);
      expect(f(brent.x)).toBeLessThanOrEqual(f(golden.x) + 1e-12);
      expect(brent.evaluations).toBeLessThan(golden.evaluations);
    }
  });

  it('steps away from non-finite values and stays inside the interval', () => {
    const seen: number[] = [];
    const result = brentMinimum((x) => {
      seen.push(x);
      return x < 0.2 ? Number.NaN : (x - 0.5) ** 2;
    }, 0, 1);
    expect(result.x).toBeCloseTo(0.5, 7);
    expect(seen.every((x) => x > 0 && x < 1)).toBe(true);
    // a minimum at the edge: the result approaches it without evaluating it
    const edge = brentMinimum((x) => x, 0, 1);
    expect(edge.x).toBeGreaterThan(0);
    expect(edge.x).toBeLessThan(1e-7);
  });

  it('rejects an empty interval and zero tolerances', () => {
    expect(() => brentMinimum((x) => x, 1, 1)).toThrow(RangeError);
    expect(() => brentMinimum((x) => x, 0, Number.NaN)).toThrow(RangeError);
    expect(() => brentMinimum((x) => x, 0, 1, 0, 0)).toThrow(RangeError);
  });
});
