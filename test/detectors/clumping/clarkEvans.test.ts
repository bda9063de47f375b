import { describe, expect, it } from 'vitest';
import { clarkEvans, nearestNeighbours, NearestNeighbourScratch } from '../../../src/detectors/clumping/clarkEvans.js';
import { clopperPearson } from '../../../src/stats/quantiles.js';
import { Random } from '../../../src/stats/random.js';

const unitSquare10 = { xMin: 0, xMax: 10, yMin: 0, yMax: 10 };

describe('nearestNeighbours', () => {
  it('nearestNeighbours(x, y) equals a brute-force search on random points', () => {
    // invariant: the kd-tree search must agree with the O(N²) definition (common practice, no source)
    const random = new Random(11);
    const n = 300;
    const x = new Float64Array(n), y = new Float64Array(n);
    for (let i = 0; i < n; i++) { x[i] = random.uniform() * 40; y[i] = random.uniform() * 25; }
    const scratch = new NearestNeighbourScratch();
    nearestNeighbours(x, y, n, 1000, scratch);
    for (let i = 0; i < n; i++) {
      let best = Infinity;
      for (let j = 0; j < n; j++) if (j !== i) best = Math.min(best, Math.hypot(x[j] - x[i], y[j] - y[i]));
      expect(scratch.distance[i]).toBeCloseTo(best, 12);
    }
  });

  it('nearestNeighbours(x, y) finds a far neighbour by growing the search radius', () => {
    const scratch = new NearestNeighbourScratch();
    nearestNeighbours(Float64Array.of(0, 3, 100), Float64Array.of(0, 4, 0), 3, 4, scratch);
    expect(scratch.distance[0]).toBe(5); // 3-4-5 triangle
    expect(scratch.distance[2]).toBeCloseTo(Math.hypot(97, 4), 12);
    expect(scratch.neighbour[2]).toBe(1);
  });
});

describe('clarkEvans', () => {
  it('clarkEvans(lattice) follows the Clark–Evans and Donnelly formulas by hand', () => {
    // Clark & Evans (1954) E = 0.5√(A/N), SE = 0.26136√A/N; Donnelly (1978) corrections as in
    // detectors.md §3a: 4 points, A = 4 µm², P = 8 µm, r̄ = 1 µm.
    const x = Float64Array.of(0.5, 1.5, 0.5, 1.5), y = Float64Array.of(0.5, 0.5, 1.5, 1.5);
    const field = { xMin: 0, xMax: 2, yMin: 0, yMax: 2 };
    const corrected = clarkEvans(x, y, 4, field)!;
    expect(corrected.meanDistance).toBe(1);
    expect(corrected.expected).toBeCloseTo(0.5 + (0.0514 + 0.041 / 2) * 2, 12);
    expect(corrected.standardError).toBeCloseTo(Math.sqrt((0.0703 * 4) / 16 + 0.037 * 8 * Math.sqrt(4 / 4 ** 5)), 12);
    const plain = clarkEvans(x, y, 4, field, { edgeCorrection: false })!;
    expect(plain.expected).toBeCloseTo(0.5, 12);
    expect(plain.standardError).toBeCloseTo((0.26136 * 2) / 4, 12);
    expect(plain.ratio).toBeCloseTo(2, 12);
  });

  it('clarkEvans() ignores points outside the field and needs two points', () => {
    expect(clarkEvans(Float64Array.of(1, 50), Float64Array.of(1, 50), 2, unitSquare10)).toBeUndefined();
    expect(clarkEvans(Float64Array.of(1, 2), Float64Array.of(1, 2), 2, { xMin: 0, xMax: 0, yMin: 0, yMax: 1 })).toBeUndefined();
    expect(clarkEvans(Float64Array.of(1, 2, 60), Float64Array.of(1, 1, 60), 3, unitSquare10)?.count).toBe(2);
  });

  it('clarkEvans(CSR) z is unbiased with the edge correction and biased by ≈ +0.8 without it', () => {
    // detectors.md §3a simulation figures [V]: corrected mean −0.01, SD 0.99, 1 % one-sided test
    // rejects ≈ 1.2 %; uncorrected bias +0.80 in a square window (Donnelly 1978 for the cause).
    const random = new Random(2024);
    const n = 100, reps = 1500;
    const x = new Float64Array(n), y = new Float64Array(n);
    const zc: number[] = [], zu: number[] = [];
    for (let k = 0; k < reps; k++) {
      for (let i = 0; i < n; i++) { x[i] = 10 * random.uniform(); y[i] = 10 * random.uniform(); }
      zc.push(clarkEvans(x, y, n, unitSquare10)!.z);
      zu.push(clarkEvans(x, y, n, unitSquare10, { edgeCorrection: false })!.z);
    }
    const mean = (v: number[]): number => v.reduce((a, b) => a + b, 0) / v.length;
    const sd = (v: number[]): number => Math.sqrt(mean(v.map((a) => (a - mean(v)) ** 2)));
    expect(Math.abs(mean(zc))).toBeLessThan(0.08); // SE of the mean ≈ 0.026
    expect(sd(zc)).toBeGreaterThan(0.92);
    expect(sd(zc)).toBeLessThan(1.06);
    expect(mean(zu)).toBeGreaterThan(0.6);
    expect(mean(zu)).toBeLessThan(1.05);
    // the 1 % one-sided test (z < −2.326) keeps its level: Clopper–Pearson interval holds 0.01
    const rejected = zc.filter((z) => z < -2.3263).length;
    const [low, high] = clopperPearson(rejected, reps);
    expect(low).toBeLessThanOrEqual(0.01);
    expect(high).toBeGreaterThanOrEqual(0.01);
  });

  it('clarkEvans(clustered) gives z far below 0', () => {
    // Clark & Evans (1954): R < 1 and z < 0 for aggregated patterns; here 50 tight pairs
    const random = new Random(3);
    const x = new Float64Array(100), y = new Float64Array(100);
    for (let i = 0; i < 50; i++) {
      x[2 * i] = 10 * random.uniform(); y[2 * i] = 10 * random.uniform();
      x[2 * i + 1] = Math.min(10, x[2 * i] + 0.05); y[2 * i + 1] = y[2 * i];
    }
    const result = clarkEvans(x, y, 100, unitSquare10)!;
    expect(result.ratio).toBeLessThan(0.5);
    expect(result.z).toBeLessThan(-8);
  });
});
