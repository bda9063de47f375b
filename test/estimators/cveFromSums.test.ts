import { describe, expect, it } from 'vitest';
import { cveFromSums } from '../../src/estimators/cveFromSums.js';
import { Random } from '../../src/stats/random.js';
import { addSums, cveSumsOf, monteCarlo, simulateAxis } from './simulateDiffusion.js';

describe('cveFromSums', () => {
  it('cveFromSums(x = [0,1,0,1,0], Δt = 1, R = 0) gives D = -0.5, σ² = 1', () => {
    // estimators.md §2 check values (Vestergaard, Blainey & Flyvbjerg 2014 estimator, worked by hand)
    const estimate = cveFromSums(cveSumsOf([0, 1, 0, 1, 0]), 1, 0)!;
    expect(estimate.diffusion).toBeCloseTo(-0.5, 12);
    expect(estimate.localizationVariance).toBeCloseTo(1, 12);
    expect(estimate.reducedError).toBeNaN(); // D̂ ≤ 0: ε undefined, and D̂ is not clipped
  });
  it('cveFromSums(same track, R = 1/6) gives D = -0.5, σ² = 5/6', () => {
    // estimators.md §2 check values
    const estimate = cveFromSums(cveSumsOf([0, 1, 0, 1, 0]), 1, 1 / 6)!;
    expect(estimate.diffusion).toBeCloseTo(-0.5, 12);
    expect(estimate.localizationVariance).toBeCloseTo(5 / 6, 12);
  });
  it('cveFromSums(pure drift [0,1,2,3,4]) gives D = 1.5 (drift bias 1.5·v²Δt), σ² = -1', () => {
    // estimators.md §2 and §10 check values
    const estimate = cveFromSums(cveSumsOf([0, 1, 2, 3, 4]), 1, 0)!;
    expect(estimate.diffusion).toBeCloseTo(1.5, 12);
    expect(estimate.localizationVariance).toBeCloseTo(-1, 12);
    expect(estimate.reducedError).toBeCloseTo(-1 / 1.5, 12);
  });
  it('cveFromSums scales D with 1/Δt and leaves σ² unchanged', () => {
    // common practice, no source: D has units µm²/s, σ² µm²
    const sums = cveSumsOf([0, 0.3, 0.1, 0.7, 0.6, 1.1]);
    const a = cveFromSums(sums, 1, 0.1)!;
    const b = cveFromSums(sums, 0.5, 0.1)!;
    expect(b.diffusion).toBeCloseTo(2 * a.diffusion, 12);
    expect(b.localizationVariance).toBeCloseTo(a.localizationVariance, 12);
  });
  it('cveFromSums returns undefined while there is no adjacent pair', () => {
    // bad-input policy (STYLE.md §7)
    expect(cveFromSums({ steps: 1, sumSquares: 1, pairs: 0, sumProducts: 0 }, 1, 0)).toBeUndefined();
    expect(cveFromSums({ steps: 3, sumSquares: Number.NaN, pairs: 2, sumProducts: 0 }, 1, 0)).toBeUndefined();
  });
  it('cveFromSums rejects a bad frame interval or blur', () => {
    // bad-parameter policy (STYLE.md §7); 0 ≤ R ≤ 1/4 (Berglund 2010, via estimators.md §1)
    const sums = cveSumsOf([0, 1, 0]);
    expect(() => cveFromSums(sums, 0, 0)).toThrow(RangeError);
    expect(() => cveFromSums(sums, 1, 0.3)).toThrow(RangeError);
    expect(() => cveFromSums(sums, 1, -0.01)).toThrow(RangeError);
  });
  it('cveFromSums(pooled sums) is unbiased within 1 % for D = 1, σ = 0.5, t_E = Δt', monteCarlo, () => {
    // estimators.md §2 MC unbiasedness check: mean D̂ = 1.000, mean σ̂² = 0.250.
    // 10,000 tracks × 100 steps pooled: SE(D̂)/D ≈ √(5.7/10⁶) = 0.0024, SE(σ̂²) ≈ 0.001.
    const random = new Random(20140226);
    const settings = { diffusion: 1, frameIntervalS: 1, sigma: 0.5, exposureS: 1 };
    const positions = new Float64Array(101);
    const total = { steps: 0, sumSquares: 0, pairs: 0, sumProducts: 0 };
    for (let track = 0; track < 10_000; track++) addSums(total, cveSumsOf(simulateAxis(random, settings, positions)));
    const estimate = cveFromSums(total, 1, 1 / 6)!;
    expect(Math.abs(estimate.diffusion - 1)).toBeLessThan(0.01);
    expect(Math.abs(estimate.localizationVariance - 0.25)).toBeLessThan(0.005);
    expect(estimate.reducedError).toBeCloseTo(0.25 - 1 / 3, 1);
  });
});
