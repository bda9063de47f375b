import { describe, expect, it } from 'vitest';
import { baluevFalseAlarm, baluevThreshold } from '../../../src/detectors/vibration/baluevFalseAlarm.js';
import { lombScargle } from '../../../src/detectors/vibration/lombScargle.js';
import { clopperPearson } from '../../../src/stats/quantiles.js';
import { Random } from '../../../src/stats/random.js';

describe('baluevFalseAlarm', () => {
  it('baluevFalseAlarm(z) ≈ W e^{−z} √z for small values', () => {
    // Baluev 2008 (MNRAS 385:1279), as in detectors.md §2: FAP ≈ W e^{−z}√z, W = f_max √(4π Var t)
    const W = 50 * Math.sqrt(4 * Math.PI * 100);
    const z = 20;
    expect(baluevFalseAlarm(z, 50, 100) / (W * Math.exp(-z) * Math.sqrt(z))).toBeCloseTo(1, 3);
    expect(baluevFalseAlarm(0, 50, 100)).toBe(1);
  });
  it('baluevThreshold inverts baluevFalseAlarm', () => {
    for (const alpha of [0.1, 0.01, 1e-4, 1e-7]) {
      const z = baluevThreshold(alpha, 30, 40);
      expect(baluevFalseAlarm(z, 30, 40)).toBeCloseTo(alpha, 10);
    }
    expect(() => baluevThreshold(0, 30, 40)).toThrow(RangeError);
  });
  it('the highest Lomb–Scargle peak of white noise with 10 % drops exceeds z_0.05 at most about 5 % of the time', () => {
    // Baluev 2008: the bound is slightly conservative on a grid; detectors.md §2 [V]: target 0.01 gave 0.007 with 10 % drops
    const random = new Random(11);
    const slots = 600;
    const dt = 0.01;
    const t = new Float64Array(slots);
    const u = new Float64Array(slots);
    const out = new Float64Array(slots);
    const work = new Float64Array(7 * slots);
    let exceed = 0;
    const reps = 300;
    for (let rep = 0; rep < reps; rep++) {
      let n = 0;
      for (let s = 0; s < slots; s++) {
        if (random.uniform() < 0.1) continue;
        t[n] = s * dt;
        u[n] = random.normal();
        n++;
      }
      let mean = 0;
      for (let i = 0; i < n; i++) mean += t[i] / n;
      let variance = 0;
      for (let i = 0; i < n; i++) variance += (t[i] - mean) ** 2 / n;
      const span = slots * dt;
      const df = 1 / (2 * span);
      const last = slots - 2;
      lombScargle(t, u, n, df, 1, last, out, work);
      let max = 0;
      for (let j = 0; j < last; j++) max = Math.max(max, out[j]);
      if (max > baluevThreshold(0.05, last * df, variance)) exceed++;
    }
    const [low, high] = clopperPearson(exceed, reps);
    expect(high).toBeGreaterThan(0.025); // not grossly conservative
    expect(low).toBeLessThan(0.05); // not anticonservative
    expect(exceed / reps).toBeLessThan(0.075);
  });
});
