import { describe, expect, it } from 'vitest';
import { GammaCusum } from '../../../src/detectors/temperature/gammaCusum.js';
import { gammaCusumArl } from '../../../src/detectors/temperature/gammaCusumArl.js';
import { gammaCusumThreshold } from '../../../src/detectors/temperature/gammaCusumThreshold.js';
import { Random } from '../../../src/stats/random.js';
import { gammaDraw } from './brownianSteps.js';

/** Run lengths of a GammaCusum on Gamma(shape, θ0·scaleRatio) draws (our own Monte Carlo). */
function simulatedRunLengths(seed: number, runs: number, h: number, q: number, shape: number, scaleRatio: number): number[] {
  const random = new Random(seed);
  const chart = new GammaCusum(q, h);
  const lengths: number[] = [];
  for (let run = 0; run < runs; run++) {
    chart.setBaseline(1, 1);
    let t = 0;
    for (;;) {
      t++;
      if (chart.push(gammaDraw(random, shape) * scaleRatio, shape, t)) break;
    }
    lengths.push(t);
  }
  return lengths;
}

const mean = (values: number[]): number => values.reduce((a, b) => a + b, 0) / values.length;
const sd = (values: number[]): number => {
  const m = mean(values);
  return Math.sqrt(values.reduce((a, b) => a + (b - m) ** 2, 0) / (values.length - 1));
};

describe('gammaCusumArl', () => {
  it('gammaCusumArl({ threshold: 6.5, ratio: 1.05, shape: 100 }) is about 9.6e3 frames', () => {
    // detectors.md §4 "Setting h": h = 6.5 gives ARL0 ≈ 9.6×10³ at N = 100, q = 1.05 [V, Monte Carlo]
    // (a Monte Carlo figure, so ±10 %)
    const arl0 = gammaCusumArl({ threshold: 6.5, ratio: 1.05, shape: 100 });
    expect(arl0).toBeGreaterThan(9.6e3 * 0.9);
    expect(arl0).toBeLessThan(9.6e3 * 1.1);
  });

  it('gammaCusumArl at the design shift is about h/KL = 50 frames (N = 100, q = 1.05, h = 6.5)', () => {
    // detectors.md §4 "Detection delay": KL = N(q − 1 − ln q) = 0.121, delay ≈ h/KL ≈ 50 frames [V]
    const arl1 = gammaCusumArl({ threshold: 6.5, ratio: 1.05, shape: 100, scaleRatio: 1.05 });
    const kl = 100 * (0.05 - Math.log(1.05));
    expect(arl1).toBeGreaterThan(0.85 * (6.5 / kl));
    expect(arl1).toBeLessThan(1.15 * (6.5 / kl));
  });

  it('gammaCusumArl respects Lorden\'s bound ARL0 >= e^h', () => {
    // Lorden (1971), Ann. Math. Stat. 42:1897: an LLR CUSUM with threshold h has ARL0 ≥ e^h
    for (const h of [2, 4, 6, 8]) {
      expect(gammaCusumArl({ threshold: h, ratio: 1.05, shape: 100 })).toBeGreaterThanOrEqual(Math.exp(h));
      expect(gammaCusumArl({ threshold: h, ratio: 1 / 1.05, shape: 100 })).toBeGreaterThanOrEqual(Math.exp(h));
    }
  });

  it('gammaCusumArl converges in the number of Markov-chain states', () => {
    // Brook & Evans (1972), Biometrika 59:539: the chain approximation converges as m grows
    const coarse = gammaCusumArl({ threshold: 6.5, ratio: 1.05, shape: 100, states: 40 });
    const fine = gammaCusumArl({ threshold: 6.5, ratio: 1.05, shape: 100, states: 200 });
    expect(Math.abs(coarse / fine - 1)).toBeLessThan(1e-3);
  });

  it('gammaCusumArl matches a Monte Carlo of the chart on Gamma draws (rise and fall, in and out of control)', () => {
    // Brook & Evans (1972) Markov-chain ARL against our seeded Monte Carlo of the same chart
    // (Gamma draws by Marsaglia & Tsang 2000); agreement within 3.5 standard errors of the MC mean.
    const cases = [
      { h: 4.5, q: 1.05, shape: 100, r: 1, runs: 400 },
      { h: 4.5, q: 1 / 1.05, shape: 100, r: 1, runs: 400 },
      { h: 6.5, q: 1.05, shape: 100, r: 1.05, runs: 400 },
      { h: 8, q: 1.03, shape: 49, r: 1.08, runs: 400 },
      { h: 8, q: 1 / 1.03, shape: 49, r: 0.9, runs: 400 },
    ];
    let seed = 11;
    for (const c of cases) {
      const lengths = simulatedRunLengths(seed++, c.runs, c.h, c.q, c.shape, c.r);
      const predicted = gammaCusumArl({ threshold: c.h, ratio: c.q, shape: c.shape, scaleRatio: c.r });
      const standardError = sd(lengths) / Math.sqrt(lengths.length);
      expect(Math.abs(mean(lengths) - predicted)).toBeLessThan(3.5 * standardError);
    }
  });

  it('gammaCusumArl(bad parameters) throws RangeError', () => {
    expect(() => gammaCusumArl({ threshold: 0, ratio: 1.05, shape: 100 })).toThrow(RangeError);
    expect(() => gammaCusumArl({ threshold: 5, ratio: 1, shape: 100 })).toThrow(RangeError);
    expect(() => gammaCusumArl({ threshold: 5, ratio: 1.05, shape: -1 })).toThrow(RangeError);
    expect(() => gammaCusumArl({ threshold: 5, ratio: 1.05, shape: 100, scaleRatio: 0 })).toThrow(RangeError);
    expect(() => gammaCusumArl({ threshold: 5, ratio: 1.05, shape: 100, states: 2.5 })).toThrow(RangeError);
  });
});

describe('gammaCusumThreshold', () => {
  it('gammaCusumThreshold({ arl0Frames: 9.6e3, ratio: 1.05, shape: 100 }) is about 6.5', () => {
    // detectors.md §4: h = 6.5 ↔ ARL0 ≈ 9.6×10³ [V]; ±0.15 nats covers the Monte Carlo error of that figure
    expect(Math.abs(gammaCusumThreshold({ arl0Frames: 9.6e3, ratio: 1.05, shape: 100 }) - 6.5)).toBeLessThan(0.15);
  });

  it('gammaCusumThreshold inverts gammaCusumArl', () => {
    // internal consistency of the secant search (Brook & Evans 1972 ARL on both sides)
    for (const [arl0, q, shape] of [[1e3, 1.03, 49], [1e6, 1.03, 99], [5e4, 1 / 1.03, 20]] as const) {
      const h = gammaCusumThreshold({ arl0Frames: arl0, ratio: q, shape });
      expect(gammaCusumArl({ threshold: h, ratio: q, shape, states: 50 }) / arl0).toBeCloseTo(1, 4);
      expect(h).toBeLessThan(Math.log(arl0)); // Lorden (1971): e^h ≤ ARL0
    }
  });

  it('gammaCusumThreshold with its default 50 states gives the wanted ARL0 of a 200-state chain within 5·10⁻⁴', () => {
    // Brook & Evans (1972) discretisation converges as 1/m² (Richardson-extrapolated here): the
    // coarser default must not move the designed ARL0 by more than a small fraction.
    for (const [arl0, q, shape] of [[9.6e3, 1.05, 100], [1e5, 1.03, 500], [5e4, 1 / 1.03, 2000], [2e4, 1.1, 40]] as const) {
      const h = gammaCusumThreshold({ arl0Frames: arl0, ratio: q, shape });
      expect(Math.abs(gammaCusumArl({ threshold: h, ratio: q, shape, states: 200 }) / arl0 - 1)).toBeLessThan(5e-4);
    }
  });

  it('gammaCusumThreshold(arl0Frames <= 1) throws RangeError', () => {
    expect(() => gammaCusumThreshold({ arl0Frames: 1, ratio: 1.05, shape: 100 })).toThrow(RangeError);
  });
});
