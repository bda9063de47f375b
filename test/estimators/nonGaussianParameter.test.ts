import { describe, expect, it } from 'vitest';
import { nonGaussianParameter } from '../../src/estimators/nonGaussianParameter.js';
import { Random } from '../../src/stats/random.js';
import { meanAndVariance, monteCarlo } from './simulateDiffusion.js';

/** α̂2 of M independent d-dimensional Gaussian displacements with per-axis variance drawn per displacement. */
function sampleAlpha2(random: Random, count: number, dims: number, variance: () => number) {
  let sumSquares = 0;
  let sumFourth = 0;
  for (let i = 0; i < count; i++) {
    const sd = Math.sqrt(variance());
    let r2 = 0;
    for (let axis = 0; axis < dims; axis++) r2 += (sd * random.normal()) ** 2;
    sumSquares += r2;
    sumFourth += r2 * r2;
  }
  return nonGaussianParameter(sumSquares, sumFourth, count, dims)!;
}

describe('nonGaussianParameter', () => {
  it('nonGaussianParameter(4, 16, 2, 2) is 0 with SE 1/√2', () => {
    // Rahman 1964 definition α2 = d⟨Δr⁴⟩/((d + 2)⟨Δr²⟩²) − 1, worked by hand: ⟨Δr²⟩ = 2, ⟨Δr⁴⟩ = 8
    const estimate = nonGaussianParameter(4, 16, 2, 2)!;
    expect(estimate.value).toBeCloseTo(0, 14);
    expect(estimate.se).toBeCloseTo(Math.SQRT1_2, 14);
  });
  it('nonGaussianParameter is 0 in expectation for Gaussian displacements (d = 2, M = 200), SD ≈ 1/√M', monteCarlo, () => {
    // detectors.md §6b: null α2 = 0, SE ≈ 1/√M, bias ≈ −1/M; its simulation gave SD 0.069 vs 0.071 at M = 200.
    const random = new Random(1964);
    const values = new Float64Array(2000);
    let se = 0;
    for (let i = 0; i < values.length; i++) {
      const estimate = sampleAlpha2(random, 200, 2, () => 0.3);
      values[i] = estimate.value;
      se = estimate.se;
    }
    const { mean, variance } = meanAndVariance(values);
    expect(se).toBeCloseTo(1 / Math.sqrt(200), 12);
    expect(Math.abs(mean + 1 / 200)).toBeLessThan(4 * Math.sqrt(variance / values.length));
    expect(Math.abs(Math.sqrt(variance) / se - 1)).toBeLessThan(0.1);
  });
  it('nonGaussianParameter(…, dims = 1) has SE √(8/3)/√M, matching simulation', monteCarlo, () => {
    // delta-method SE 8/(d(d+2)M) (our derivation, reduces to detectors.md §6b at d = 2), checked by MC
    const random = new Random(31);
    const values = new Float64Array(2000);
    let se = 0;
    for (let i = 0; i < values.length; i++) {
      const estimate = sampleAlpha2(random, 500, 1, () => 1);
      values[i] = estimate.value;
      se = estimate.se;
    }
    expect(se).toBeCloseTo(Math.sqrt(8 / 3 / 500), 12);
    expect(Math.abs(Math.sqrt(meanAndVariance(values).variance) / se - 1)).toBeLessThan(0.12);
  });
  it('nonGaussianParameter gives CV²(D) for a population with heterogeneous D', monteCarlo, () => {
    // detectors.md §6b: heterogeneous D gives α2 = CV²(D). D ∈ {0.5, 1.5} equally often: CV² = 0.25.
    const random = new Random(7);
    const estimate = sampleAlpha2(random, 100_000, 2, () => (random.uniform() < 0.5 ? 0.5 : 1.5));
    expect(Math.abs(estimate.value - 0.25)).toBeLessThan(0.02);
  });
  it('nonGaussianParameter returns undefined for too little data and rejects bad dims', () => {
    // bad-input policy (STYLE.md §7)
    expect(nonGaussianParameter(1, 1, 1, 2)).toBeUndefined();
    expect(nonGaussianParameter(0, 0, 10, 2)).toBeUndefined();
    expect(() => nonGaussianParameter(1, 1, 10, 0)).toThrow(RangeError);
  });
});
