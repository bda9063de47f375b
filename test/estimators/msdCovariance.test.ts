import { describe, expect, it } from 'vitest';
import { msdCovariance } from '../../src/estimators/msdCovariance.js';
import { msdFit } from '../../src/estimators/msdFit.js';
import { qianRelativeVariance } from '../../src/estimators/qianRelativeVariance.js';
import { timeAveragedMsd } from '../../src/estimators/timeAveragedMsd.js';
import { Random } from '../../src/stats/random.js';
import { meanAndVariance, monteCarlo, simulateAxis } from './simulateDiffusion.js';

/**
 * Independent brute force: Cov(ρ_n, ρ_m) = 2/(K_nK_m)·ΣΣ Cov(d_i, d_j)², with Cov(d_i, d_j)
 * summed from the explicit tridiagonal step covariance (c₀ = 1 + x, c₁ = −x/2). O(N⁴) for small N.
 */
function bruteForce(x: number, framesN: number, n: number, m: number): number {
  const stepCov = (k: number, l: number): number => (k === l ? 1 + x : Math.abs(k - l) === 1 ? -x / 2 : 0);
  let sum = 0;
  for (let i = 0; i < framesN - n; i++) {
    for (let j = 0; j < framesN - m; j++) {
      let c = 0;
      for (let k = i + 1; k <= i + n; k++) for (let l = j + 1; l <= j + m; l++) c += stepCov(k, l);
      sum += c * c;
    }
  }
  return (2 * sum) / ((framesN - n) * (framesN - m));
}

describe('msdCovariance', () => {
  it('msdCovariance(0, 50, 20) diagonal equals Qian, Sheetz & Elson 1991 (1-D) at n = 1, 2, 5, 10, 20', () => {
    // estimators.md §3 check table: 0.0408163, 0.0620660, 0.1471605, 0.314375, 0.742222
    const covariance = msdCovariance(0, 50, 20);
    const expected: Record<number, number> = { 1: 0.0408163, 2: 0.062066, 5: 0.1471605, 10: 0.314375, 20: 0.742222 };
    for (const [lag, value] of Object.entries(expected)) {
      const n = Number(lag);
      expect(covariance[(n - 1) * 20 + (n - 1)] / (n * n)).toBeCloseTo(value, 6);
    }
  });
  it('msdCovariance(0, N, N - 1) matches the Qian formula on both branches (n ≤ K and n > K)', () => {
    // Qian, Sheetz & Elson 1991 (estimators.md §3), 1-D = 2 × the 2-D value
    const framesN = 17;
    const covariance = msdCovariance(0, framesN, framesN - 1);
    for (let n = 1; n < framesN; n++) {
      expect(covariance[(n - 1) * (framesN - 1) + (n - 1)] / (n * n)).toBeCloseTo(qianRelativeVariance(n, framesN, 1), 10);
    }
  });
  it('msdCovariance(x, N, maxLag) equals the brute-force Isserlis sum for x = 0.7, -1/3, 5', () => {
    // Isserlis (1918) Gaussian fourth-moment identity, common practice; tridiagonal step covariance of estimators.md §2
    for (const x of [0.7, -1 / 3, 5]) {
      const framesN = 12;
      const maxLag = 6;
      const covariance = msdCovariance(x, framesN, maxLag);
      for (let n = 1; n <= maxLag; n++) {
        for (let m = 1; m <= maxLag; m++) {
          expect(covariance[(n - 1) * maxLag + (m - 1)]).toBeCloseTo(bruteForce(x, framesN, n, m), 10);
        }
      }
    }
  });
  it('msdCovariance is symmetric', () => {
    // common practice, no source
    const covariance = msdCovariance(2, 30, 7);
    for (let n = 0; n < 7; n++) for (let m = 0; m < 7; m++) expect(covariance[n * 7 + m]).toBe(covariance[m * 7 + n]);
  });
  it('msdCovariance rejects maxLag ≥ N and non-finite x', () => {
    // bad-parameter policy (STYLE.md §7)
    expect(() => msdCovariance(0, 10, 10)).toThrow(RangeError);
    expect(() => msdCovariance(Number.NaN, 10, 3)).toThrow(RangeError);
    expect(() => msdCovariance(0, 1, 1)).toThrow(RangeError);
  });
  it('msdCovariance(3, 40, 4) matches the Monte Carlo covariance of simulated MSD values', monteCarlo, () => {
    // Seeded simulation, σ² = 3DΔt, t_E = 0. 6000 tracks: SE of a variance ≈ 2-3 %, allow 8 %
    // (12 % on the smaller off-diagonal entry).
    const random = new Random(41914);
    const settings = { diffusion: 1, frameIntervalS: 1, sigma: Math.sqrt(3), exposureS: 0 };
    const positions = new Float64Array(40);
    const tracks = 6000;
    const rho1 = new Float64Array(tracks);
    const rho4 = new Float64Array(tracks);
    for (let t = 0; t < tracks; t++) {
      const msd = timeAveragedMsd(simulateAxis(random, settings, positions), 4);
      rho1[t] = msd[0] / 2; // units of 2DΔt
      rho4[t] = msd[3] / 2;
    }
    const covariance = msdCovariance(3, 40, 4);
    const a = meanAndVariance(rho1);
    const b = meanAndVariance(rho4);
    let cross = 0;
    for (let t = 0; t < tracks; t++) cross += (rho1[t] - a.mean) * (rho4[t] - b.mean);
    cross /= tracks - 1;
    expect(a.mean).toBeCloseTo(1 + 3, 1); // ⟨ρ_n⟩ = n + x, estimators.md §1
    expect(Math.abs(a.variance / covariance[0] - 1)).toBeLessThan(0.08);
    expect(Math.abs(b.variance / covariance[15] - 1)).toBeLessThan(0.08);
    expect(Math.abs(cross / covariance[3] - 1)).toBeLessThan(0.12);
  });
  it('an MSD fit over p = 8 at N = 100, x = 10 has the relative SE 0.4942 by Monte Carlo (±3 %)', monteCarlo, () => {
    // estimators.md §3: "N = 100 frames, x = 10, p = 8: relative SE of D̂ 0.4942 (±2 % vs MC)".
    // 5000 tracks: SE of an SD estimate ≈ 1/√(2·5000) = 1 %, so allow 3 %.
    const random = new Random(1991);
    const settings = { diffusion: 1, frameIntervalS: 1, sigma: Math.sqrt(10), exposureS: 0 };
    const positions = new Float64Array(100);
    const estimates = new Float64Array(5000);
    for (let t = 0; t < estimates.length; t++) {
      estimates[t] = msdFit(timeAveragedMsd(simulateAxis(random, settings, positions), 8), 8, 1, 0)!.diffusion;
    }
    const { variance } = meanAndVariance(estimates);
    expect(Math.abs(Math.sqrt(variance) / 0.4942 - 1)).toBeLessThan(0.03);
  });
});
