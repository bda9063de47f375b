import { describe, expect, it } from 'vitest';
import { AnomalousExponentCache, anomalousExponent } from '../../src/estimators/anomalousExponent.js';
import { exposureAveragedPowerLaw } from '../../src/estimators/exposureAveragedPowerLaw.js';
import { logLogSlope } from '../../src/estimators/logLogSlope.js';
import { timeAveragedMsd } from '../../src/estimators/timeAveragedMsd.js';
import { Random } from '../../src/stats/random.js';
import { meanAndVariance, monteCarlo, simulateAxis } from './simulateDiffusion.js';

const lags = Array.from({ length: 10 }, (_, i) => i + 1);

describe('anomalousExponent', () => {
  for (const x of [0, 0.5, 1]) {
    it(`anomalousExponent(exact free-diffusion MSD, x = ${x}, t_E = Δt) recovers α = 1, K = D, σ²`, () => {
      // estimators.md §1 expected MSD 2dDΔt(n + x), with R = 1/6 so σ² = (x + 1/3)DΔt; the bare
      // log-log slope is biased here (estimators.md §4 table), the modelled fit is not.
      const dims = 2;
      const diffusion = 0.4;
      const msd = lags.map((n) => 2 * dims * diffusion * (n + x));
      const se = msd.map((value) => 0.05 * value);
      const fit = anomalousExponent({ lagsS: lags, msd, se, dims, exposureS: 1 })!;
      expect(fit.alpha).toBeCloseTo(1, 7);
      expect(fit.k).toBeCloseTo(diffusion, 6);
      expect(fit.localizationVariance).toBeCloseTo((x + 1 / 3) * diffusion, 6);
      expect(fit.atBound).toBe(false);
      if (x !== 0) expect(Math.abs(logLogSlope(lags, msd)! - 1)).toBeGreaterThan(0.1);
    });
  }
  for (const alpha of [0.5, 1, 1.5]) {
    it(`anomalousExponent(blurred power law α = ${alpha}, t_E = Δt, σ² = 0.01) recovers α, K and σ²`, () => {
      // general dynamic-error formula (Savin & Doyle 2005, estimators.md §1), whose closed form is
      // checked against direct integration in exposureAveragedPowerLaw.test.ts
      const dims = 1;
      const k = 0.3;
      const msd = lags.map((lag) => 2 * dims * (k * exposureAveragedPowerLaw(lag * 0.05, alpha, 0.05) + 0.01));
      const fit = anomalousExponent({ lagsS: lags.map((lag) => lag * 0.05), msd, se: msd.map(() => 0.001), dims, exposureS: 0.05 })!;
      expect(fit.alpha).toBeCloseTo(alpha, 6);
      expect(fit.k).toBeCloseTo(k, 5);
      expect(fit.localizationVariance).toBeCloseTo(0.01, 7);
    });
  }
  it('anomalousExponent returns undefined with fewer than 3 usable points and rejects bad dims', () => {
    // bad-input policy (STYLE.md §7)
    expect(anomalousExponent({ lagsS: [1, 2, 3], msd: [1, 2, Number.NaN], se: [1, 1, 1], dims: 1, exposureS: 0 })).toBeUndefined();
    expect(anomalousExponent({ lagsS: [1, 2, 3], msd: [1, 2, 3], se: [1, 0, 1], dims: 1, exposureS: 0 })).toBeUndefined();
    expect(() => anomalousExponent({ lagsS: [1], msd: [1], se: [1], dims: 4, exposureS: 0 })).toThrow(RangeError);
    expect(() => anomalousExponent({ lagsS: [1], msd: [1], se: [1], dims: 1, exposureS: -1 })).toThrow(RangeError);
  });
  it('anomalousExponent flags a truth outside [0.05, 2] as atBound', () => {
    // common practice, no source
    const msd = lags.map((lag) => lag ** 2.6);
    const fit = anomalousExponent({ lagsS: lags, msd, se: msd.map((v) => 0.01 * v), dims: 1, exposureS: 0 })!;
    expect(fit.atBound).toBe(true);
    expect(fit.alpha).toBe(2);
  });
  it('anomalousExponent(simulated free diffusion with σ and blur) gives α and σ² within their jackknife CIs', monteCarlo, () => {
    // Seeded simulation: 2-D, D = 0.5 µm²/s, Δt = 0.05 s, t_E = Δt, σ = 0.05 µm; 400 tracks × 101 frames.
    // SE by the delete-one-group jackknife over 10 groups of tracks (Quenouille 1956; Efron & Stein 1981; citations from memory).
    const random = new Random(2005);
    const settings = { diffusion: 0.5, frameIntervalS: 0.05, sigma: 0.05, exposureS: 0.05 };
    const tracks = 400;
    const groups = 10;
    const maxLag = 10;
    const perTrack: Float64Array[] = [];
    const x = new Float64Array(101);
    for (let t = 0; t < tracks; t++) {
      const msdX = timeAveragedMsd(simulateAxis(random, settings, x), maxLag);
      const msdY = timeAveragedMsd(simulateAxis(random, settings, x), maxLag);
      perTrack.push(msdX.map((value, i) => value + msdY[i]));
    }
    const lagsS = Array.from({ length: maxLag }, (_, i) => (i + 1) * 0.05);
    const fitOf = (skipGroup: number) => {
      const members = perTrack.filter((_, t) => t % groups !== skipGroup);
      const msd: number[] = [];
      const se: number[] = [];
      for (let i = 0; i < maxLag; i++) {
        const { mean, variance } = meanAndVariance(members.map((m) => m[i]));
        msd.push(mean);
        se.push(Math.sqrt(variance / members.length));
      }
      return anomalousExponent({ lagsS, msd, se, dims: 2, exposureS: 0.05 })!;
    };
    const full = fitOf(-1);
    const leaveOut = Array.from({ length: groups }, (_, g) => fitOf(g));
    const jackknifeSe = (values: number[]): number => {
      const mean = values.reduce((a, b) => a + b, 0) / values.length;
      return Math.sqrt(((values.length - 1) / values.length) * values.reduce((a, b) => a + (b - mean) ** 2, 0));
    };
    const alphaSe = jackknifeSe(leaveOut.map((f) => f.alpha));
    const sigmaSe = jackknifeSe(leaveOut.map((f) => f.localizationVariance));
    expect(Math.abs(full.alpha - 1)).toBeLessThan(2.5 * alphaSe);
    expect(Math.abs(full.localizationVariance - 0.0025)).toBeLessThan(2.5 * sigmaSe);
    expect(Math.abs(full.k - 0.5)).toBeLessThan(0.1);
    // the jackknife SE is a real, finite spread (not a degenerate zero)
    expect(alphaSe).toBeGreaterThan(1e-4);
    expect(alphaSe).toBeLessThan(0.2);
  });

  it('a shared AnomalousExponentCache gives exactly the uncached fits, on curves with different points left out', () => {
    // the cache holds the same grid shapes an uncached fit computes (common practice, no source)
    const random = new Random(31);
    const cache = new AnomalousExponentCache(0.4);
    for (let k = 0; k < 8; k++) {
      const alpha = 0.4 + 0.2 * k;
      const msd = lags.map((n) => 4 * 0.3 * exposureAveragedPowerLaw(n, alpha, 0.4) * (1 + 0.02 * random.normal()) + 0.02);
      const se = msd.map((value) => 0.03 * value);
      if (k % 3 === 1) msd[k] = Number.NaN; // a point left out changes which lags are used
      const input = { lagsS: lags, msd, se, dims: 2, exposureS: 0.4 };
      expect(anomalousExponent(input, cache)).toEqual(anomalousExponent(input));
    }
    expect(() => anomalousExponent({ lagsS: lags, msd: lags, se: lags, dims: 1, exposureS: 0.1 }, cache)).toThrow(/exposure/);
  });
});
