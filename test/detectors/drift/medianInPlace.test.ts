import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { medianInPlace } from '../../../src/detectors/drift/medianInPlace.js';
import { Random } from '../../../src/stats/random.js';

// Reference: the median by a full sort (the definition; common practice, no source).
function sortedMedian(values: number[]): number {
  const s = [...values].sort((a, b) => a - b);
  const n = s.length;
  return n % 2 === 1 ? s[n >> 1] : 0.5 * (s[n / 2 - 1] + s[n / 2]);
}

describe('medianInPlace', () => {
  it('medianInPlace(Float64Array.of(5, 1, 4, 2), 4) is 3', () => {
    expect(medianInPlace(Float64Array.of(5, 1, 4, 2), 4)).toBe(3);
  });

  it('equals the sorted median for any finite input, with ties, using only the first n entries', () => {
    fc.assert(
      fc.property(fc.array(fc.double({ noNaN: true, min: -1e6, max: 1e6 }), { minLength: 1, maxLength: 50 }), fc.integer({ min: 0, max: 5 }), (list, extra) => {
        const buffer = new Float64Array(list.length + extra).fill(1e9);
        buffer.set(list);
        expect(medianInPlace(buffer, list.length) + 0).toBe(sortedMedian(list) + 0); // + 0: −0 and 0 are one median
      }),
      { numRuns: 2000 },
    );
  });

  it.each([601, 1000, 1001, 5000, 20_000])('equals the sorted median on %i normal steps and on heavily tied ones (the sampling branch)', (n) => {
    const random = new Random(n);
    const steps = Array.from({ length: n }, () => random.normal());
    expect(medianInPlace(Float64Array.from(steps), n)).toBe(sortedMedian(steps));
    const tied = Array.from({ length: n }, () => Math.round(3 * random.normal()) + 0); // + 0: no −0
    expect(medianInPlace(Float64Array.from(tied), n)).toBe(sortedMedian(tied));
    const sorted = Array.from({ length: n }, (_, i) => i);
    expect(medianInPlace(Float64Array.from(sorted.reverse()), n)).toBe(sortedMedian(sorted));
  });

  it('gives the same median with a window around a guess, whether the middle falls inside it, outside it or at its edge', () => {
    fc.assert(
      fc.property(
        fc.array(fc.double({ noNaN: true, noDefaultInfinity: true, min: -100, max: 100 }), { minLength: 1, maxLength: 60 }),
        fc.double({ noNaN: true, min: -120, max: 120 }),
        fc.double({ noNaN: true, min: 1e-9, max: 200 }),
        (list, centre, halfWidth) => {
          expect(medianInPlace(Float64Array.from(list), list.length, centre, halfWidth) + 0).toBe(sortedMedian(list) + 0);
        },
      ),
      { numRuns: 3000 },
    );
    // the drift detector's use: the mean step ± 4 standard errors, on 1000 normal steps with outliers
    const random = new Random(9);
    for (let trial = 0; trial < 50; trial++) {
      const steps = Array.from({ length: 1000 + (trial % 2) }, () => random.normal() + (random.uniform() < 0.05 ? 40 : 0));
      const mean = steps.reduce((a, b) => a + b, 0) / steps.length;
      const sd = Math.sqrt(steps.reduce((a, b) => a + (b - mean) ** 2, 0) / (steps.length - 1));
      expect(medianInPlace(Float64Array.from(steps), steps.length, mean, (4 * sd) / Math.sqrt(steps.length))).toBe(sortedMedian(steps));
    }
  });

  it('returns NaN for no entries', () => {
    expect(medianInPlace(new Float64Array(3), 0)).toBeNaN();
  });
});
