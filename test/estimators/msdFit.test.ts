import { describe, expect, it } from 'vitest';
import { msdFit } from '../../src/estimators/msdFit.js';

/** Expected 1-axis MSD of free diffusion with error and blur (estimators.md §1; Savin & Doyle 2005). */
function expectedMsd(diffusion: number, frameIntervalS: number, sigma: number, exposureS: number, lags: number): Float64Array {
  const blur = exposureS / (6 * frameIntervalS);
  const msd = new Float64Array(lags);
  for (let n = 1; n <= lags; n++) msd[n - 1] = 2 * diffusion * n * frameIntervalS + 2 * sigma * sigma - 4 * blur * diffusion * frameIntervalS;
  return msd;
}

describe('msdFit', () => {
  it('the expected MSD of D = 1, σ = 0.5, t_E = Δt = 1 is 1.8333 at n = 1 and 9.8333 at n = 5', () => {
    // estimators.md §1 check values (Savin & Doyle 2005 form), the input msdFit is built for
    const msd = expectedMsd(1, 1, 0.5, 1, 5);
    expect(msd[0]).toBeCloseTo(1.8333, 4);
    expect(msd[4]).toBeCloseTo(9.8333, 4);
  });
  it('msdFit(expected MSD, p, Δt, R) recovers D and σ² exactly, with blur', () => {
    // Michalet 2010 line fit; exact expected curve from estimators.md §1 (d = 1, σ = 0.3, t_E = 0.5 → MSD₁ = 1.8467)
    const msd = expectedMsd(1, 1, 0.3, 0.5, 6);
    expect(msd[0]).toBeCloseTo(1.8467, 4);
    for (const p of [2, 3, 6]) {
      const fit = msdFit(msd, p, 1, 0.5 / 6)!;
      expect(fit.diffusion).toBeCloseTo(1, 12);
      expect(fit.localizationVariance).toBeCloseTo(0.09, 12);
    }
  });
  it('msdFit(Float64Array.of(3, 5, 7), 3, 1, 0) gives D = 1, σ² = 0.5', () => {
    // hand-worked line: slope 2, intercept 1 → D = 2/(2·1), σ² = 1/2 (Michalet 2010 relations)
    const fit = msdFit(Float64Array.of(3, 5, 7), 3, 1, 0)!;
    expect(fit.diffusion).toBeCloseTo(1, 12);
    expect(fit.localizationVariance).toBeCloseTo(0.5, 12);
  });
  it('msdFit uses only the first p points', () => {
    // common practice, no source
    const fit = msdFit(Float64Array.of(3, 5, 7, 1000), 3, 2, 0)!;
    expect(fit.diffusion).toBeCloseTo(0.5, 12);
  });
  it('msdFit returns undefined for a non-finite value among the first p', () => {
    // bad-input policy (STYLE.md §7)
    expect(msdFit(Float64Array.of(3, Number.NaN, 7), 3, 1, 0)).toBeUndefined();
  });
  it('msdFit rejects p outside [2, P], Δt ≤ 0 and R outside [0, 1/4]', () => {
    // bad-parameter policy (STYLE.md §7)
    const msd = Float64Array.of(3, 5, 7);
    expect(() => msdFit(msd, 1, 1, 0)).toThrow(RangeError);
    expect(() => msdFit(msd, 4, 1, 0)).toThrow(RangeError);
    expect(() => msdFit(msd, 2, 0, 0)).toThrow(RangeError);
    expect(() => msdFit(msd, 2, 1, 0.5)).toThrow(RangeError);
  });
});
