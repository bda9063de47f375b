import { describe, expect, it } from 'vitest';
import { commonModeStep } from '../../../src/detectors/drift/commonModeStep.js';
import { medianInPlace } from '../../../src/detectors/drift/medianInPlace.js';
import { Random } from '../../../src/stats/random.js';

describe('commonModeStep', () => {
  it('commonModeStep(steps) gives the mean step and across-particle SD per axis', () => {
    // arithmetic by hand; detectors.md §1 estimator definition
    const steps = { stepCount: 3, dx: Float64Array.of(0.1, 0.3, 0.2, 99), dy: Float64Array.of(0, 0.2, 0.4, 99) };
    const m = commonModeStep(steps);
    expect(m.n).toBe(3);
    expect(m.mx).toBeCloseTo(0.2, 12);
    expect(m.my).toBeCloseTo(0.2, 12);
    expect(m.sx).toBeCloseTo(0.1, 12);
    expect(m.sy).toBeCloseTo(0.2, 12);
  });

  it('commonModeStep(steps) skips NaN and infinite steps and does not mutate its input', () => {
    const dx = Float64Array.of(1, Number.NaN, 3); // typed arrays cannot be frozen: compare a copy instead
    const dy = Float64Array.of(1, 1, Number.POSITIVE_INFINITY);
    const m = commonModeStep({ stepCount: 3, dx, dy });
    expect(m.n).toBe(1);
    expect(m.mx).toBe(1);
    expect(Number.isNaN(m.sx)).toBe(true);
    expect(Array.from(dx)).toEqual([1, Number.NaN, 3]);
  });

  it('commonModeStep on an empty frame gives n = 0 and NaN means', () => {
    const m = commonModeStep({ stepCount: 0, dx: new Float64Array(0), dy: new Float64Array(0) });
    expect(m.n).toBe(0);
    expect(Number.isNaN(m.mx)).toBe(true);
  });

  it('Var(m_x) matches [2DΔt + 2σ²]/N (detectors.md §1: N = 50 gave 6.10e-4 against 6.16e-4)', () => {
    // detectors.md §1 noise floor [V]; D = 0.49 µm²/s, Δt = 0.033 s, σ = 0.02 µm, N = 50; white steps here
    const random = new Random(5);
    const n = 50, sd = Math.sqrt(2 * 0.49 * 0.033 + 2 * 0.02 * 0.02);
    const dx = new Float64Array(n), dy = new Float64Array(n);
    let sum = 0, sum2 = 0;
    const frames = 20000;
    for (let f = 0; f < frames; f++) {
      for (let i = 0; i < n; i++) { dx[i] = sd * random.normal(); dy[i] = 0; }
      const m = commonModeStep({ stepCount: n, dx, dy });
      sum += m.mx; sum2 += m.mx * m.mx;
    }
    const variance = sum2 / frames - (sum / frames) ** 2;
    expect(variance / ((sd * sd) / n)).toBeGreaterThan(0.96); // SE of a variance from 2e4 draws ≈ 1 %
    expect(variance / ((sd * sd) / n)).toBeLessThan(1.04);
  });
});

describe('medianInPlace', () => {
  it('medianInPlace(values, n) gives the middle order statistic (odd) and the mean of the two (even)', () => {
    expect(medianInPlace(Float64Array.of(5, 1, 4, 2, 3), 5)).toBe(3);
    expect(medianInPlace(Float64Array.of(5, 1, 4, 2), 4)).toBe(3);
    expect(medianInPlace(Float64Array.of(7), 1)).toBe(7);
    expect(Number.isNaN(medianInPlace(new Float64Array(0), 0))).toBe(true);
  });

  it('medianInPlace agrees with sorting on random data with ties', () => {
    const random = new Random(9);
    for (let trial = 0; trial < 200; trial++) {
      const n = 1 + random.integer(40);
      const values = new Float64Array(n);
      for (let i = 0; i < n; i++) values[i] = random.integer(7);
      const sorted = Array.from(values).sort((a, b) => a - b);
      const expected = n % 2 ? sorted[(n - 1) / 2] : 0.5 * (sorted[n / 2 - 1] + sorted[n / 2]);
      expect(medianInPlace(values, n)).toBe(expected);
    }
  });

  it('Var(median)/Var(mean) of normal steps is about π/2 (1.52 at N = 50 in detectors.md §1)', () => {
    // detectors.md §1 robust variants [V]: 1.52 at N = 50; asymptotically π/2 (Laplace), from memory
    const random = new Random(21);
    const n = 50, frames = 20000;
    const values = new Float64Array(n);
    let sm = 0, sm2 = 0, sa = 0, sa2 = 0;
    for (let f = 0; f < frames; f++) {
      let mean = 0;
      for (let i = 0; i < n; i++) { values[i] = random.normal(); mean += values[i]; }
      mean /= n;
      const median = medianInPlace(values, n);
      sm += median; sm2 += median * median; sa += mean; sa2 += mean * mean;
    }
    const ratio = (sm2 / frames - (sm / frames) ** 2) / (sa2 / frames - (sa / frames) ** 2);
    expect(ratio).toBeGreaterThan(1.45);
    expect(ratio).toBeLessThan(1.6);
  });
});
