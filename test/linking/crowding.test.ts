import { describe, expect, it } from 'vitest';
import { crowding } from '../../src/linking/crowding.js';
import { greedyConfusionBound } from '../../src/linking/greedyConfusionBound.js';
import { Random } from '../../src/stats/random.js';

describe('crowding', () => {
  it('crowding(density, meanSquaredStep) is ρ⟨s²⟩ for the field of the worked example', () => {
    // detectors.md §5 worked example [D]: 100 particles in a 100 × 100 µm field, ⟨s²⟩ = 0.066 µm²
    // (the 4DΔt + 4σ² of its §1 example) gives ξ = 6.6e-4.
    expect(crowding(100 / (100 * 100), 0.066)).toBeCloseTo(6.6e-4, 12);
  });
  it('crowding() is 0 for an empty field and undefined without an estimate', () => {
    expect(crowding(0, 0.05)).toBe(0);
    expect(crowding(NaN, 0.05)).toBeUndefined();
    expect(crowding(0.01, -1)).toBeUndefined();
    expect(crowding(Infinity, 0.05)).toBeUndefined();
  });
});

describe('greedyConfusionBound', () => {
  it('greedyConfusionBound(ξ) matches the P_NN formula column of the table', () => {
    // detectors.md §5 table, column "P_NN formula" (πξ/(1 + πξ), derived [D]), printed to 3 decimals.
    // Tolerance 0.001: the printed 0.031 at ξ = 0.01 is 0.03046 rounded up (a rounding slip there).
    const table: [number, number][] = [[0.003, 0.009], [0.01, 0.031], [0.03, 0.086], [0.1, 0.239], [0.3, 0.485]];
    for (const [xi, expected] of table) expect(Math.abs(greedyConfusionBound(xi)! - expected)).toBeLessThanOrEqual(0.001);
  });
  it('greedyConfusionBound() is 0 at ξ = 0, rises towards 1 and rejects bad ξ', () => {
    expect(greedyConfusionBound(0)).toBe(0);
    expect(greedyConfusionBound(1e6)!).toBeGreaterThan(0.999);
    expect(greedyConfusionBound(-0.1)).toBeUndefined();
    expect(greedyConfusionBound(NaN)).toBeUndefined();
  });
  it('greedyConfusionBound(0.1) agrees with a seeded Poisson-field simulation of the nearest-neighbour rule', () => {
    // Independent check of the derivation in detectors.md §5 [D, V]: a true 2-D Gaussian step
    // (⟨s²⟩ = 1 µm²) among a Poisson field of density ρ = 0.1 µm⁻²; count how often another point
    // lies nearer to the start than the true successor.
    const random = new Random(314);
    const density = 0.1;
    const half = 10; // µm: the square [−10, 10]² holds every point that could be nearer
    const trials = 20000;
    let confused = 0;
    for (let trial = 0; trial < trials; trial++) {
      const sx = random.normal() * Math.SQRT1_2;
      const sy = random.normal() * Math.SQRT1_2;
      const trueSquared = sx * sx + sy * sy;
      const others = random.poisson(density * 4 * half * half);
      for (let k = 0; k < others; k++) {
        const ox = (2 * random.uniform() - 1) * half;
        const oy = (2 * random.uniform() - 1) * half;
        if (ox * ox + oy * oy < trueSquared) {
          confused++;
          break;
        }
      }
    }
    const simulated = confused / trials;
    const standardError = Math.sqrt((simulated * (1 - simulated)) / trials);
    expect(Math.abs(simulated - greedyConfusionBound(0.1)!)).toBeLessThan(4 * standardError);
  });
});
