import { describe, expect, it } from 'vitest';
import { SegmentSpectrum } from '../../../src/detectors/vibration/segmentSpectrum.js';
import { Random } from '../../../src/stats/random.js';

describe('SegmentSpectrum', () => {
  it('new SegmentSpectrum(length) requires a power of two', () => {
    expect(() => new SegmentSpectrum(100)).toThrow(RangeError);
    expect(() => new SegmentSpectrum(4)).toThrow(RangeError);
  });

  describe('#compute', () => {
    it('compute gives the Hann window sums L/2 and 3L/8', () => {
      // Harris 1978 (Proc. IEEE 66:51) [from memory], Hann window: coherent gain 0.5, Σw²/L = 3/8
      const s = new SegmentSpectrum(256);
      expect(s.windowSum).toBeCloseTo(128, 9);
      expect(s.windowSumSquares).toBeCloseTo(96, 9);
    });

    it('compute matches a direct DFT of the windowed steps', () => {
      // Definition Z_i(f_j) = Σ_t w_t d_i(t) e^{−2πi jt/L} (detectors.md §2 step 3), checked by brute force
      const L = 32;
      const random = new Random(7);
      const rows = 3;
      const x = new Float64Array(rows * L);
      const y = new Float64Array(rows * L);
      for (let i = 0; i < x.length; i++) {
        x[i] = random.normal();
        y[i] = random.normal();
      }
      const s = new SegmentSpectrum(L);
      s.compute(x, y, rows);
      for (const j of [0, 1, 5, 16]) {
        let sumRe = 0;
        let sumIm = 0;
        let sumSq = 0;
        for (let r = 0; r < rows; r++) {
          let re = 0;
          let im = 0;
          for (let t = 0; t < L; t++) {
            const w = Math.sin((Math.PI * t) / L) ** 2;
            re += w * x[r * L + t] * Math.cos((2 * Math.PI * j * t) / L);
            im -= w * x[r * L + t] * Math.sin((2 * Math.PI * j * t) / L);
          }
          sumRe += re;
          sumIm += im;
          sumSq += re * re + im * im;
        }
        const between = (sumRe * sumRe + sumIm * sumIm) / rows;
        expect(s.between[0][j]).toBeCloseTo(between, 9);
        expect(s.within[0][j]).toBeCloseTo(sumSq - between, 9);
        expect(s.meanRe[0][j]).toBeCloseTo(sumRe / rows, 9);
      }
    });

    it('compute puts an on-bin sine of amplitude B at |Z| = B·L/4 with neighbours at half that', () => {
      // Harris 1978 [from memory]: Hann transform weights −¼, ½, −¼ (coherent gain 0.5, so |Z| = B/2 · L/2)
      const L = 64;
      const B = 0.7;
      const x = new Float64Array(L);
      for (let t = 0; t < L; t++) x[t] = B * Math.cos((2 * Math.PI * 9 * t) / L);
      const s = new SegmentSpectrum(L);
      s.compute(x, x, 1);
      expect(Math.sqrt(s.between[0][9])).toBeCloseTo((B * L) / 4, 9);
      expect(Math.sqrt(s.between[0][8])).toBeCloseTo((B * L) / 8, 9);
      expect(s.between[0][11]).toBeLessThan(1e-18);
    });
  });
});
