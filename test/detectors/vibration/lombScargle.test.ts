import { describe, expect, it } from 'vitest';
import { lombScargle } from '../../../src/detectors/vibration/lombScargle.js';
import { Random } from '../../../src/stats/random.js';

describe('lombScargle', () => {
  it('lombScargle of evenly spaced data is the classical periodogram |DFT|²/n at Fourier frequencies', () => {
    // Scargle 1982 (ApJ 263:835): with even sampling the periodogram reduces to the classical one
    const n = 64;
    const random = new Random(1);
    const t = new Float64Array(n);
    const u = new Float64Array(n);
    for (let i = 0; i < n; i++) {
      t[i] = i * 0.01;
      u[i] = random.normal();
    }
    const df = 1 / (n * 0.01);
    const out = new Float64Array(40);
    lombScargle(t, u, n, df, 1, 31, out);
    for (const j of [1, 7, 20, 31]) {
      let re = 0;
      let im = 0;
      for (let i = 0; i < n; i++) {
        re += u[i] * Math.cos((2 * Math.PI * j * i) / n);
        im += u[i] * Math.sin((2 * Math.PI * j * i) / n);
      }
      expect(out[j - 1]).toBeCloseTo((re * re + im * im) / n, 9);
    }
  });

  it('lombScargle of unit white noise at uneven times averages 1 (exponential with mean 1)', () => {
    // Scargle 1982: under H0 with known unit variance the normalised power is exponential, mean 1
    const random = new Random(2);
    const n = 300;
    const t = new Float64Array(n);
    const u = new Float64Array(n);
    let sum = 0;
    let count = 0;
    for (let rep = 0; rep < 40; rep++) {
      let time = 0;
      for (let i = 0; i < n; i++) {
        time += 0.01 * (1 + (random.uniform() < 0.1 ? 1 : 0));
        t[i] = time;
        u[i] = random.normal();
      }
      const out = new Float64Array(100);
      lombScargle(t, u, n, 1 / time, 3, 102, out);
      for (const v of out) {
        sum += v;
        count++;
      }
    }
    // SD of the mean of 4000 nearly independent Exp(1) draws ≈ 0.016
    expect(Math.abs(sum / count - 1)).toBeLessThan(0.06);
  });

  it('lombScargle finds a sine at uneven times at its frequency with power ≈ n·B²/4', () => {
    // Lomb 1976 (Astrophys. Space Sci. 39:447): least-squares fit of a sinusoid; χ² reduction n·B²/2
    const random = new Random(3);
    const n = 1000;
    const t = new Float64Array(n);
    const u = new Float64Array(n);
    let time = 0;
    for (let i = 0; i < n; i++) {
      time += 0.01 * (1 + (random.uniform() < 0.2 ? 1 : 0));
      t[i] = time;
      u[i] = 0.5 * Math.cos(2 * Math.PI * 17.3 * time + 1) + random.normal();
    }
    const df = 0.01;
    const out = new Float64Array(5000);
    lombScargle(t, u, n, df, 100, 4999, out);
    let best = 0;
    for (let j = 0; j < out.length; j++) if (out[j] > out[best]) best = j;
    expect(Math.abs((best + 100) * df - 17.3)).toBeLessThan(0.02);
    expect(out[best]).toBeGreaterThan((n * 0.25) / 4 * 0.7);
    expect(out[best]).toBeLessThan((n * 0.25) / 4 * 1.4);
  });

  it('lombScargle of two series in one pass equals two single-series calls', () => {
    // Invariant (STYLE §15: batch equals combined), no outside source needed
    const random = new Random(4);
    const n = 200;
    const t = new Float64Array(n);
    const u = new Float64Array(n);
    const v = new Float64Array(n);
    for (let i = 0; i < n; i++) {
      t[i] = i * 0.01 + 0.003 * random.uniform();
      u[i] = random.normal();
      v[i] = random.normal();
    }
    const a = lombScargle(t, u, n, 0.5, 2, 99, new Float64Array(98));
    const b = lombScargle(t, v, n, 0.5, 2, 99, new Float64Array(98));
    const both = new Float64Array(98);
    const first = lombScargle(t, u, n, 0.5, 2, 99, new Float64Array(98), undefined, v, both);
    for (let j = 0; j < 98; j++) {
      expect(first[j]).toBeCloseTo(a[j], 10);
      expect(both[j]).toBeCloseTo(b[j], 10);
    }
  });

  it('lombScargle rejects a bad grid', () => {
    expect(() => lombScargle(new Float64Array(2), new Float64Array(2), 2, 0, 1, 2, new Float64Array(2))).toThrow(RangeError);
  });
});
