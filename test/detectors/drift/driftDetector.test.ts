import { describe, expect, it } from 'vitest';
import { DriftDetector } from '../../../src/detectors/drift/driftDetector.js';
import { AffineFlowTest } from '../../../src/detectors/drift/affineFlowTest.js';
import { siegmundArl } from '../../../src/detectors/drift/siegmundArl.js';
import type { Condition } from '../../../src/alerts/condition.js';
import { clopperPearson, normalQuantile } from '../../../src/stats/quantiles.js';
import { Random } from '../../../src/stats/random.js';
import { SyntheticSteps, makeContext, type SyntheticOptions } from './syntheticSteps.js';

// The worked example of detectors.md §1: 1 µm bead in water at 25 °C, D = 0.49 µm²/s, Δt = 33 ms, σ = 20 nm.
const D = 0.49;
const DT = 0.033;
const SIGMA = 0.02;
const FRAMES_PER_HOUR = 3600 / DT;
const context = makeContext(D, 1, SIGMA);

function base(seed: number, extra: Partial<SyntheticOptions> = {}): SyntheticOptions {
  return { seed, particles: 50, diffusion: D, sigma: SIGMA, frameInterval: DT, field: 60, meanTrackLength: Infinity, ...extra };
}

function run(detector: DriftDetector, source: SyntheticSteps, frames: number, onCondition?: (c: Condition, slot: number) => void): void {
  for (let f = 0; f < frames; f++) {
    const steps = source.next();
    for (const c of detector.push(steps, context)) onCondition?.(c, source.slot);
  }
}

function quantile(values: number[], p: number): number {
  const sorted = values.slice().sort((a, b) => a - b);
  return sorted[Math.min(sorted.length - 1, Math.floor(p * sorted.length))];
}

describe('DriftDetector', () => {
  describe('constructor', () => {
    it('new DriftDetector(options) rejects bad options with a RangeError naming the option', () => {
      expect(() => new DriftDetector({ falseWarnsPerHour: 0 })).toThrow(/falseWarnsPerHour/);
      expect(() => new DriftDetector({ tolerance: -1 })).toThrow(/tolerance/);
      expect(() => new DriftDetector({ stopFactor: 1 })).toThrow(/stopFactor/);
      expect(() => new DriftDetector({ windowSeconds: Number.NaN })).toThrow(/windowSeconds/);
      expect(() => new DriftDetector({ fiducialIds: [1.5] })).toThrow(/fiducialIds/);
      expect(() => new DriftDetector({ flowAlpha: 1 })).toThrow(/flowAlpha/);
    });
  });

  describe('#push on null streams', () => {
    it('signals at the design rate 1/ARL0 = 1e-3 per frame at a sensitive setting (heterogeneous D, drops)', () => {
      // Design: 4 charts × ARL0 4000 (Siegmund 1985 via siegmundThreshold); detectors.md §1 and §7 protocol.
      // Sensitive budget: total ARL0 = 1000 frames ⇒ falseWarnsPerHour = frames per hour / 900 (0.9 to the CUSUM).
      let signals = 0;
      let armedFrames = 0;
      const streams = 8;
      const frames = 25000;
      for (let s = 0; s < streams; s++) {
        const dropped = new Set<number>();
        const random = new Random(100 + s);
        for (let k = 0; k < frames; k++) if (random.uniform() < 0.01) dropped.add(k);
        const source = new SyntheticSteps(base(200 + s, { particles: 20, diffusion: (i) => D * (0.3 + 1.4 * ((i * 0.618) % 1)), dropped, meanTrackLength: 300 }));
        const detector = new DriftDetector({ falseWarnsPerHour: FRAMES_PER_HOUR / 900 });
        run(detector, source, frames);
        const summary = detector.summary();
        signals += summary.cusum?.signals ?? 0;
        armedFrames += summary.frames - 100;
      }
      const [low, high] = clopperPearson(signals, armedFrames);
      expect(low).toBeLessThan(1e-3);
      expect(high).toBeGreaterThan(1e-3);
    });

    it('gives no warn and a velocity CI that covers 0 at the stated 95 % rate', () => {
      // Increment-based CI, detectors.md §1 (95.5 % coverage in simulation [V]); Clopper–Pearson 1934 interval
      let covered = 0;
      let warns = 0;
      const streams = 200;
      for (let s = 0; s < streams; s++) {
        const source = new SyntheticSteps(base(1000 + s, { particles: 20, meanTrackLength: 200 }));
        const detector = new DriftDetector();
        run(detector, source, 400, (c) => { if (c.level === 'warn' || c.level === 'stop') warns++; });
        const v = detector.summary().velocity!;
        if (v.ci95[0][0] <= 0 && v.ci95[0][1] >= 0) covered++;
      }
      const [low, high] = clopperPearson(covered, streams);
      expect(low).toBeLessThan(0.95);
      expect(high).toBeGreaterThan(0.95);
      expect(warns).toBe(0);
    });

    it('a σ-only change (20 → 40 nm) does not raise a drift warning', () => {
      // negative control, detectors.md §4 synthetic tests (σ-only change); common practice
      const source = new SyntheticSteps(base(7, { sigma: (t) => (t < 100 ? 0.02 : 0.04) }));
      const detector = new DriftDetector();
      const levels: (string | null)[] = [];
      run(detector, source, 6000, (c) => levels.push(c.level));
      expect(levels.filter((l) => l === 'warn' || l === 'stop')).toHaveLength(0);
    });
  });

  describe('#push with injected drift', () => {
    it('detects v = 0.31 µm/s with median delay within 1.3× of the Siegmund ARL1 and a CI covering the truth', () => {
      // detectors.md §1 worked example (v = 0.31 µm/s, MSD bias 4.9 % at τ = 1 s) and synthetic-tests table
      const onset = 600;
      const delays: number[] = [];
      let covered = 0;
      let reference = 0;
      const seeds = 30;
      for (let s = 0; s < seeds; s++) {
        const source = new SyntheticSteps(base(300 + s, { drift: (t) => (t >= onset * DT - 1e-9 ? [0.31, 0] : [0, 0]) }));
        const detector = new DriftDetector();
        let first: Condition | undefined;
        let slot = 0;
        run(detector, source, onset + 3000, (c, at) => { if (!first && c.key === 'drift:stage' && c.level) { first = c; slot = at; } });
        if (!first) continue;
        delays.push(slot - onset);
        const cusum = detector.summary().cusum!;
        const sdMean = Math.sqrt((2 * D * DT + 2 * SIGMA * SIGMA) / 50);
        reference = siegmundArl((0.31 * DT) / sdMean, cusum.k, cusum.h);
        const v = detector.summary().recentVelocity!;
        if (v.ci95[0][0] <= 0.31 && v.ci95[0][1] >= 0.31) covered++;
      }
      expect(delays.length).toBe(seeds);
      const median = quantile(delays, 0.5);
      expect(median).toBeLessThan(1.3 * reference);
      expect(median).toBeGreaterThan(reference / 1.3);
      expect(covered).toBeGreaterThanOrEqual(24); // binomial(30, 0.95): P(< 24) < 0.1 %
    });

    it('rates v = 1 µm/s as stop (MSD bias 51 % at τ = 1 s) and v = 0.1 µm/s at most info', () => {
      // detectors.md §1 worked example table: 0.5 %, 4.9 %, 51 % bias at 0.1, 0.31, 1 µm/s
      const levelsFor = (v: number): Set<string> => {
        const source = new SyntheticSteps(base(41, { drift: (t) => (t > 10 ? [0, v] : [0, 0]) }));
        const detector = new DriftDetector();
        const levels = new Set<string>();
        run(detector, source, 2400, (c) => { if (c.key === 'drift:stage' && c.level) levels.add(c.level); });
        return levels;
      };
      expect(levelsFor(1).has('stop')).toBe(true);
      const slow = levelsFor(0.1);
      expect(slow.has('warn') || slow.has('stop')).toBe(false);
    });

    it('reports a 0.5 µm stage jump on the very frame, as warn, and once', () => {
      // detectors.md §1 synthetic tests: 0.5 µm jump, within 1 frame
      const source = new SyntheticSteps(base(51, { jumps: new Map([[700, [0.5, 0]]]) }));
      const detector = new DriftDetector();
      const raised: { slot: number; c: Condition }[] = [];
      run(detector, source, 1500, (c, slot) => { if (c.key === 'drift:jump' && c.level) raised.push({ slot, c }); });
      expect(raised).toHaveLength(1);
      expect(raised[0].slot).toBe(700);
      expect(raised[0].c.level).toBe('warn');
      expect(detector.summary().jumps[0].dx).toBeCloseTo(0.5, 1);
    });
  });

  describe('#push with flow', () => {
    it('20 % of particles moving fast plus stage drift 0.2 µm/s: median velocity near 0.2, flow flagged, mean biased', () => {
      // detectors.md §1 synthetic tests (moving subpopulation, mean bias f·u). The coordinate-wise median keeps a
      // bias s·Φ⁻¹(0.5/(1 − f)) per frame when the movers are far out (derived; common practice, no source), so the
      // check is against 0.2 µm/s plus that bias. Slow beads (D = 0.05 µm²/s, Δt = 0.1 s) so the movers (0.5 µm per
      // frame) are far outside the Brownian spread (0.10 µm).
      const dt = 0.1, d = 0.05;
      const source = new SyntheticSteps({ ...base(61), frameInterval: dt, diffusion: d, field: 2000, drift: () => [0.2, 0], subpopulationFraction: 0.2, subpopulationVelocity: [5, 0] });
      const detector = new DriftDetector({ windowSeconds: 20 });
      const keys: string[] = [];
      const slowContext = makeContext(d, 1, SIGMA);
      for (let f = 0; f < 1000; f++) for (const c of detector.push(source.next(), slowContext)) if (c.level) keys.push(c.key);
      const summary = detector.summary();
      const robust = summary.robustVelocity!;
      const se = (robust.ci95[0][1] - robust.ci95[0][0]) / 3.92;
      const stepSd = Math.sqrt(2 * d * dt + 2 * SIGMA * SIGMA);
      const medianBias = (stepSd * normalQuantile(0.5 / 0.8)) / dt;
      expect(Math.abs(robust.value[0] - (0.2 + medianBias))).toBeLessThan(2 * se);
      const mean = summary.velocity!;
      expect(mean.value[0]).toBeCloseTo(0.2 + 0.2 * 5, 1); // mean biased by f·u = 1 µm/s
      expect(robust.value[0]).toBeLessThan(0.2 + 0.5 * 0.2 * 5);
      expect(keys).toContain('drift:flow');
      expect(summary.flow.subpopulation!.pValue).toBeLessThan(1e-3);
    });

    it('rigid rotation about the field centre fires the affine test and is named rotation', () => {
      // detectors.md §1: affine model d = v + A(r − r̄), F-test of A = 0; ω = 0.02 rad/s (0.6 µm/s at 30 µm)
      const source = new SyntheticSteps(base(71, { rotation: 0.02 }));
      const detector = new DriftDetector({ windowSeconds: 10 });
      const flows: Condition[] = [];
      run(detector, source, 700, (c) => { if (c.key === 'drift:flow' && c.level) flows.push(c); });
      expect(flows.length).toBeGreaterThan(0);
      expect(flows[0].message).toMatch(/rotating/);
      expect(detector.summary().flow.pattern).toBe('rotation');
      expect(detector.summary().flow.rotation!).toBeCloseTo(0.02, 2);
    });

    it('uses fiducial beads only when fiducialIds is given', () => {
      // Fiducial markers give drift independently of the ensemble (detectors.md §1); 3 immobile beads, drift 0.3 µm/s
      const source = new SyntheticSteps(base(81, { fiducials: 3, drift: () => [0.3, -0.1], subpopulationFraction: 0.5, subpopulationVelocity: [3, 3] }));
      const detector = new DriftDetector({ fiducialIds: [1, 2, 3] });
      run(detector, source, 1000);
      const v = detector.summary().velocity!;
      expect(v.value[0]).toBeCloseTo(0.3, 1);
      expect(v.value[1]).toBeCloseTo(-0.1, 1);
      expect(detector.summary().method).toMatch(/fiducial/);
    });
  });

  describe('AffineFlowTest', () => {
    it('#result: p-values under the null reject at the nominal 5 % rate (Clopper–Pearson)', () => {
      // F-test of a linear hypothesis, exact for homoscedastic normal errors; common practice, no source
      const random = new Random(3);
      const n = 30;
      const x0 = new Float64Array(n), y0 = new Float64Array(n), dx = new Float64Array(n), dy = new Float64Array(n);
      let rejected = 0;
      const trials = 600;
      for (let trial = 0; trial < trials; trial++) {
        const test = new AffineFlowTest();
        for (let f = 0; f < 10; f++) {
          const common = random.normal();
          for (let i = 0; i < n; i++) {
            x0[i] = 50 * random.uniform(); y0[i] = 50 * random.uniform();
            dx[i] = common + random.normal(); dy[i] = random.normal();
          }
          test.addFrame(n, x0, y0, dx, dy);
        }
        if (test.result(1)!.pValue < 0.05) rejected++;
      }
      const [low, high] = clopperPearson(rejected, trials);
      expect(low).toBeLessThan(0.05);
      expect(high).toBeGreaterThan(0.05);
    });

    it('#result: the gradient and F agree with the two-pass least-squares fit, 10 mm from the origin, under a rotation', () => {
      // Reference: the normal equations formed from sums centred per frame in a second pass (common practice, no source)
      const random = new Random(4);
      const n = 200;
      const frames: { x0: Float64Array; y0: Float64Array; dx: Float64Array; dy: Float64Array }[] = [];
      const test = new AffineFlowTest();
      for (let f = 0; f < 20; f++) {
        const x0 = new Float64Array(n), y0 = new Float64Array(n), dx = new Float64Array(n), dy = new Float64Array(n);
        for (let i = 0; i < n; i++) {
          const px = 100 * random.uniform(), py = 100 * random.uniform();
          x0[i] = 10_000 + px; y0[i] = -10_000 + py;
          // rotation ω = 2e-4 per frame about the field's centre, plus a common step and noise (µm)
          dx[i] = -2e-4 * (py - 50) + 0.01 + 0.03 * random.normal();
          dy[i] = 2e-4 * (px - 50) - 0.02 + 0.03 * random.normal();
        }
        frames.push({ x0, y0, dx, dy });
        test.addFrame(n, x0, y0, dx, dy);
      }
      const S = { xx: 0, xy: 0, yy: 0, xu: 0, yu: 0, xv: 0, yv: 0, uu: 0, vv: 0 };
      for (const { x0, y0, dx, dy } of frames) {
        const mean = (a: Float64Array) => a.reduce((t, v) => t + v, 0) / n;
        const [mx, my, mu, mv] = [mean(x0), mean(y0), mean(dx), mean(dy)];
        for (let i = 0; i < n; i++) {
          const a = x0[i] - mx, b = y0[i] - my, u = dx[i] - mu, v = dy[i] - mv;
          S.xx += a * a; S.xy += a * b; S.yy += b * b; S.xu += a * u; S.yu += b * u; S.xv += a * v; S.yv += b * v; S.uu += u * u; S.vv += v * v;
        }
      }
      const det = S.xx * S.yy - S.xy * S.xy;
      const axy = (S.xx * S.yu - S.xy * S.xu) / det;
      const ayx = (S.yy * S.xv - S.xy * S.yv) / det;
      const axx = (S.yy * S.xu - S.xy * S.yu) / det;
      const ayy = (S.xx * S.yv - S.xy * S.xv) / det;
      const explained = axx * S.xu + axy * S.yu + ayx * S.xv + ayy * S.yv;
      const df2 = 2 * (20 * n - 20) - 4;
      const f = explained / 4 / ((S.uu + S.vv - explained) / df2);
      const result = test.result(1)!;
      expect(result.f / f).toBeCloseTo(1, 9);
      expect(result.rotation / (0.5 * (ayx - axy))).toBeCloseTo(1, 9);
      expect(result.rotation).toBeCloseTo(2e-4, 4); // the truth within 5e-5, about 3 SE (0.03/(29·√4000) ≈ 1.6e-5)
      expect(result.pattern).toBe('rotation');
    });
  });

  describe('#summary', () => {
    it('keeps the decimated path within pathPoints and ending at the cumulative common-mode step', () => {
      const source = new SyntheticSteps(base(91, { particles: 10 }));
      const detector = new DriftDetector({ pathPoints: 100 });
      run(detector, source, 5000);
      const { path, velocity } = detector.summary();
      expect(path.t.length).toBeLessThanOrEqual(100);
      expect(path.t.length).toBeGreaterThan(40);
      for (let i = 1; i < path.t.length; i++) expect(path.t[i]).toBeGreaterThan(path.t[i - 1]);
      // net displacement / duration (CONTRACTS §3): velocity × frames × Δt equals the path's end within a stride
      expect(velocity!.value[0] * 4999 * DT).toBeCloseTo(path.x[path.x.length - 1], 0);
    });
  });
});
