import { describe, expect, it } from 'vitest';
import { expectedDiffusion } from '../../src/physics/expectedDiffusion.js';
import { impliedTemperature } from '../../src/physics/impliedTemperature.js';
import { parseMedium } from '../../src/physics/parseMedium.js';
import { Random } from '../../src/stats/random.js';
import { clopperPearson } from '../../src/stats/quantiles.js';

const water = parseMedium('water');

describe('impliedTemperature({ diffusion, radius, radiusSd, medium, height })', () => {
  it('D = 0.4288 µm²/s for r = 0.5 µm in water implies 20.00 °C, and 0.5000 implies 25.72 °C', () => {
    // estimators.md §5 inversion check [C], ±0.02 K
    const at20 = impliedTemperature({ diffusion: { value: 0.4288, ci95: [0.42, 0.44] }, radius: 0.5, radiusSd: 0, medium: water });
    const at25 = impliedTemperature({ diffusion: { value: 0.5, ci95: [0.49, 0.51] }, radius: 0.5, radiusSd: 0, medium: water });
    expect(Math.abs(at20!.value - 20.0)).toBeLessThanOrEqual(0.02);
    expect(Math.abs(at25!.value - 25.72)).toBeLessThanOrEqual(0.02);
    expect(at20!.clampedLow || at20!.clampedHigh).toBe(false);
  });

  it('inverts expectedDiffusion to 1e-6 K over the water range, with and without a wall', () => {
    // round trip; expectedDiffusion is checked against Stokes–Einstein worked values elsewhere
    for (const height of [undefined, 0.7]) {
      for (let celsius = -15; celsius <= 105; celsius += 7.5) {
        const d = expectedDiffusion({ celsius, radius: 0.5, medium: water, height }).value;
        const implied = impliedTemperature({ diffusion: { value: d, ci95: [d, d] }, radius: 0.5, radiusSd: 0, medium: water, height });
        expect(Math.abs(implied!.value - celsius)).toBeLessThan(1e-6);
        expect(implied!.ci95[0]).toBeCloseTo(celsius, 6);
        expect(implied!.ci95[1]).toBeCloseTo(celsius, 6);
      }
    }
  });

  it('a 1 % D interval alone is about ±0.36 K at 20 °C (sensitivity 2.79 %/K)', () => {
    // estimators.md §5 temperature sensitivity [C]: ΔT ≈ (ΔD/D)/0.0279
    const d = expectedDiffusion({ celsius: 20, radius: 0.5, medium: water }).value;
    const implied = impliedTemperature({ diffusion: { value: d, ci95: [d * 0.99, d * 1.01] }, radius: 0.5, radiusSd: 0, medium: water })!;
    expect(implied.ci95[1] - implied.value).toBeCloseTo(0.01 / 0.0279, 1);
    expect(implied.value - implied.ci95[0]).toBeCloseTo(0.01 / 0.0279, 1);
  });

  it('the radius uncertainty widens the interval: 2 % in r alone ≈ ±1.96·0.02/0.0279 K', () => {
    // estimators.md §5 sensitivity [C], combined in quadrature on the log scale (documented method)
    const d = expectedDiffusion({ celsius: 20, radius: 0.5, medium: water }).value;
    const implied = impliedTemperature({ diffusion: { value: d, ci95: [d, d] }, radius: 0.5, radiusSd: 0.01, medium: water })!;
    const halfWidth = (implied.ci95[1] - implied.ci95[0]) / 2;
    expect(halfWidth).toBeGreaterThan(1.3);
    expect(halfWidth).toBeLessThan(1.5);
  });

  it('covers the true temperature 95 % of the time when D̂ and the radius both scatter (seeded Monte Carlo)', () => {
    // Coverage: the true temperature is 22 °C and the particles' true radius is 0.5 µm; in each
    // simulated run the estimate scatters as D̂ ~ Normal(D_true, se) with the reported CI
    // D̂ ± 1.96·se, and the radius the user states is a draw r ~ Normal(0.5 µm, radiusSd) (its
    // calibration error). The CI must contain 22 °C in 95 % of runs; Clopper–Pearson 99.9 %
    // bounds on 2000 runs (Clopper & Pearson 1934) must include 0.95.
    const random = new Random(7);
    const cases = [
      { se: 0.03, radiusSd: 0.01, height: undefined }, // comparable contributions
      { se: 0.005, radiusSd: 0.015, height: 0.9 }, // radius dominates, near a wall
    ];
    for (const { se, radiusSd, height } of cases) {
      const dTrue = expectedDiffusion({ celsius: 22, radius: 0.5, medium: water, height }).value;
      const runs = 2000;
      let covered = 0;
      let coveredWithoutRadius = 0;
      for (let i = 0; i < runs; i++) {
        const estimate = dTrue * (1 + se * random.normal());
        const statedRadius = 0.5 + radiusSd * random.normal();
        const diffusion = { value: estimate, ci95: [estimate - 1.96 * se * dTrue, estimate + 1.96 * se * dTrue] as [number, number] };
        const implied = impliedTemperature({ diffusion, radius: statedRadius, radiusSd, medium: water, height })!;
        if (implied.ci95[0] <= 22 && 22 <= implied.ci95[1]) covered++;
        const naive = impliedTemperature({ diffusion, radius: statedRadius, radiusSd: 0, medium: water, height })!;
        if (naive.ci95[0] <= 22 && 22 <= naive.ci95[1]) coveredWithoutRadius++;
      }
      const [low, high] = clopperPearson(covered, runs, 0.999);
      expect(low).toBeLessThanOrEqual(0.95);
      expect(high).toBeGreaterThanOrEqual(0.95);
      // ignoring the radius uncertainty must undercover (this is what the combination is for)
      expect(clopperPearson(coveredWithoutRadius, runs, 0.999)[1]).toBeLessThan(0.95);
    }
  });

  it('does not mutate its input', () => {
    // STYLE.md §15 (freeze inputs)
    const input = Object.freeze({
      diffusion: Object.freeze({ value: 0.45, ci95: Object.freeze([0.44, 0.46]) as unknown as [number, number] }),
      radius: 0.5,
      radiusSd: 0.01,
      medium: parseMedium('water'),
      height: 2,
    });
    const implied = impliedTemperature(input)!;
    expect(implied.value).toBeGreaterThan(20);
    expect(implied.ci95).not.toBe(input.diffusion.ci95);
  });

  it('clamps to the valid range and says so', () => {
    // Pátek et al. 2009 range 253.15–383.15 K; beyond it no temperature is claimed
    const hot = expectedDiffusion({ celsius: 105, radius: 0.5, medium: water }).value;
    const open = impliedTemperature({ diffusion: { value: hot, ci95: [0, hot * 1.2] }, radius: 0.5, radiusSd: 0, medium: water })!;
    expect(open.ci95).toEqual([-20, 110]);
    expect(open.clampedLow).toBe(true);
    expect(open.clampedHigh).toBe(true);
    expect(open.value).toBeCloseTo(105, 6);
    const tooFast = impliedTemperature({ diffusion: { value: 5, ci95: [4.5, 5.5] }, radius: 0.5, radiusSd: 0, medium: water })!;
    expect(tooFast.value).toBe(110);
    expect(tooFast.clampedHigh).toBe(true);
    expect(tooFast.clampedLow).toBe(false);
    expect(tooFast.validRange).toEqual([-20, 110]);
  });

  it('works in glycerol–water over 0–100 °C (Cheng 2008)', () => {
    // round trip through Cheng 2008 viscosity
    const medium = parseMedium('glycerol-water:0.6');
    const d = expectedDiffusion({ celsius: 31, radius: 0.25, medium }).value;
    const implied = impliedTemperature({ diffusion: { value: d, ci95: [d * 0.95, d * 1.05] }, radius: 0.25, medium })!;
    expect(implied.value).toBeCloseTo(31, 6);
    expect(implied.validRange).toEqual([0, 100]);
    expect(implied.ci95[0]).toBeLessThan(31);
    expect(implied.ci95[1]).toBeGreaterThan(31);
  });

  it('is null for a fixed viscosity or no estimate, and throws RangeError for bad geometry', () => {
    // CONTRACTS.md §1: with viscosity:<mPa·s> there is no implied temperature (null)
    const diffusion = { value: 0.43, ci95: [0.42, 0.44] as [number, number] };
    expect(impliedTemperature({ diffusion, radius: 0.5, medium: parseMedium('viscosity:1') })).toBeNull();
    expect(impliedTemperature({ diffusion: { value: Number.NaN, ci95: [0, 1] }, radius: 0.5, medium: water })).toBeNull();
    expect(impliedTemperature({ diffusion: { value: -0.1, ci95: [-0.2, 0.1] }, radius: 0.5, medium: water })).toBeNull();
    expect(() => impliedTemperature({ diffusion, radius: -1, medium: water })).toThrow(RangeError);
    expect(() => impliedTemperature({ diffusion, radius: 0.5, medium: water, height: 0.2 })).toThrow(RangeError);
  });
});
