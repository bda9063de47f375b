import { describe, expect, it } from 'vitest';
import computeMunkres from 'munkres-js';
import { solveAssignment } from '../../src/linking/solveAssignment.js';
import { Random } from '../../src/stats/random.js';

/** Total cost of an assignment, or NaN when it is not a valid partial permutation. */
function totalOf(cost: Float64Array, n: number, m: number, assignment: Int32Array): number {
  const usedColumns = new Set<number>();
  let total = 0;
  for (let i = 0; i < n; i++) {
    const j = assignment[i];
    if (j === -1) continue;
    if (j < 0 || j >= m || usedColumns.has(j)) return NaN;
    usedColumns.add(j);
    total += cost[i * m + j];
  }
  return total;
}

/** Exhaustive reference: best (most finite pairs, then least total) over all partial matchings. */
function bruteForce(cost: Float64Array, n: number, m: number): { pairs: number; total: number } {
  let best = { pairs: -1, total: Infinity };
  const usedColumns = new Uint8Array(m);
  const visit = (row: number, pairs: number, total: number): void => {
    if (row === n) {
      if (pairs > best.pairs || (pairs === best.pairs && total < best.total - 1e-12)) best = { pairs, total };
      return;
    }
    visit(row + 1, pairs, total); // leave the row unassigned
    for (let j = 0; j < m; j++) {
      const value = cost[row * m + j];
      if (usedColumns[j] === 1 || value === Infinity) continue;
      usedColumns[j] = 1;
      visit(row + 1, pairs + 1, total + value);
      usedColumns[j] = 0;
    }
  };
  visit(0, 0, 0);
  return best;
}

function toRows(cost: Float64Array, n: number, m: number): number[][] {
  const rows: number[][] = [];
  for (let i = 0; i < n; i++) rows.push(Array.from(cost.subarray(i * m, (i + 1) * m)));
  return rows;
}

describe('solveAssignment', () => {
  it('solveAssignment(cost, 3, 3) finds the optimum of the munkres-js documentation example', () => {
    // munkres-js (Apache-2.0/BSD), munkres.js module documentation: optimal total 12.
    const cost = Float64Array.of(5, 9, 1, 10, 3, 2, 8, 7, 4);
    const assignment = solveAssignment(cost, 3, 3);
    expect(totalOf(cost, 3, 3, assignment)).toBe(12);
  });

  it('solveAssignment(cost, 2, 3) leaves one column free in a wide matrix', () => {
    // Worked by hand: the six assignments cost 5, 7, 4, 8, 5, 6 (row 0 → column 1, row 1 → column 0 wins).
    const cost = Float64Array.of(1, 2, 3, 2, 4, 6);
    expect(Array.from(solveAssignment(cost, 2, 3))).toEqual([1, 0]);
  });

  it('solveAssignment(cost, 3, 2) leaves one row unassigned in a tall matrix', () => {
    // Worked by hand: columns {0, 1} go to rows (0, 2) for 1 + 1 = 2; every other choice costs more.
    const cost = Float64Array.of(1, 5, 4, 4, 6, 1);
    expect(Array.from(solveAssignment(cost, 3, 2))).toEqual([0, -1, 1]);
  });

  it('solveAssignment() never chooses an Infinity entry and reports −1 instead', () => {
    // Worked by hand: row 1 can only take column 0, which forces row 0 onto column 1.
    const cost = Float64Array.of(1, 10, 2, Infinity);
    expect(Array.from(solveAssignment(cost, 2, 2))).toEqual([1, 0]);
    // A row with only forbidden entries stays unassigned; all-forbidden gives all −1.
    expect(Array.from(solveAssignment(Float64Array.of(1, Infinity), 2, 1))).toEqual([0, -1]);
    expect(Array.from(solveAssignment(Float64Array.of(Infinity, Infinity), 1, 2))).toEqual([-1]);
  });

  it('solveAssignment() prefers more finite pairs over a lower total', () => {
    // Worked by hand: pairing row 0 → 1 and row 1 → 0 (cost 200) beats one pair of cost 1.
    const cost = Float64Array.of(1, 100, 100, Infinity);
    expect(Array.from(solveAssignment(cost, 2, 2))).toEqual([1, 0]);
  });

  it('solveAssignment() handles empty sizes and negative costs', () => {
    expect(solveAssignment(new Float64Array(0), 0, 3).length).toBe(0);
    expect(Array.from(solveAssignment(new Float64Array(0), 2, 0))).toEqual([-1, -1]);
    // Worked by hand: −5 + −4 = −9 beats −3 + −1 = −4.
    expect(Array.from(solveAssignment(Float64Array.of(-5, -3, -1, -4), 2, 2))).toEqual([0, 1]);
  });

  it('solveAssignment() rejects bad sizes and NaN costs with RangeError', () => {
    expect(() => solveAssignment(new Float64Array(3), 2, 2)).toThrow(RangeError);
    expect(() => solveAssignment(new Float64Array(4), -1, 2)).toThrow('solveAssignment requires n to be a non-negative integer');
    expect(() => solveAssignment(new Float64Array(4), 2, 1.5)).toThrow('solveAssignment requires m to be a non-negative integer');
    expect(() => solveAssignment(Float64Array.of(1, NaN), 1, 2)).toThrow('solveAssignment requires costs finite or +Infinity');
    expect(() => solveAssignment(Float64Array.of(1, -Infinity), 1, 2)).toThrow(RangeError);
  });

  it('solveAssignment() does not mutate the cost matrix', () => {
    const cost = Float64Array.of(3, 1, 2, 7, 4, Infinity);
    const copy = Float64Array.from(cost);
    solveAssignment(cost, 2, 3);
    expect(Array.from(cost)).toEqual(Array.from(copy));
  });

  it('solveAssignment() reaches the munkres-js optimum on 400 seeded random rectangular matrices', () => {
    // Reference library: munkres-js 1.2.2 (independent Kuhn–Munkres implementation, pads with 0).
    const random = new Random(20260101);
    for (let trial = 0; trial < 400; trial++) {
      const n = 1 + random.integer(9);
      const m = 1 + random.integer(9);
      const cost = new Float64Array(n * m);
      const integerCosts = trial % 2 === 0; // ties are common with small integers
      for (let index = 0; index < n * m; index++) {
        cost[index] = integerCosts ? random.integer(10) : random.uniform() * 100 - 20;
      }
      const assignment = solveAssignment(cost, n, m);
      const pairs = computeMunkres(toRows(cost, n, m));
      let reference = 0;
      for (const [row, column] of pairs) if (row < n && column < m) reference += cost[row * m + column];
      const assigned = assignment.reduce((sum, j) => sum + (j >= 0 ? 1 : 0), 0);
      expect(assigned).toBe(Math.min(n, m));
      expect(totalOf(cost, n, m, assignment)).toBeCloseTo(reference, 9);
    }
  });

  it('solveAssignment() matches exhaustive search on 300 seeded sparse matrices with Infinity', () => {
    // Reference: exhaustive enumeration of all partial matchings (the problem's definition).
    const random = new Random(77);
    for (let trial = 0; trial < 300; trial++) {
      const n = 1 + random.integer(6);
      const m = 1 + random.integer(6);
      const cost = new Float64Array(n * m);
      for (let index = 0; index < n * m; index++) {
        cost[index] = random.uniform() < 0.5 ? Infinity : random.uniform() * 10 - 3;
      }
      const assignment = solveAssignment(cost, n, m);
      const reference = bruteForce(cost, n, m);
      const assigned = assignment.reduce((sum, j) => sum + (j >= 0 ? 1 : 0), 0);
      expect(assigned).toBe(reference.pairs);
      expect(totalOf(cost, n, m, assignment)).toBeCloseTo(reference.total, 9);
    }
  });
});
