import { describe, expect, it } from 'vitest';
import { brownianWindowStep } from '../../src/simulate/brownianWindowStep.js';
import { Random } from '../../src/stats/random.js';

describe('brownianWindowStep(random, D, duration, out)', () => {
  it('follows the random-walk rule: after N = 100 steps the RMS distance is √N·L = 10·L', () => {
    // Random-walk rule ⟨R²⟩ = N·L² (Pearson's random-walk problem, 1905; common practice) and the
    // 2-D Rayleigh moments of estimators.md §9 (exact for Brownian motion, NL² → 4Dt):
    // mean 0.886227·√N·L, median 0.832555·√N·L, P(R > R_rms) = e⁻¹.
    const random = new Random(20260101);
    const out = new Float64Array(2);
    const L = 1; // RMS step length, µm: each axis gets L²/2 = 2·D·h
    const h = 1; // s
    const D = (L * L) / 4 / h; // µm²/s
    const steps = 100;
    const walks = 20_000;
    const radii = new Float64Array(walks);
    let sumR2 = 0;
    let sumR4 = 0;
    for (let w = 0; w < walks; w++) {
      let x = 0;
      let y = 0;
      for (let s = 0; s < steps; s++) {
        brownianWindowStep(random, D, h, out);
        x += out[0];
        brownianWindowStep(random, D, h, out);
        y += out[0];
      }
      const r2 = x * x + y * y;
      radii[w] = Math.sqrt(r2);
      sumR2 += r2;
      sumR4 += r2 * r2;
    }
    const meanR2 = sumR2 / walks;
    const rms = Math.sqrt(meanR2);
    // tolerance 3·√(Var(R²)/M)/(2R_rms), estimators.md §9
    const tolerance = (3 * Math.sqrt((sumR4 / walks - meanR2 * meanR2) / walks)) / (2 * rms);
    expect(Math.abs(rms - 10 * L)).toBeLessThan(tolerance);
    const sorted = Float64Array.from(radii).sort();
    const mean = radii.reduce((a, b) => a + b, 0) / walks;
    const median = 0.5 * (sorted[walks / 2 - 1] + sorted[walks / 2]);
    const beyond = radii.filter((r) => r > 10 * L).length / walks;
    expect(Math.abs(mean / (10 * L) - 0.886227)).toBeLessThan(0.01); // Rayleigh mean, estimators.md §9 (3 MC SE)
    expect(Math.abs(median / (10 * L) - 0.832555)).toBeLessThan(0.01); // Rayleigh median, estimators.md §9
    expect(Math.abs(beyond - Math.exp(-1))).toBeLessThan(0.011); // P(R > R_rms) = e⁻¹, estimators.md §9 (3 binomial SE)
  });

  it('draws the window mean with Var = 2Dh/3 and Cov(end, mean) = Dh', () => {
    // Integrals of the Wiener covariance min(s, t) over a window (common practice, no source);
    // the 2D·t_E/3 blur term of Savin & Doyle 2005 (estimators.md §1) follows from them.
    const random = new Random(5);
    const out = new Float64Array(2);
    const D = 0.7;
    const h = 0.2;
    const n = 200_000;
    let se = 0;
    let sa = 0;
    let see = 0;
    let saa = 0;
    let sea = 0;
    for (let i = 0; i < n; i++) {
      brownianWindowStep(random, D, h, out);
      se += out[0];
      sa += out[1];
      see += out[0] * out[0];
      saa += out[1] * out[1];
      sea += out[0] * out[1];
    }
    const varEnd = see / n - (se / n) ** 2;
    const varMean = saa / n - (sa / n) ** 2;
    const cov = sea / n - (se / n) * (sa / n);
    expect(Math.abs(varEnd / (2 * D * h) - 1)).toBeLessThan(4 * Math.sqrt(2 / n));
    expect(Math.abs(varMean / ((2 * D * h) / 3) - 1)).toBeLessThan(4 * Math.sqrt(2 / n));
    expect(Math.abs(cov / (D * h) - 1)).toBeLessThan(0.015);
  });

  it('gives zero displacement for a zero-length window or D = 0', () => {
    // common practice, no source: no time, no motion
    const out = new Float64Array([9, 9]);
    brownianWindowStep(new Random(1), 1, 0, out);
    expect(out[0]).toBe(0);
    expect(out[1]).toBe(0);
    brownianWindowStep(new Random(1), 0, 1, out);
    expect(Math.abs(out[0]) + Math.abs(out[1])).toBe(0);
  });
});
