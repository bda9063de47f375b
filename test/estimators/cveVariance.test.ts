import { describe, expect, it } from 'vitest';
import { cveFromSums } from '../../src/estimators/cveFromSums.js';
import { cveVariance } from '../../src/estimators/cveVariance.js';
import { Random } from '../../src/stats/random.js';
import { addSums, cveSumsOf, meanAndVariance, monteCarlo, simulateAxis } from './simulateDiffusion.js';

describe('cveVariance', () => {
  it('cveVariance(1, -1/3, 100) is 0.049067 (σ = 0, t_E = Δt)', () => {
    // Vestergaard, Blainey & Flyvbjerg 2014 variance formula; estimators.md §2 check values
    expect(cveVariance(1, -1 / 3, 100)).toBeCloseTo(0.049067, 6);
  });
  it('cveVariance(1, 1, 200) is 0.0604 and cveVariance(1, 2/3, 50) is 0.19556', () => {
    // estimators.md §2 check values
    expect(cveVariance(1, 1, 200)).toBeCloseTo(0.0604, 6);
    expect(cveVariance(1, 2 / 3, 50)).toBeCloseTo(0.19556, 5);
  });
  it('cveVariance scales with D² and its tracks term is that of the mean of M equal tracks', () => {
    // common practice, no source: Var(mean of M iid) = Var(one)/M
    expect(cveVariance(2, 0.4, 100)).toBeCloseTo(4 * cveVariance(1, 0.4, 100), 12);
    expect(cveVariance(1, 0.4, 20 * 50, 20)).toBeCloseTo(cveVariance(1, 0.4, 50) / 20, 12);
  });
  it('cveVariance rejects steps < 1 and tracks outside [1, steps]', () => {
    // bad-parameter policy (STYLE.md §7)
    expect(() => cveVariance(1, 0, 0)).toThrow(RangeError);
    expect(() => cveVariance(1, 0, 10, 11)).toThrow(RangeError);
    expect(() => cveVariance(1, 0, 10, 0)).toThrow(RangeError);
  });
  it('cveVariance(D, ε, 1000, 20) matches the Monte Carlo variance of pooled CVE over 20 tracks × 50 steps', monteCarlo, () => {
    // Pooling approximation checked by simulation (seeded). σ² = DΔt, t_E = 0 → ε = 1.
    // 6000 data sets: the SE of a sample variance is ≈ √(2/6000) = 1.8 %; allow 6 %.
    const random = new Random(9022726);
    const settings = { diffusion: 0.5, frameIntervalS: 0.1, sigma: Math.sqrt(0.05), exposureS: 0 };
    const positions = new Float64Array(51);
    const estimates = new Float64Array(6000);
    for (let set = 0; set < estimates.length; set++) {
      const total = { steps: 0, sumSquares: 0, pairs: 0, sumProducts: 0 };
      for (let track = 0; track < 20; track++) addSums(total, cveSumsOf(simulateAxis(random, settings, positions)));
      estimates[set] = cveFromSums(total, 0.1, 0)!.diffusion;
    }
    const { mean, variance } = meanAndVariance(estimates);
    const predicted = cveVariance(0.5, 1, 1000, 20);
    expect(Math.abs(mean - 0.5)).toBeLessThan(4 * Math.sqrt(predicted / estimates.length));
    expect(Math.abs(variance / predicted - 1)).toBeLessThan(0.06);
  });
  it('cveVariance(1, 2/3, 50) matches Monte Carlo with blur (σ² = DΔt, R = 1/6)', monteCarlo, () => {
    // estimators.md §2: 0.19556·D², MC gave 0.19610 ("use about 3 % for MC tests"); here 3000
    // tracks (SE of the variance ≈ 3 %), so allow 10 %.
    const random = new Random(61916);
    const settings = { diffusion: 1, frameIntervalS: 1, sigma: 1, exposureS: 1 };
    const positions = new Float64Array(51);
    const estimates = new Float64Array(3000);
    for (let track = 0; track < estimates.length; track++) {
      estimates[track] = cveFromSums(cveSumsOf(simulateAxis(random, settings, positions)), 1, 1 / 6)!.diffusion;
    }
    const { variance } = meanAndVariance(estimates);
    expect(Math.abs(variance / cveVariance(1, 2 / 3, 50) - 1)).toBeLessThan(0.1);
  });
});
