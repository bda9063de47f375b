import { describe, expect, it } from 'vitest';
import { lineAmplitude } from '../../../src/detectors/vibration/lineAmplitude.js';
import { SegmentSpectrum } from '../../../src/detectors/vibration/segmentSpectrum.js';
import { Random } from '../../../src/stats/random.js';

function segmentsWithLine(random: Random, K: number, N: number, L: number, bin: number, B: number, noise: number): SegmentSpectrum[] {
  const out: SegmentSpectrum[] = [];
  const x = new Float64Array(N * L);
  const y = new Float64Array(N * L);
  for (let k = 0; k < K; k++) {
    const phase = 2 * Math.PI * random.uniform();
    for (let i = 0; i < N; i++) {
      for (let t = 0; t < L; t++) {
        x[i * L + t] = B * Math.cos((2 * Math.PI * bin * t) / L + phase) + noise * random.normal();
        y[i * L + t] = noise * random.normal();
      }
    }
    const s = new SegmentSpectrum(L);
    s.compute(x, y, N);
    out.push(s);
  }
  return out;
}

describe('lineAmplitude', () => {
  it('lineAmplitude recovers B² of a noiseless line on and off bin (Parseval for the Hann window)', () => {
    // Parseval's theorem with Σw² = 3L/8 (Harris 1978, Proc. IEEE 66:51 [from memory]); ±2 bins hold the main lobe
    for (const bin of [30, 30.5, 30.25]) {
      const segs = segmentsWithLine(new Random(1), 3, 4, 256, bin, 0.02, 0);
      const r = lineAmplitude(segs, 0, Math.round(bin), 2);
      expect(Math.sqrt(r.squared) / 0.02).toBeGreaterThan(0.995);
      expect(Math.sqrt(r.squared) / 0.02).toBeLessThan(1.005);
    }
  });

  it('lineAmplitude subtracts the noise: no line gives B² ≈ 0 within its standard error', () => {
    // Unbiasedness of |Z̄|² − Σ|Z − Z̄|²/(N(N−1)) (one-way ANOVA expected mean squares, common practice)
    const random = new Random(2);
    let z = 0;
    const reps = 60;
    for (let r = 0; r < reps; r++) {
      const a = lineAmplitude(segmentsWithLine(random, 8, 12, 64, 20, 0, 1), 0, 20, 2);
      z += a.squared / a.squaredSe;
    }
    // mean of reps standardised values: |mean| < 3/√reps if unbiased with an honest SE
    expect(Math.abs(z / reps)).toBeLessThan(3 / Math.sqrt(reps));
  });

  it('lineAmplitude standard error matches the scatter of B² over seeds within 30 %', () => {
    // Var|a+e|² = |c|² + 2c·Re(āb) for complex Gaussian noise (Isserlis' theorem; common practice)
    const random = new Random(3);
    const values: number[] = [];
    let se = 0;
    const reps = 80;
    for (let r = 0; r < reps; r++) {
      const a = lineAmplitude(segmentsWithLine(random, 8, 12, 64, 20.4, 0.15, 1), 0, 20, 2);
      values.push(a.squared);
      se += a.squaredSe / reps;
    }
    const mean = values.reduce((s, v) => s + v, 0) / reps;
    const sd = Math.sqrt(values.reduce((s, v) => s + (v - mean) ** 2, 0) / (reps - 1));
    expect(mean).toBeGreaterThan(0.15 ** 2 - 3 * se / Math.sqrt(reps));
    expect(mean).toBeLessThan(0.15 ** 2 + 3 * se / Math.sqrt(reps));
    expect(se / sd).toBeGreaterThan(0.7);
    expect(se / sd).toBeLessThan(1.3);
  });
});
