import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { boundColumns } from '../../web/src/boundColumns.js';

describe('boundColumns', () => {
  it('thins [0..4] to 3 rows by even stride, keeping first and newest', () => {
    expect(boundColumns([[0, 1, 2, 3, 4], [5, 6, 7, 8, 9]], 3)).toEqual([[0, 2, 4], [5, 7, 9]]);
  });

  it('drops rows with a non-finite x and turns non-finite y into null', () => {
    expect(boundColumns([[0, Number.NaN, 2], [1, 2, Number.POSITIVE_INFINITY]], 10)).toEqual([[0, 2], [1, null]]);
  });

  // uPlot needs x ascending (uPlot docs/README.md, "data"): a bounded series stays ascending
  it('never returns more than maxPoints rows, keeps x ascending and the newest row', () => {
    fc.assert(
      fc.property(fc.array(fc.double({ min: -1e6, max: 1e6, noNaN: true }), { minLength: 1, maxLength: 400 }), fc.integer({ min: 2, max: 50 }), (raw, max) => {
        const xs = [...raw].sort((a, b) => a - b);
        const [x, y] = boundColumns([xs, xs.map((v) => 2 * v)], max);
        expect(x.length).toBeLessThanOrEqual(max);
        expect(x.length).toBe(Math.min(max, xs.length));
        for (let i = 1; i < x.length; i++) expect(x[i]!).toBeGreaterThanOrEqual(x[i - 1]!);
        expect(x.at(-1)).toBe(xs.at(-1));
        expect(y.at(-1)).toBe(2 * xs.at(-1)!);
      }),
      { seed: 5, numRuns: 200 },
    );
  });

  it('rejects a bound below 2 with RangeError', () => {
    expect(() => boundColumns([[1]], 1)).toThrow(RangeError);
  });
});
