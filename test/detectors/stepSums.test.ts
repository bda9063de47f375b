import { describe, expect, it } from 'vitest';
import { createDetectors } from '../../src/detectors/createDetectors.js';
import type { Detector } from '../../src/detectors/detector.js';
import type { FrameSteps, StepSums } from '../../src/detectors/frameSteps.js';
import type { Frame } from '../../src/frame.js';
import { Pipeline } from '../../src/pipeline/pipeline.js';
import type { ResolvedPipelineOptions } from '../../src/pipeline/pipelineOptions.js';
import { refreshContext } from '../../src/pipeline/refreshContext.js';
import { Random } from '../../src/stats/random.js';
import { StepCovarianceRing } from '../../src/detectors/temperature/stepCovarianceRing.js';
import { brownianFrames } from '../helpers/brownianFrames.js';

// Invariant: FrameSteps.sums, which the pipeline reads off its own CVE sums, must equal the sums
// of their definition (the covariance-based estimator's terms, Vestergaard, Blainey & Flyvbjerg
// 2014, Phys. Rev. E 89:022726), and the detectors that use them must decide as they do when
// they form the sums themselves (common practice, no source).

/** Free diffusion with drift, track turnover, particles missing from frames, dropped frames and a frame with one step. */
function awkwardFrames(): Frame[] {
  const random = new Random(77);
  const frames = brownianFrames({ seed: 12, particles: 60, frames: 900, frameInterval: 0.02, diffusion: 0.4, sigma: 0.02, drift: [0.3, -0.2], trackFrames: 300 });
  const out: Frame[] = [];
  frames.forEach((frame, f) => {
    if (f % 97 === 50) return; // a dropped frame: a slot gap
    let keep = Array.from({ length: frame.count }, (_, i) => i).filter(() => random.uniform() > 0.04);
    if (f === 400) keep = [keep[0]]; // next frame's steps follow a frame of one step
    const floats = (a: Float64Array) => Float64Array.from(keep, (i) => a[i]);
    out.push({ ...frame, count: keep.length, x: floats(frame.x), y: floats(frame.y), id: Uint32Array.from(keep, (i) => (frame.id as Uint32Array)[i]) });
  });
  return out;
}

/** The sums of their definition, from the frame's steps and each track's previous step. */
class DefinitionSums {
  private readonly previous = new Map<number, { slot: number; dx: number; dy: number; rx: number; ry: number }>();
  private lastStepSlot = -2;
  private lastStepCount = 0;

  of(steps: FrameSteps): StepSums {
    const n = steps.stepCount;
    let mx = 0, my = 0;
    for (let s = 0; s < n; s++) { mx += steps.dx[s]; my += steps.dy[s]; }
    mx /= Math.max(1, n);
    my /= Math.max(1, n);
    const sums: StepSums = { steps: n, squares: 0, pairs: 0, products: 0, sumX: 0, sumY: 0, residualSquares: 0, residualSquaresX: 0, residualSquaresY: 0, residualPairs: 0, residualProducts: 0 };
    const residualPairsCount = this.lastStepSlot === steps.slot - 1 && this.lastStepCount >= 2;
    for (let s = 0; s < n; s++) {
      const id = steps.trackId[steps.stepParticle[s]];
      const dx = steps.dx[s], dy = steps.dy[s], rx = dx - mx, ry = dy - my;
      sums.squares += dx * dx + dy * dy;
      sums.sumX += dx;
      sums.sumY += dy;
      sums.residualSquares += rx * rx + ry * ry;
      sums.residualSquaresX += rx * rx;
      sums.residualSquaresY += ry * ry;
      const before = this.previous.get(id);
      if (before && before.slot === steps.slot - 1) {
        sums.pairs++;
        sums.products += dx * before.dx + dy * before.dy;
        if (residualPairsCount) {
          sums.residualPairs++;
          sums.residualProducts += rx * before.rx + ry * before.ry;
        }
      }
      this.previous.set(id, { slot: steps.slot, dx, dy, rx, ry });
    }
    if (n > 0) {
      this.lastStepSlot = steps.slot;
      this.lastStepCount = n;
    }
    return sums;
  }
}

/** Compares numbers deep inside two summaries to a relative 1e-9 (the sums are added in another order). */
function expectClose(a: unknown, b: unknown, path = ''): void {
  if (typeof a === 'number' && typeof b === 'number') {
    if (Number.isNaN(a) || Number.isNaN(b)) expect(Number.isNaN(a), path).toBe(Number.isNaN(b));
    else expect(Math.abs(a - b), path).toBeLessThanOrEqual(1e-9 * Math.max(1, Math.abs(a), Math.abs(b)));
    return;
  }
  if (a === null || b === null || typeof a !== 'object' || typeof b !== 'object') {
    expect(a, path).toEqual(b);
    return;
  }
  expect(Object.keys(a as object).sort(), path).toEqual(Object.keys(b as object).sort());
  for (const key of Object.keys(a as object)) expectClose((a as Record<string, unknown>)[key], (b as Record<string, unknown>)[key], `${path}.${key}`);
}

describe('FrameSteps.sums', () => {
  it('equals the sums of their definition on every frame, across drift, turnover, gaps, dropped frames and a frame of one step', () => {
    const definition = new DefinitionSums();
    let checked = 0;
    let residualPairsSkipped = false;
    const probe: Detector = {
      name: 'probe',
      push(steps) {
        const expected = definition.of(steps);
        const got = steps.sums as StepSums;
        expect(got.steps).toBe(expected.steps);
        expect(got.pairs).toBe(expected.pairs);
        expect(got.residualPairs).toBe(expected.residualPairs);
        for (const key of ['squares', 'products', 'sumX', 'sumY', 'residualSquares', 'residualSquaresX', 'residualSquaresY', 'residualProducts'] as const) {
          expect(Math.abs(got[key] - expected[key])).toBeLessThanOrEqual(1e-12 * Math.max(1, Math.abs(expected[key])));
        }
        if (expected.pairs > 0 && expected.residualPairs === 0) residualPairsSkipped = true;
        checked++;
        return [];
      },
      summary: () => ({}),
    };
    const pipeline = new Pipeline({ frameInterval: 0.02, exposure: 0 }, () => [probe]);
    for (const frame of awkwardFrames()) pipeline.push(frame);
    expect(checked).toBeGreaterThan(800);
    expect(residualPairsSkipped).toBe(true); // the frame after the one-step frame was seen
  });

  it('leaves the noise, temperature, drift and vibration detectors deciding exactly as when they form the sums themselves', () => {
    const withoutSums = (detector: Detector): Detector => ({
      name: `${detector.name}-own`,
      push: (steps, context) => detector.push({ ...steps, sums: undefined }, context),
      summary: () => detector.summary(),
    });
    const names = ['noise', 'temperature', 'drift', 'vibration'];
    const pick = (options: ResolvedPipelineOptions) => createDetectors(options).filter((d) => names.includes(d.name));
    const conditions: Record<string, string[]> = {};
    const made: Detector[] = [];
    const inner: Detector[] = []; // the detectors themselves: those given the sums first
    const detectors = (options: ResolvedPipelineOptions): Detector[] => {
      const first = pick(options);
      const second = pick(options);
      inner.push(...first, ...second);
      made.push(...first, ...second.map(withoutSums));
      return made.map((d) => ({
        name: d.name,
        push: (steps, context) => {
          const raised = d.push(steps, context);
          (conditions[d.name] ??= []).push(...raised.map((c) => `${steps.frameIndex}:${c.key}:${c.level}`));
          return raised;
        },
        summary: () => d.summary(),
      }));
    };
    // noise blocks of 100 frames and a short temperature burn-in, so that both decide within the run
    const pipeline = new Pipeline(
      { frameInterval: 0.02, exposure: 0, radius: 0.5, temperature: 22, detectors: { noise: { blockFrames: 100 }, temperature: { burnInSteps: 5000 } } },
      detectors,
      refreshContext,
    );
    for (const frame of awkwardFrames()) pipeline.push(frame);
    const summaries = Object.fromEntries(made.map((d) => [d.name, d.summary() as Record<string, unknown>]));
    expect((summaries.noise.blocks as number)).toBeGreaterThan(5);
    expect(((summaries.drift.path as { t: number[] }).t.length)).toBeGreaterThan(10);
    expect(conditions.drift?.length).toBeGreaterThan(0); // the 0.36 µm/s drift was reported
    // the vibration detector's per-frame mean-step record (for Lomb–Scargle when frames are missing) is not in its summary
    type MeanStepRecord = { lsX: Float64Array; lsY: Float64Array; lsScale: Float64Array; lsCount: number };
    const given = inner.find((d) => d.name === 'vibration') as unknown as MeanStepRecord;
    const own = inner.find((d) => d.name === 'vibration' && d !== (given as unknown)) as unknown as MeanStepRecord;
    expect(given.lsCount).toBeGreaterThan(100);
    expect(own.lsCount).toBe(given.lsCount);
    for (const key of ['lsX', 'lsY', 'lsScale'] as const) expectClose(Array.from(given[key]), Array.from(own[key]), key);
    for (const name of names) {
      expectClose(summaries[name], summaries[`${name}-own`], name);
      expect(conditions[name] ?? [], name).toEqual(conditions[`${name}-own`] ?? []);
    }
  });

  it('leaves the drift detector deciding exactly as without the sums at 1,000 frames/s, where it looks at one frame in 5 and takes the other frames from the sums alone', () => {
    const frames = brownianFrames({ seed: 31, particles: 80, frames: 6000, frameInterval: 0.001, diffusion: 0.4, sigma: 0.02, drift: [2, -1.5], trackFrames: 1500 });
    const conditions: Record<string, string[]> = {};
    const made: Detector[] = [];
    const detectors = (options: ResolvedPipelineOptions): Detector[] => {
      const [given] = createDetectors(options).filter((d) => d.name === 'drift');
      const [own] = createDetectors(options).filter((d) => d.name === 'drift');
      made.push(given, own);
      return [
        { name: 'given', push: (steps, context) => record('given', steps, given.push(steps, context)), summary: () => given.summary() },
        { name: 'own', push: (steps, context) => record('own', steps, own.push({ ...steps, sums: undefined }, context)), summary: () => own.summary() },
      ];
    };
    const record = (name: string, steps: FrameSteps, raised: readonly { key: string; level: string | null }[]) => {
      (conditions[name] ??= []).push(...raised.map((c) => `${steps.frameIndex}:${c.key}:${c.level}`));
      return raised as never;
    };
    const pipeline = new Pipeline({ frameInterval: 0.001, exposure: 0, radius: 0.5, temperature: 22 }, detectors, refreshContext);
    for (const frame of frames) pipeline.push(frame);
    const [given, own] = made.map((d) => d.summary() as Record<string, unknown>);
    expect(given.flowLookFrames).toBe(5);
    expect((given.frames as number)).toBeGreaterThan(5000);
    expectClose(given, own, 'drift at 1 kHz');
    expect(conditions.given ?? []).toEqual(conditions.own ?? []);
  });

  it('gives the temperature detector\'s step ring the same sums over any run of frames as the ring forms itself', () => {
    const given = new StepCovarianceRing(4096);
    const own = new StepCovarianceRing(4096);
    const probe: Detector = {
      name: 'probe',
      push(steps) {
        given.push(steps);
        own.push({ ...steps, sums: undefined });
        expect(Math.abs(given.lastStatistic - own.lastStatistic)).toBeLessThanOrEqual(1e-12 * Math.max(1, own.lastStatistic));
        expect(given.lastShape).toBe(own.lastShape);
        return [];
      },
      summary: () => ({}),
    };
    const pipeline = new Pipeline({ frameInterval: 0.02, exposure: 0 }, () => [probe]);
    for (const frame of awkwardFrames()) pipeline.push(frame);
    for (const frames of [1, 2, 7, 50, 400, 500, 4096]) expectClose(given.sumSince(frames), own.sumSince(frames), `last ${frames} frames`);
  });
});
