import { describe, expect, it } from 'vitest';
import { AffineFlowTest } from '../../../src/detectors/drift/affineFlowTest.js';
import { DriftDetector } from '../../../src/detectors/drift/driftDetector.js';
import { clopperPearson, normalUpperTail } from '../../../src/stats/quantiles.js';
import { SyntheticSteps, makeContext, type SyntheticOptions } from './syntheticSteps.js';

// The drift detector on a fast camera: above 2·flowLookHz it takes the median step and the affine
// flow test on one frame in k. Invented sample: 1 µm beads in water at 25 °C (D = 0.49 µm²/s),
// σ = 20 nm, 1,000 frames/s on the "Harbour Street" bench's fast camera.
const D = 0.49;
const DT = 0.001;
const SIGMA = 0.02;
const context = makeContext(D, 1, SIGMA);

function source(seed: number, extra: Partial<SyntheticOptions> = {}): SyntheticSteps {
  return new SyntheticSteps({ seed, particles: 40, diffusion: D, sigma: SIGMA, frameInterval: DT, field: 60, meanTrackLength: Infinity, ...extra });
}

/** Median of the first n values (sorted copy; our own reference, not the detector's quickselect). */
function median(values: Float64Array, n: number): number {
  const sorted = Array.from(values.subarray(0, n)).sort((a, b) => a - b);
  return n % 2 === 1 ? sorted[(n - 1) / 2] : 0.5 * (sorted[n / 2 - 1] + sorted[n / 2]);
}

describe('DriftDetector flow looks at 1,000 frames/s', () => {
  it('new DriftDetector({ flowLookHz }) rejects a rate that is not positive', () => {
    expect(() => new DriftDetector({ flowLookHz: 0 })).toThrow(/flowLookHz/);
    expect(() => new DriftDetector({ flowLookHz: -5 })).toThrow(/flowLookHz/);
  });

  it('summary() takes the robust velocity, the mean-vs-median test and the F-test from the displacements between every k-th frame, as recomputed from those frames', () => {
    // Reference (our own, from the definitions in detectors.md §1): on the look frames (slots 0, 5,
    // 10, …) each track's displacement since the previous look (same row and id), per axis the
    // sorted-copy median, the mean and s²/N of those displacements; the robust velocity
    // Σmed/(W·kΔt) with SE √(π/2·Σ s²/N)/(W·kΔt); the last complete window's
    // z = (Σm − Σmed)/√((π/2 − 1)·Σ s²/N); and an AffineFlowTest fed those displacements.
    const k = 5;
    const windowFrames = 1000; // windowSeconds 1: frames with ≥ 2 one-frame steps
    const detector = new DriftDetector({ windowSeconds: 1, flowLookHz: 200 });
    const gen = source(1201, { meanTrackLength: 400, drift: () => [0.3, -0.2], subpopulationFraction: 0.1, subpopulationVelocity: [20, 0] });
    const kept = new Map<number, { id: number; slot: number; x: number; y: number }>();
    const run = { med: [0, 0], mean: [0, 0], variance: [0, 0], looks: 0 };
    let windowSums = { med: [0, 0], mean: [0, 0], variance: [0, 0], looks: 0 };
    let lastWindow = windowSums;
    let flow = new AffineFlowTest();
    let lastFlow = flow.result(k * DT);
    let inWindow = 0;
    const frames = 4500;
    for (let f = 0; f < frames; f++) {
      const steps = gen.next();
      detector.push(steps, context);
      if (steps.slot % k === 0) {
        const dx: number[] = [], dy: number[] = [], x0: number[] = [], y0: number[] = [];
        for (let p = 0; p < steps.count; p++) {
          const before = kept.get(steps.trackRow[p]);
          if (before && before.id === steps.trackId[p] && before.slot === steps.slot - k) {
            dx.push(steps.x[p] - before.x);
            dy.push(steps.y[p] - before.y);
            x0.push(before.x);
            y0.push(before.y);
          }
          kept.set(steps.trackRow[p], { id: steps.trackId[p], slot: steps.slot, x: steps.x[p], y: steps.y[p] });
        }
        const n = dx.length;
        if (n >= 2 && steps.stepCount >= 2) {
          const axes = [Float64Array.from(dx), Float64Array.from(dy)];
          for (let a = 0; a < 2; a++) {
            const values = axes[a];
            let mean = 0;
            for (let s = 0; s < n; s++) mean += values[s];
            mean /= n;
            let ss = 0;
            for (let s = 0; s < n; s++) ss += (values[s] - mean) ** 2;
            for (const sums of [run, windowSums]) {
              sums.med[a] += median(values, n);
              sums.mean[a] += mean;
              sums.variance[a] += ss / (n - 1) / n;
            }
          }
          run.looks++;
          windowSums.looks++;
          flow.addFrame(n, Float64Array.from(x0), Float64Array.from(y0), axes[0], axes[1]);
        }
      }
      if (steps.stepCount >= 2 && ++inWindow === windowFrames) {
        inWindow = 0;
        lastWindow = windowSums;
        windowSums = { med: [0, 0], mean: [0, 0], variance: [0, 0], looks: 0 };
        lastFlow = flow.result(k * DT);
        flow = new AffineFlowTest();
      }
    }
    const summary = detector.summary();
    expect(summary.flowLookFrames).toBe(k);
    expect(run.looks).toBeGreaterThan(850);
    const robust = summary.robustVelocity!;
    const duration = run.looks * k * DT;
    for (let a = 0; a < 2; a++) {
      const v = run.med[a] / duration;
      const se = Math.sqrt((Math.PI / 2) * run.variance[a]) / duration;
      expect(robust.value[a]).toBeCloseTo(v, 9);
      expect(robust.ci95[a][1] - robust.ci95[a][0]).toBeCloseTo(2 * 1.959963984540054 * se, 9);
    }
    // the drift itself: the movers (10 % at 20 µm/s) pull the mean, the median stays near the stage's 0.3
    expect(summary.velocity!.value[0]).toBeGreaterThan(robust.value[0]);
    expect(summary.frames).toBe(frames - 1); // every frame but the first (no steps yet)
    const zs = [0, 1].map((a) => (lastWindow.mean[a] - lastWindow.med[a]) / Math.sqrt((Math.PI / 2 - 1) * lastWindow.variance[a]));
    const p = Math.min(1, 4 * normalUpperTail(Math.max(Math.abs(zs[0]), Math.abs(zs[1]))));
    const sub = summary.flow.subpopulation!;
    expect(sub.pValue).toBeCloseTo(p, 9);
    expect(sub.meanMinusMedian[0]).toBeCloseTo((lastWindow.mean[0] - lastWindow.med[0]) / (lastWindow.looks * k * DT), 9);
    expect(summary.flow.fTest!.f).toBeCloseTo(lastFlow!.f, 6);
    expect(summary.flow.fTest!.df2).toBe(lastFlow!.df2);
  });

  it('push() at 1 kHz with no flow rejects the mean-vs-median and affine tests at about their nominal rate', { timeout: 120_000 }, () => {
    // Null windows (pure Brownian steps with a stage drift, which the affine model absorbs): each
    // window's p-values, read after the window closes, must reject at 5 % like the 33-ms tests do
    // (Clopper–Pearson interval of the rejections contains 0.05; detectors.md §7 protocol).
    let windows = 0;
    let rejectSub = 0;
    let rejectF = 0;
    for (const seed of [1301, 1302]) {
      const gen = source(seed, { particles: 30, drift: () => [0.2, 0.1] });
      const detector = new DriftDetector({ windowSeconds: 0.5, flowLookHz: 200 });
      for (let f = 0; f < 60_000; f++) {
        detector.push(gen.next(), context);
        if ((f + 1) % 500 !== 0) continue;
        const flow = detector.summary().flow;
        windows++;
        if (flow.subpopulation && flow.subpopulation.pValue < 0.05) rejectSub++;
        if (flow.fTest && flow.fTest.pValue < 0.05) rejectF++;
      }
    }
    const sub = clopperPearson(rejectSub, windows);
    const f = clopperPearson(rejectF, windows);
    console.log(`1 kHz flow null: ${windows} windows; mean-vs-median rejects ${rejectSub} (${sub[0].toFixed(3)}–${sub[1].toFixed(3)}), F-test ${rejectF} (${f[0].toFixed(3)}–${f[1].toFixed(3)})`);
    expect(windows).toBe(240);
    expect(sub[0]).toBeLessThanOrEqual(0.05);
    expect(sub[1]).toBeGreaterThanOrEqual(0.05);
    expect(f[0]).toBeLessThanOrEqual(0.05);
    expect(f[1]).toBeGreaterThanOrEqual(0.05);
  });

  it('push() at 1 kHz still names a rigid rotation and a fast subpopulation, looking at one frame in 5', () => {
    // As the 33-ms tests in driftDetector.test.ts: ω = 0.02 rad/s about the field centre (0.6 nm a
    // frame at 30 µm, against a Brownian step of 31 nm); then 20 % of the beads carried at 60 µm/s
    // with stage drift (0.3 µm a look, far outside the 70-nm Brownian spread of a 5-ms displacement:
    // the mean-vs-median test sees only movers that far out, at any frame rate).
    const rotating = source(1401, { rotation: 0.02 });
    const detector = new DriftDetector({ windowSeconds: 10 });
    for (let f = 0; f < 21_000; f++) detector.push(rotating.next(), context);
    const summary = detector.summary();
    expect(summary.flowLookFrames).toBe(5);
    expect(summary.flow.pattern).toBe('rotation');
    expect(summary.flow.rotation!).toBeCloseTo(0.02, 2);

    const movers = source(1402, { particles: 60, drift: () => [0.2, 0], subpopulationFraction: 0.2, subpopulationVelocity: [60, 0] });
    const second = new DriftDetector({ windowSeconds: 10 });
    const keys: string[] = [];
    for (let f = 0; f < 21_000; f++) for (const c of second.push(movers.next(), context)) if (c.level) keys.push(c.key);
    expect(keys).toContain('drift:flow');
    expect(second.summary().flow.subpopulation!.pValue).toBeLessThan(1e-3);
  });

  it('push() at 1 kHz takes a look over more tracks than the frame has one-frame steps (tracks back after a gap) without overrunning its buffers', () => {
    // 100 particles present on every frame, but only 10 of them with a one-frame step (as after
    // a gap for the others): the look, every 5th frame, pairs all 100 with the previous look
    const steps = source(17, { particles: 100 });
    const detector = new DriftDetector();
    let looks = 0;
    for (let f = 0; f < 400; f++) {
      const frame = steps.next();
      frame.stepCount = Math.min(frame.stepCount, 10);
      detector.push(frame, context);
      if (frame.slot % 5 === 0) looks++;
    }
    const summary = detector.summary();
    expect(summary.flowLookFrames).toBe(5);
    expect(looks).toBeGreaterThan(70);
    expect(summary.robustVelocity).not.toBeNull(); // the looks' medians were taken
  });
});
