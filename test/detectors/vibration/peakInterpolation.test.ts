import { describe, expect, it } from 'vitest';
import { peakInterpolation } from '../../../src/detectors/vibration/peakInterpolation.js';
import { SegmentSpectrum } from '../../../src/detectors/vibration/segmentSpectrum.js';

describe('peakInterpolation', () => {
  it('peakInterpolation is exact on a Gaussian peak', () => {
    // Gasior & Gonzalez 2004 (AIP Conf. Proc. 732:276) [from memory]: the log of a Gaussian is a parabola
    for (const centre of [-0.4, -0.1, 0, 0.25, 0.49]) {
      const g = (j: number): number => Math.exp(-((j - centre) ** 2) / 1.3);
      expect(peakInterpolation(g(-1), g(0), g(1))).toBeCloseTo(centre, 12);
    }
  });
  it('peakInterpolation of a Hann-windowed sine is within 0.05 bin', () => {
    // Gasior & Gonzalez 2004 [from memory]: Gaussian interpolation on a Hann spectrum has a bias of a few hundredths of a bin
    const L = 256;
    const spectrum = new SegmentSpectrum(L);
    const steps = new Float64Array(L);
    for (const trueBin of [20, 20.2, 20.5, 35.1, 35.37, 80.8]) {
      for (let t = 0; t < L; t++) steps[t] = Math.cos((2 * Math.PI * trueBin * t) / L + 0.3);
      spectrum.compute(steps, steps, 1);
      const p = spectrum.between[0];
      let j = 3;
      for (let b = 3; b < L / 2 - 1; b++) if (p[b] > p[j]) j = b;
      const estimate = j + peakInterpolation(p[j - 1], p[j], p[j + 1]);
      expect(Math.abs(estimate - trueBin)).toBeLessThan(0.05);
    }
  });
  it('peakInterpolation returns 0 for a non-positive power', () => {
    expect(peakInterpolation(0, 1, 0.5)).toBe(0);
    expect(peakInterpolation(Number.NaN, 1, 0.5)).toBe(0);
  });
});
