import { describe, expect, it } from 'vitest';
import { intensityMixture } from '../../../src/detectors/clumping/intensityMixture.js';
import { Random } from '../../../src/stats/random.js';

// The intensity-population fit of detectors.md §3e: log intensities from a two-component normal
// mixture (means μ and μ + ln 2, shared s) with a known dimer fraction φ.

function population(random: Random, n: number, phi: number, mu = Math.log(1000), s = 0.15): number[] {
  const out: number[] = [];
  for (let i = 0; i < n; i++) out.push(mu + (random.uniform() < phi ? Math.LN2 : 0) + s * random.normal());
  return out;
}

/** Log-likelihood of the mixture at (φ, μ, s), written out directly (for the brute-force check). */
function logLikelihood(values: number[], phi: number, mu: number, s: number): number {
  let sum = 0;
  for (const v of values) {
    const a = (v - mu) / s;
    const b = (v - mu - Math.LN2) / s;
    sum += Math.log(((1 - phi) * Math.exp(-0.5 * a * a) + phi * Math.exp(-0.5 * b * b)) / (s * Math.sqrt(2 * Math.PI)));
  }
  return sum;
}

describe('intensityMixture', () => {
  it('recovers a 20 % dimer fraction, μ and s, with a CI that covers them (2,000 tracks)', () => {
    const values = population(new Random(11), 2000, 0.2);
    const fit = intensityMixture(values, values.length)!;
    expect(fit.tracks).toBe(2000);
    expect(Math.abs(fit.dimerFraction - 0.2)).toBeLessThan(0.03);
    expect(fit.ci95[0]).toBeLessThan(0.2);
    expect(fit.ci95[1]).toBeGreaterThan(0.2);
    expect(fit.ci95[1] - fit.ci95[0]).toBeLessThan(0.1);
    expect(Math.abs(fit.monomerLogIntensity - Math.log(1000))).toBeLessThan(0.02);
    expect(Math.abs(fit.spread - 0.15)).toBeLessThan(0.01);
  });

  it('finds the same maximum as a brute-force search of the likelihood over (φ, μ, s)', () => {
    // a second, independent maximiser: a grid over φ, then μ and s, on the likelihood written out
    const values = population(new Random(12), 400, 0.3);
    const fit = intensityMixture(values, values.length)!;
    let best = { ll: Number.NEGATIVE_INFINITY, phi: 0 };
    for (let phi = 0; phi <= 0.5 + 1e-12; phi += 0.005) {
      for (let mu = fit.monomerLogIntensity - 0.05; mu <= fit.monomerLogIntensity + 0.05; mu += 0.0025) {
        for (let s = fit.spread * 0.8; s <= fit.spread * 1.2; s += fit.spread * 0.01) {
          const ll = logLikelihood(values, phi, mu, s);
          if (ll > best.ll) best = { ll, phi };
        }
      }
    }
    expect(Math.abs(best.phi - fit.dimerFraction)).toBeLessThanOrEqual(0.01);
    // EM's maximum is at least as high as the grid's
    expect(logLikelihood(values, fit.dimerFraction, fit.monomerLogIntensity, fit.spread)).toBeGreaterThanOrEqual(best.ll - 1e-6);
    expect(fit.logLikelihood).toBeCloseTo(logLikelihood(values, fit.dimerFraction, fit.monomerLogIntensity, fit.spread), 6);
  });

  it('finds a population of nearly half dimers, where EM started at the median settles on one wide component', () => {
    const values = population(new Random(16), 300, 0.45, Math.log(1000), 0.15);
    const fit = intensityMixture(values, values.length)!;
    expect(Math.abs(fit.dimerFraction - 0.45)).toBeLessThan(0.06);
    expect(fit.spread).toBeLessThan(0.2);
    expect(fit.ci95[0]).toBeGreaterThan(0.3);
  });

  it('with no dimers, puts φ near 0 and the interval against 0', () => {
    const values = population(new Random(13), 1000, 0);
    const fit = intensityMixture(values, values.length)!;
    expect(fit.dimerFraction).toBeLessThan(0.02);
    expect(fit.ci95[0]).toBe(0);
    expect(fit.ci95[1]).toBeLessThan(0.04);
  });

  it('covers the true fraction at about the stated 95 % over 200 populations of 300 tracks (φ = 0.15)', () => {
    const random = new Random(14);
    let covered = 0;
    const trials = 200;
    for (let k = 0; k < trials; k++) {
      const values = population(random, 300, 0.15);
      const fit = intensityMixture(values, values.length)!;
      if (fit.ci95[0] <= 0.15 && 0.15 <= fit.ci95[1]) covered++;
    }
    // binomial(200, 0.95): 95 % of runs fall in 184–196 (0.92–0.98); a wider band keeps the test
    // steady, and still fails an interval that is too narrow or far too wide
    expect(covered / trials).toBeGreaterThan(0.9);
    expect(covered / trials).toBeLessThan(0.99);
  });

  it('needs enough finite values, and skips the rest', () => {
    expect(intensityMixture([1, 2, 3], 3)).toBeNull();
    const values = population(new Random(15), 100, 0.2);
    values.push(Number.NaN, Number.POSITIVE_INFINITY);
    expect(intensityMixture(values, values.length)!.tracks).toBe(100);
    expect(intensityMixture(new Array(50).fill(7), 50)).toBeNull(); // no spread
  });
});
