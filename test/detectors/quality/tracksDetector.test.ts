import { describe, expect, it } from 'vitest';
import { TracksDetector } from '../../../src/detectors/quality/tracksDetector.js';
import type { Condition } from '../../../src/alerts/condition.js';
import { clopperPearson } from '../../../src/stats/quantiles.js';
import { Random } from '../../../src/stats/random.js';
import { PageCusum } from '../../../src/detectors/drift/pageCusum.js';
import { SyntheticSteps, makeContext, type SyntheticOptions } from '../drift/syntheticSteps.js';

const DT = 0.033;
const context = makeContext(0.49, 1);

function gen(seed: number, extra: Partial<SyntheticOptions>): SyntheticSteps {
  return new SyntheticSteps({ seed, particles: 40, diffusion: 0.49, sigma: 0.02, frameInterval: DT, field: 200, meanTrackLength: 500, ...extra });
}

function run(detector: TracksDetector, source: SyntheticSteps, frames: number, hook?: (f: number) => void): Condition[] {
  const out: Condition[] = [];
  for (let f = 0; f < frames; f++) {
    hook?.(f);
    out.push(...detector.push(source.next(), context));
  }
  return out;
}

describe('TracksDetector', () => {
  it('new TracksDetector(options) rejects bad options naming the option', () => {
    expect(() => new TracksDetector({ trackPrecision: 0 })).toThrow(/trackPrecision/);
    expect(() => new TracksDetector({ crowdingInfo: 0.02, crowdingWarn: 0.01 })).toThrow(/crowdingInfo/);
    expect(() => new TracksDetector({ minimumLongFraction: 1 })).toThrow(/minimumLongFraction/);
  });

  it('uses N_min = 76 steps for 20 % per-track precision at x = 0 (detectors.md §6d table)', () => {
    // detectors.md §6d, ε = 0 row
    expect(new TracksDetector().summary().minimumSteps).toBe(76);
  });

  it('warns "too short" when most steps are in tracks shorter than N_min, and not when tracks are long', () => {
    // detectors.md §6d rule: fewer than 50 % of steps in tracks with N ≥ N_min. Geometric lengths with mean 30
    // put e^{-76/30}·(1 + 76/30) ≈ 28 % of steps in long tracks; with mean 500, 99 % (arithmetic, by hand)
    const shortRun = run(new TracksDetector(), gen(1, { meanTrackLength: 30 }), 3000);
    expect(shortRun.some((c) => c.key === 'tracks:short' && c.level === 'warn')).toBe(true);
    const longDetector = new TracksDetector();
    const longRun = run(longDetector, gen(2, { meanTrackLength: 500 }), 6000);
    expect(longRun.some((c) => c.key === 'tracks:short' && c.level)).toBe(false);
    expect(longDetector.summary().longFraction!).toBeGreaterThan(0.9);
  });

  it('measures the long-step fraction of geometric track lengths close to its expectation', () => {
    // For a geometric length with mean m steps, the step-weighted share beyond N is ≈ e^{-N/m}(1 + N/m) (by hand)
    const detector = new TracksDetector({ windowSeconds: 1e6 });
    const source = gen(3, { meanTrackLength: 60 });
    let ended = 0, steps = 0, longSteps = 0;
    for (let f = 0; f < 8000; f++) {
      const s = source.next();
      detector.push(s, context);
      for (let i = 0; i < s.endedCount; i++) { ended++; steps += s.endedLength[i] - 1; if (s.endedLength[i] - 1 >= 76) longSteps += s.endedLength[i] - 1; }
    }
    const expected = Math.exp(-76 / 60) * (1 + 76 / 60);
    expect(longSteps / steps).toBeGreaterThan(expected - 0.05);
    expect(longSteps / steps).toBeLessThan(expected + 0.05);
    expect(ended).toBeGreaterThan(1000);
  });

  it('signals a fall of the median track length (mean length 300 → 100 frames) as warn', () => {
    // detectors.md §6d: CUSUM on log length of ended tracks against the baseline (Page 1954)
    const source = gen(4, { meanTrackLength: 300, particles: 60 });
    const detector = new TracksDetector();
    const change = 20000;
    const conditions = run(detector, source, 30000, (f) => { if (f === change) source.options.meanTrackLength = 100; });
    const raised = conditions.filter((c) => c.key === 'tracks:shorter' && c.level);
    expect(raised.length).toBeGreaterThan(0);
    expect(raised.some((c) => c.level === 'warn')).toBe(true);
    expect(raised[0].t).toBeGreaterThan(change * DT);
  });

  it('false "shorter" signals on null lengths occur at the rate of the configured chart on N(0, 1) scores', () => {
    // Page (1954) chart, h from Siegmund (1985) for ARL0 ≈ 1000 tracks; reference = our Monte Carlo of the same (k, h)
    // chart on exact N(0, 1) innovations; geometric lengths (far from log-normal) tested through the normal scores.
    const source = gen(7, { particles: 100, meanTrackLength: 20, field: 2000 });
    const tracksPerHour = (100 / 20) * (3600 / DT);
    // A large baseline cohort (≈ 10⁴ tracks): an error δ in the reference shifts the scores and changes ARL0 by
    // about e^{2δb} (Siegmund), so a small cohort makes any single run's rate differ from the design.
    const detector = new TracksDetector({ baselineTracks: 20000, falseWarnsPerHour: tracksPerHour / 1000 });
    run(detector, source, 48000);
    const summary = detector.summary();
    const { k, h, signals } = summary.cusum!;
    const armed = summary.endedTracks - summary.cusum!.baselineCompletions;
    const random = new Random(8);
    const ideal = new PageCusum(k, h);
    const draws = 2_000_000;
    for (let i = 0; i < draws; i++) ideal.push(random.normal());
    const [low, high] = clopperPearson(signals, armed);
    expect(low).toBeLessThan(ideal.signals / draws);
    expect(high).toBeGreaterThan(ideal.signals / draws);
  });

  it('publishes crowding ξ = ρ⟨s²⟩ and warns above 0.01 (confusion bound πξ/(1+πξ), detectors.md §5)', () => {
    // ρ = 40/200² µm⁻², ⟨s²⟩ = 4DΔt + 4σ² (step model, detectors.md preamble) ⇒ ξ = 6.6e-5: no condition
    const sparse = new TracksDetector();
    const quiet = run(sparse, gen(5, {}), 2000);
    const expected = (40 / (200 * 200)) * (4 * 0.49 * DT + 4 * 0.02 * 0.02);
    expect(sparse.summary().crowding! / expected).toBeGreaterThan(0.95);
    expect(sparse.summary().crowding! / expected).toBeLessThan(1.05);
    expect(quiet.some((c) => c.key === 'tracks:crowding')).toBe(false);
    // 300 particles in 20 × 20 µm at D = 0.49 µm²/s: ξ = 0.75 × 0.066 ≈ 0.05 ⇒ warn
    const crowded = new TracksDetector();
    const loud = run(crowded, gen(6, { particles: 300, field: 20 }), 2000);
    expect(loud.some((c) => c.key === 'tracks:crowding' && c.level === 'warn')).toBe(true);
    const xi = crowded.summary().crowding!;
    expect(crowded.summary().confusionBound).toBeCloseTo((Math.PI * xi) / (1 + Math.PI * xi), 12);
  });

  it('crowding from the pipeline\'s step sums (FrameSteps.sums) equals the pass over the steps', () => {
    // The same frames twice: once hand-made (no sums: the detector sums dx² + dy² itself), once with the
    // sums attached as the pipeline makes them; ξ must agree to rounding.
    const plain = new TracksDetector();
    const summed = new TracksDetector();
    const source = gen(7, { particles: 60, field: 50 });
    for (let f = 0; f < 1500; f++) {
      const frame = source.next();
      plain.push(frame, context);
      let squares = 0;
      for (let i = 0; i < frame.stepCount; i++) squares += frame.dx[i] * frame.dx[i] + frame.dy[i] * frame.dy[i];
      const sums = { steps: frame.stepCount, squares, pairs: 0, products: 0, sumX: 0, sumY: 0, residualSquares: 0, residualSquaresX: 0, residualSquaresY: 0, residualPairs: 0, residualProducts: 0 };
      summed.push({ ...frame, sums }, context);
    }
    const a = plain.summary().crowding!;
    expect(a).toBeGreaterThan(0);
    expect(summed.summary().crowding! / a).toBeCloseTo(1, 12);
  });
});
