import { describe, expect, it } from 'vitest';
import { GammaCusum } from '../../../src/detectors/temperature/gammaCusum.js';

describe('GammaCusum', () => {
  describe('#push', () => {
    it('push(sum, shape, t) adds the Gamma log-likelihood ratio ℓ = n ln(1/q) + S(1/θ0 − 1/(qθ0))', () => {
      // Page (1954) CUSUM recursion on the LLR of Gamma(n, qθ0) against Gamma(n, θ0) (detectors.md §4)
      const chart = new GammaCusum(1.05, 6.5);
      chart.setBaseline(0.1, 1);
      chart.push(12.5, 100, 3);
      const expected = 100 * Math.log(1 / 1.05) + 12.5 * (1 / 0.1 - 1 / 0.105);
      expect(chart.value).toBeCloseTo(expected, 12);
      chart.push(10, 100, 4); // ℓ = −4.879 + 4.762 < 0 but W stays above 0
      expect(chart.value).toBeCloseTo(expected + 100 * Math.log(1 / 1.05) + 10 * (1 / 0.1 - 1 / 0.105), 12);
    });

    it('push keeps W >= 0 and dates the change at the frame after the last zero', () => {
      // Page (1954): W_t = max(0, W_{t−1} + ℓ_t); the last zero is the CUSUM's change-point estimate
      const chart = new GammaCusum(1.05, 6.5);
      chart.setBaseline(1, 1);
      chart.push(50, 100, 1); // S/n = 0.5: a strong negative increment
      expect(chart.value).toBe(0);
      expect(Number.isNaN(chart.changeTime)).toBe(true);
      chart.push(130, 100, 2);
      chart.push(130, 100, 3);
      expect(chart.changeTime).toBe(2);
      expect(chart.framesSinceZero).toBe(2);
    });

    it('push fires once W exceeds h, for a fall chart on smaller sums too', () => {
      // mirror chart with q < 1 (detectors.md §4): increments positive when S/(nθ0) < 1
      const chart = new GammaCusum(1 / 1.05, 2);
      chart.setBaseline(1, 1);
      let fired = false;
      let frames = 0;
      while (!fired && frames < 100) fired = chart.push(80, 100, ++frames);
      expect(fired).toBe(true);
      expect(chart.value).toBeGreaterThan(2);
    });

    it('push with a dispersion φ scales every increment by 1/φ', () => {
      // quasi-likelihood weighting (common practice, no source): φ = 2 halves each increment
      const plain = new GammaCusum(1.05, 100);
      const dispersed = new GammaCusum(1.05, 100);
      plain.setBaseline(1, 1);
      dispersed.setBaseline(1, 2);
      plain.push(120, 100, 1);
      dispersed.push(120, 100, 1);
      expect(dispersed.value).toBeCloseTo(plain.value / 2, 12);
    });

    it('push skips a frame with no shape or a non-finite sum', () => {
      const chart = new GammaCusum(1.05, 6.5);
      chart.setBaseline(1, 1);
      chart.push(130, 100, 1);
      const before = chart.value;
      chart.push(Number.NaN, 100, 2);
      chart.push(10, 0, 3);
      expect(chart.value).toBe(before);
    });
  });

  it('new GammaCusum(bad ratio or threshold) throws RangeError', () => {
    expect(() => new GammaCusum(1, 5)).toThrow(RangeError);
    expect(() => new GammaCusum(-2, 5)).toThrow(RangeError);
    expect(() => new GammaCusum(1.05, 0)).toThrow(RangeError);
  });
});
