import { describe, expect, it } from 'vitest';
import { solveSparseAssignment } from '../../src/linking/solveSparseAssignment.js';
import { solveAssignment } from '../../src/linking/solveAssignment.js';
import { Random } from '../../src/stats/random.js';

/** Random sparse problem as CSR plus the equivalent dense matrix with Infinity. */
function randomSparse(random: Random, rows: number, columns: number, keep: number) {
  const dense = new Float64Array(rows * columns).fill(Infinity);
  const rowStart = new Int32Array(rows + 1);
  const column: number[] = [];
  const cost: number[] = [];
  for (let i = 0; i < rows; i++) {
    rowStart[i] = column.length;
    for (let j = 0; j < columns; j++) {
      if (random.uniform() >= keep) continue;
      const value = random.uniform() * 10 - 4;
      column.push(j);
      cost.push(value);
      dense[i * columns + j] = value;
    }
  }
  rowStart[rows] = column.length;
  return { rowStart, column: Int32Array.from(column), cost: Float64Array.from(cost), dense };
}

function summary(assignment: Int32Array, dense: Float64Array, columns: number): { pairs: number; total: number } {
  let pairs = 0;
  let total = 0;
  const seen = new Set<number>();
  assignment.forEach((j, i) => {
    if (j < 0) return;
    expect(seen.has(j)).toBe(false);
    seen.add(j);
    expect(dense[i * columns + j]).not.toBe(Infinity);
    pairs++;
    total += dense[i * columns + j];
  });
  return { pairs, total };
}

describe('solveSparseAssignment', () => {
  it('solveSparseAssignment() prefers two pairs to one cheaper pair (documentation example)', () => {
    // Worked by hand: {0→0, 1→1} costs 4 + 0 with two pairs; {0→1} costs 1 with one pair.
    const result = solveSparseAssignment(Int32Array.of(0, 2, 3), Int32Array.of(0, 1, 1), Float64Array.of(4, 1, 0), 2, 2);
    expect(Array.from(result)).toEqual([0, 1]);
  });

  it('solveSparseAssignment() handles empty rows, no rows and rejects bad input', () => {
    expect(Array.from(solveSparseAssignment(Int32Array.of(0, 0, 1), Int32Array.of(0), Float64Array.of(2), 2, 1))).toEqual([-1, 0]);
    expect(solveSparseAssignment(Int32Array.of(0), new Int32Array(0), new Float64Array(0), 0, 4).length).toBe(0);
    expect(() => solveSparseAssignment(Int32Array.of(0, 1), Int32Array.of(3), Float64Array.of(1), 1, 2)).toThrow(
      'solveSparseAssignment requires columns in range',
    );
    expect(() => solveSparseAssignment(Int32Array.of(0, 1), Int32Array.of(0), Float64Array.of(NaN), 1, 2)).toThrow(RangeError);
  });

  it('solveSparseAssignment() matches the dense solver on 500 seeded random sparse problems', () => {
    // Reference: solveAssignment, itself checked against munkres-js and exhaustive search.
    const random = new Random(2718);
    for (let trial = 0; trial < 500; trial++) {
      const rows = 1 + random.integer(12);
      const columns = 1 + random.integer(12);
      const problem = randomSparse(random, rows, columns, 0.15 + 0.5 * random.uniform());
      const sparse = summary(
        solveSparseAssignment(problem.rowStart, problem.column, problem.cost, rows, columns), problem.dense, columns,
      );
      const dense = summary(solveAssignment(problem.dense, rows, columns), problem.dense, columns);
      expect(sparse.pairs).toBe(dense.pairs);
      expect(sparse.total).toBeCloseTo(dense.total, 9);
    }
  });

  it('solveSparseAssignment() matches the dense solver on larger linking-like problems', () => {
    const random = new Random(161);
    for (let trial = 0; trial < 10; trial++) {
      const rows = 60 + random.integer(60);
      const columns = rows + random.integer(30);
      const problem = randomSparse(random, rows, columns, 0.05);
      const sparse = summary(
        solveSparseAssignment(problem.rowStart, problem.column, problem.cost, rows, columns), problem.dense, columns,
      );
      const dense = summary(solveAssignment(problem.dense, rows, columns), problem.dense, columns);
      expect(sparse.pairs).toBe(dense.pairs);
      expect(sparse.total).toBeCloseTo(dense.total, 8);
    }
  });
});
