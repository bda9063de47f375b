import { describe, expect, it } from 'vitest';
import { expectedDiffusion } from '../../src/physics/expectedDiffusion.js';
import { impliedRadius } from '../../src/physics/impliedRadius.js';
import { parseMedium } from '../../src/physics/parseMedium.js';

const water = parseMedium('water');

describe('impliedRadius({ diffusion, celsius, medium, height })', () => {
  it('D = 0.42875 µm²/s in water at 20 °C implies r = 0.5 µm', () => {
    // estimators.md §5 worked value [C], 1e-4 relative
    const implied = impliedRadius({ diffusion: { value: 0.42875, ci95: [0.42, 0.44] }, celsius: 20, medium: water })!;
    expect(Math.abs(implied.value / 0.5 - 1)).toBeLessThan(1e-4);
    // bulk: r ∝ 1/D, so the CI ends map as 1/D (Stokes–Einstein)
    expect(implied.ci95[0]).toBeCloseTo((implied.value * 0.42875) / 0.44, 10);
    expect(implied.ci95[1]).toBeCloseTo((implied.value * 0.42875) / 0.42, 10);
    expect(implied.clampedHigh).toBe(false);
  });

  it('round-trips expectedDiffusion, in bulk and near a wall', () => {
    // round trip through the Faxén-corrected Stokes–Einstein prediction (estimators.md §5, §7)
    for (const radius of [0.05, 0.25, 0.5, 1.5]) {
      for (const height of [undefined, radius * 1.02, radius * 1.5, radius * 4]) {
        const d = expectedDiffusion({ celsius: 24, radius, radiusSd: 0, medium: water, height }).value;
        const implied = impliedRadius({ diffusion: { value: d, ci95: [d * 0.9, d * 1.1] }, celsius: 24, medium: water, height })!;
        expect(Math.abs(implied.value / radius - 1)).toBeLessThan(1e-9);
        expect(implied.ci95[0]).toBeLessThan(radius);
        expect(implied.ci95[1]).toBeGreaterThan(radius);
      }
    }
  });

  it('ignoring the wall would underestimate D and so overestimate the radius', () => {
    // Faxén ∥ at h/r = 2 is 0.72144 (estimators.md §7): the bulk inversion gives r/0.72144
    const d = expectedDiffusion({ celsius: 20, radius: 0.5, radiusSd: 0, medium: water, height: 1 }).value;
    const naive = impliedRadius({ diffusion: { value: d, ci95: [d, d] }, celsius: 20, medium: water })!;
    expect(naive.value).toBeCloseTo(0.5 / 0.72144, 4);
  });

  it('clamps at r = height when D is below what a touching sphere shows', () => {
    // Faxén ∥ at contact is 1 − 9/16 + 1/8 − 45/256 − 1/16 = 0.3223 (its smallest value)
    const implied = impliedRadius({ diffusion: { value: 0.01, ci95: [-0.01, 0.03] }, celsius: 20, medium: water, height: 1 })!;
    expect(implied.value).toBe(1);
    expect(implied.ci95[1]).toBe(1);
    expect(implied.clampedHigh).toBe(true);
    const open = impliedRadius({ diffusion: { value: 0.4, ci95: [-0.1, 0.9] }, celsius: 20, medium: water })!;
    expect(open.ci95[1]).toBe(Number.POSITIVE_INFINITY);
    expect(open.clampedHigh).toBe(false);
  });

  it('treats a NaN CI end as open', () => {
    // bad-input policy (STYLE.md §7): an unknown bound is no bound
    const implied = impliedRadius({ diffusion: { value: 0.42875, ci95: [Number.NaN, Number.NaN] }, celsius: 20, medium: water })!;
    expect(implied.ci95).toEqual([0, Number.POSITIVE_INFINITY]);
    expect(implied.value).toBeCloseTo(0.5, 4);
  });

  it('is null without a usable estimate or outside the medium range', () => {
    // bad-input policy (STYLE.md §7)
    expect(impliedRadius({ diffusion: { value: 0, ci95: [0, 0] }, celsius: 20, medium: water })).toBeNull();
    expect(impliedRadius({ diffusion: { value: 0.4, ci95: [0.3, 0.5] }, celsius: 200, medium: water })).toBeNull();
    expect(() => impliedRadius({ diffusion: { value: 0.4, ci95: [0.3, 0.5] }, celsius: 20, medium: water, height: -1 })).toThrow(RangeError);
  });
});
