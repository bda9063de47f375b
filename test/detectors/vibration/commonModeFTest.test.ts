import { describe, expect, it } from 'vitest';
import { commonModeFTest } from '../../../src/detectors/vibration/commonModeFTest.js';
import { SegmentSpectrum } from '../../../src/detectors/vibration/segmentSpectrum.js';
import { clopperPearson, fQuantile } from '../../../src/stats/quantiles.js';
import { Random } from '../../../src/stats/random.js';

function whiteSegments(random: Random, K: number, N: number, L: number, commonAmplitude = 0): SegmentSpectrum[] {
  const out: SegmentSpectrum[] = [];
  const x = new Float64Array(N * L);
  const y = new Float64Array(N * L);
  for (let k = 0; k < K; k++) {
    const phase = 2 * Math.PI * random.uniform();
    for (let i = 0; i < N; i++) {
      // unequal variances across particles (heterogeneous D) are allowed by the F-test only approximately; keep them equal here
      for (let t = 0; t < L; t++) {
        const common = commonAmplitude * Math.cos((2 * Math.PI * 20.3 * t) / L + phase);
        x[i * L + t] = random.normal() + common;
        y[i * L + t] = random.normal();
      }
    }
    const s = new SegmentSpectrum(L);
    s.compute(x, y, N);
    out.push(s);
  }
  return out;
}

describe('commonModeFTest', () => {
  it('commonModeFTest rejects no segments and alpha outside (0, 1)', () => {
    expect(() => commonModeFTest([], 0.1, 'separate')).toThrow(RangeError);
    const segs = whiteSegments(new Random(1), 2, 3, 16);
    expect(() => commonModeFTest(segs, 0, 'separate')).toThrow(RangeError);
    expect(() => commonModeFTest(segs, 1, 'combined')).toThrow(RangeError);
  });

  it('commonModeFTest has degrees of freedom 2K and 2Σ(N_k−1), and tests bins 2…L/2−1', () => {
    // Shumway 1970 (JASA 65:1527): F ~ F(2K, 2Σ(N_k−1)) under H0; detectors.md §2 threshold (exclude DC, bin 1, Nyquist)
    const segs = whiteSegments(new Random(2), 4, 10, 64);
    const r = commonModeFTest(segs, 0.05, 'separate');
    expect(r.df1).toBe(8);
    expect(r.df2).toBe(72);
    expect(r.firstBin).toBe(2);
    expect(r.lastBin).toBe(31);
    expect(Number.isNaN(r.statistic.x[0])).toBe(true);
    expect(Number.isNaN(r.statistic.x[1])).toBe(true);
    expect(Number.isNaN(r.statistic.x[32])).toBe(true);
    // Šidák over 2M = 60 tests
    expect(r.perBinAlpha).toBeCloseTo(1 - 0.95 ** (1 / 60), 12);
    expect(r.threshold).toBeCloseTo(fQuantile(1 - r.perBinAlpha, 8, 72), 9);
    const c = commonModeFTest(segs, 0.05, 'combined');
    expect(c.threshold).toBeCloseTo(fQuantile(1 - c.perBinAlpha, 16, 144), 9);
  });

  it('commonModeFTest per-bin F is F(2K, 2Σ(N−1)) under independent white series', () => {
    // Shumway 1970: null distribution; F-distribution mean d2/(d2 − 2) (Abramowitz & Stegun 1964, 26.6.11)
    const random = new Random(3);
    let exceed = 0;
    let count = 0;
    let sum = 0;
    const q95 = fQuantile(0.95, 8, 2 * 4 * 11);
    for (let rep = 0; rep < 40; rep++) {
      const r = commonModeFTest(whiteSegments(random, 4, 12, 64), 0.05, 'separate');
      for (let j = r.firstBin; j <= r.lastBin; j++) {
        for (const v of [r.statistic.x[j], r.statistic.y[j]]) {
          count++;
          sum += v;
          if (v > q95) exceed++;
        }
      }
    }
    const [low, high] = clopperPearson(exceed, count);
    // bins of one periodogram are nearly independent for white noise; the interval should hold 0.05
    expect(low).toBeLessThan(0.05);
    expect(high).toBeGreaterThan(0.05);
    expect(sum / count).toBeGreaterThan(88 / 86 - 0.05);
    expect(sum / count).toBeLessThan(88 / 86 + 0.05);
  });

  it('commonModeFTest finds a common line: E[F] ≈ 1 + N·S_common/S_indep at its bin', () => {
    // detectors.md §2 step 4: in general E[F] ≈ 1 + N·S_common(f)/S_indep(f)
    const r = commonModeFTest(whiteSegments(new Random(4), 6, 20, 128, 0.3), 0.01, 'separate');
    let peak = r.firstBin;
    for (let j = r.firstBin; j <= r.lastBin; j++) if (r.statistic.x[j] > r.statistic.x[peak]) peak = j;
    expect(Math.abs(peak - 20.3)).toBeLessThanOrEqual(1);
    expect(r.statistic.x[peak]).toBeGreaterThan(r.threshold);
    let yMax = 0;
    for (let j = r.firstBin; j <= r.lastBin; j++) yMax = Math.max(yMax, r.statistic.y[j]);
    expect(yMax).toBeLessThan(r.threshold * 2);
  });
});
