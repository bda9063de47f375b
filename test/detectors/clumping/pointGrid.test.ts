import { describe, expect, it } from 'vitest';
import { PointGrid } from '../../../src/detectors/clumping/pointGrid.js';
import { Random } from '../../../src/stats/random.js';

// Invariant: the grid's queries must agree with the O(N²) definitions (common practice, no source).
function points(n: number, width: number, height: number, seed: number) {
  const random = new Random(seed);
  const x = new Float64Array(n), y = new Float64Array(n);
  for (let i = 0; i < n; i++) { x[i] = random.uniform() * width; y[i] = random.uniform() * height; }
  return { x, y };
}

describe('PointGrid', () => {
  describe('#pairsWithin', () => {
    it('pairsWithin(x, y, i, r) lists every j > i with d ≤ r, in ascending j, as a brute-force search does', () => {
      const { x, y } = points(400, 50, 30, 5);
      const grid = new PointGrid();
      grid.build(x, y, 400, 1.5);
      let out = new Uint32Array(2);
      let total = 0;
      for (let i = 0; i < 400; i++) {
        let found = grid.pairsWithin(x, y, i, 1.5, out);
        if (found < 0) { out = new Uint32Array(-found); found = grid.pairsWithin(x, y, i, 1.5, out); }
        const expected: number[] = [];
        for (let j = i + 1; j < 400; j++) if ((x[j] - x[i]) ** 2 + (y[j] - y[i]) ** 2 <= 1.5 * 1.5) expected.push(j);
        expect(Array.from(out.subarray(0, found))).toEqual(expected);
        total += found;
      }
      expect(total).toBeGreaterThan(50); // the check saw real pairs
    });

    it('pairsWithin keeps r-sized cells valid when the cell count is capped (a sparse wide field)', () => {
      const x = Float64Array.of(0, 0.4, 5000), y = Float64Array.of(0, 0.3, 5000);
      const grid = new PointGrid();
      grid.build(x, y, 3, 0.5);
      expect(grid.columns * grid.rows).toBeLessThanOrEqual(16);
      const out = new Uint32Array(4);
      expect(grid.pairsWithin(x, y, 0, 0.5, out)).toBe(1);
      expect(out[0]).toBe(1);
      expect(grid.pairsWithin(x, y, 1, 0.5, out)).toBe(0);
    });
  });

  describe('#nearest', () => {
    it('nearest(x, y, i) equals a brute-force search on a clumped pattern', () => {
      const random = new Random(9);
      const n = 300;
      const x = new Float64Array(n), y = new Float64Array(n);
      for (let i = 0; i < n; i++) {
        const c = i % 3; // three tight clumps far apart, so rings must grow across empty cells
        x[i] = c * 80 + random.normal();
        y[i] = c * 20 + random.normal();
      }
      const grid = new PointGrid();
      grid.build(x, y, n, Math.sqrt((160 * 40) / n));
      const d2 = new Float64Array(1);
      for (let i = 0; i < n; i++) {
        const j = grid.nearest(x, y, i, d2);
        let best = Infinity;
        for (let k = 0; k < n; k++) if (k !== i) best = Math.min(best, (x[k] - x[i]) ** 2 + (y[k] - y[i]) ** 2);
        expect(d2[0]).toBe(best);
        expect((x[j] - x[i]) ** 2 + (y[j] - y[i]) ** 2).toBe(best);
      }
    });

    it('nearest returns −1 for a single point', () => {
      const grid = new PointGrid();
      grid.build(Float64Array.of(3), Float64Array.of(4), 1, 1);
      expect(grid.nearest(Float64Array.of(3), Float64Array.of(4), 0, new Float64Array(1))).toBe(-1);
    });
  });
  describe('#closePairs', () => {
    it('closePairs(count, r, out) after build(x, y, count, r) lists every pair i < j with d ≤ r, ascending, as a brute-force search does', () => {
      for (const seed of [1, 2, 3]) {
        const { x, y } = points(300, 40, 30, seed);
        const grid = new PointGrid();
        grid.build(x, y, 300, 1.5);
        let out = new Float64Array(4);
        let n = grid.closePairs(300, 1.5, out);
        if (n < 0) {
          out = new Float64Array(-n);
          n = grid.closePairs(300, 1.5, out);
        }
        const expected: number[] = [];
        for (let i = 0; i < 300; i++) {
          for (let j = i + 1; j < 300; j++) if ((x[i] - x[j]) ** 2 + (y[i] - y[j]) ** 2 <= 1.5 * 1.5) expected.push(i * 300 + j);
        }
        expect(Array.from(out.subarray(0, n))).toEqual(expected);
      }
    });
  });
});
