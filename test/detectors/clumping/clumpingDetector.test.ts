import { describe, expect, it } from 'vitest';
import type { Condition } from '../../../src/alerts/condition.js';
import { ClumpingDetector, type ClumpingOptions, type SignalName } from '../../../src/detectors/clumping/clumpingDetector.js';
import { clopperPearson } from '../../../src/stats/quantiles.js';
import { ClumpingSteps, makeContext, type ClumpingStepsOptions } from './clumpingSteps.js';

// Invented sample: 1 µm polystyrene beads (r = 0.5 µm) in water at 20 °C, D = 0.43 µm²/s,
// imaged at 20 frames/s on the "Harbour Street colloid bench".
const D = 0.43;
const DT = 0.05;
const SIGMA = 0.02;
const context = makeContext(D, SIGMA, 0.5);

interface RunResult {
  detector: ClumpingDetector;
  conditions: Condition[];
  generator: ClumpingSteps;
  firstWarn: number | null;
  pairsAtWarn: [number, number][];
  truePairsAtWarn: [number, number][];
}

function run(gen: Partial<ClumpingStepsOptions> & { seed: number }, seconds: number, options: Partial<ClumpingOptions> = {}, ctx = context): RunResult {
  const generator = new ClumpingSteps({ particles: 40, box: 50, field: 40, diffusion: D, frameInterval: DT, sigma: SIGMA, ...gen });
  const detector = new ClumpingDetector(options);
  const conditions: Condition[] = [];
  let firstWarn: number | null = null;
  let pairsAtWarn: [number, number][] = [];
  let truePairsAtWarn: [number, number][] = [];
  const frames = Math.round(seconds / DT);
  for (let k = 0; k < frames; k++) {
    const steps = generator.next();
    if (steps.slot * DT > seconds) break;
    for (const c of detector.push(steps, ctx)) {
      conditions.push(c);
      if (firstWarn === null && (c.level === 'warn' || c.level === 'stop')) {
        firstWarn = c.t;
        pairsAtWarn = (c.detail?.pairs as [number, number][]) ?? [];
        truePairsAtWarn = generator.dimerPairIds();
      }
    }
  }
  return { detector, conditions, generator, firstWarn, pairsAtWarn, truePairsAtWarn };
}

function quantile(values: number[], p: number): number {
  const sorted = values.slice().sort((a, b) => a - b);
  return sorted[Math.min(sorted.length - 1, Math.floor(p * sorted.length))];
}

// Sensitive setting: 2.5 s blocks (50 frames) and α = 0.05 per look, i.e. one false look per
// signal per ≈ 10³ frames.
const SENSITIVE: Partial<ClumpingOptions> = { blockSeconds: 2.5, baselineBlocks: 12, signalAlpha: 0.05 };

function nullRates(cases: { gen: Partial<ClumpingStepsOptions> & { seed: number }; ctx?: typeof context }[], seconds: number) {
  const totals: Record<SignalName, { looks: number; significant: number }> = {
    nearestNeighbour: { looks: 0, significant: 0 }, persistentPairs: { looks: 0, significant: 0 },
    merges: { looks: 0, significant: 0 }, slowTracks: { looks: 0, significant: 0 },
  };

  let warns = 0, blocks = 0;
  for (const c of cases) {
    const r = run(c.gen, seconds, SENSITIVE, c.ctx);
    const looks = r.detector.summary().looks;
    for (const name of Object.keys(totals) as SignalName[]) {
      totals[name].looks += looks[name].looks;
      totals[name].significant += looks[name].significant;
    }
    warns += r.conditions.filter((x) => x.level === 'warn' || x.level === 'stop').length;
    blocks += looks.persistentPairs.looks;
  }
  return { totals, warns, blocks };
}

function expectWithinTarget(total: { looks: number; significant: number }, alpha: number, calibrated: boolean): void {
  const [low, high] = clopperPearson(total.significant, total.looks);
  // detectors.md §7 protocol: the rate must not exceed its target (upper bound ≤ 1.5 × target)
  expect(low).toBeLessThanOrEqual(alpha);
  expect(high).toBeLessThanOrEqual(1.5 * alpha + 0.02);
  // a calibrated test (normal z) also holds its level from below
  if (calibrated) expect(high).toBeGreaterThanOrEqual(alpha);
}

describe('ClumpingDetector', () => {
  describe('constructor', () => {
    it('new ClumpingDetector(options) rejects bad options with a RangeError naming the option', () => {
      expect(() => new ClumpingDetector({ falseWarnsPerHour: 0 })).toThrow(/falseWarnsPerHour/);
      expect(() => new ClumpingDetector({ blockSeconds: -1 })).toThrow(/blockSeconds/);
      expect(() => new ClumpingDetector({ segmentSteps: 3 })).toThrow(/segmentSteps/);
      expect(() => new ClumpingDetector({ mergeWindowFrames: 4 })).toThrow(/mergeWindowFrames/);
      expect(() => new ClumpingDetector({ mergeRatioRange: [0.9, 2] })).toThrow(/mergeRatioRange/);
      expect(() => new ClumpingDetector({ minimumFraction: 0.5, stopFraction: 0.2 })).toThrow(/minimumFraction/);
      expect(() => new ClumpingDetector({ signalAlpha: 1 })).toThrow(RangeError);
    });
  });

  describe('#push (null streams at a sensitive setting)', { timeout: 60_000 }, () => {
    it('push() on CSR particles with homogeneous D keeps each signal within its false-alarm target', () => {
      const { totals, warns, blocks } = nullRates([{ gen: { seed: 101 } }, { gen: { seed: 102 } }, { gen: { seed: 103 } }], 900);
      console.log('CSR null looks', JSON.stringify(totals), 'warns', warns, 'blocks', blocks);
      expectWithinTarget(totals.nearestNeighbour, 0.05, true);
      expectWithinTarget(totals.persistentPairs, 0.05, false);
      expectWithinTarget(totals.slowTracks, 0.15, false); // one look per 3 blocks at 3α
      expectWithinTarget(totals.merges, 0.05, false);
      // warn needs two agreeing signs: at most Σα per block (Bonferroni), detectors.md §3
      const [low] = clopperPearson(warns, blocks);
      expect(low).toBeLessThanOrEqual(0.2);
    });

    it('push() on dense hard-core particles (the key negative control) stays within target', () => {
      // detectors.md §3 synthetic tests: hard-core repulsion at high density must not fire.
      // 100 particles of hard-core diameter 1 µm in a 20 µm box: area fraction 20 %.
      const { totals, warns, blocks } = nullRates([{ gen: { seed: 201, particles: 100, box: 20, field: 16, hardCore: 1, burnIn: 2400 } }], 540);
      console.log('hard-core null looks', JSON.stringify(totals), 'warns', warns, 'blocks', blocks);
      expectWithinTarget(totals.nearestNeighbour, 0.05, false);
      expectWithinTarget(totals.persistentPairs, 0.05, false);
      // Known limitation: crowding spreads the per-track D, so the slow-track sign alone exceeds
      // its per-look level here (README); the two-sign rule keeps warns within target.
      const [low] = clopperPearson(warns, blocks);
      expect(low).toBeLessThanOrEqual(0.2);
      expect(warns).toBeLessThanOrEqual(2);
    }, 60_000);

    it('push() on chance encounters only (dense CSR), heterogeneous D, dropped frames and a σ step stays within target', () => {
      // detectors.md §3 null cases; heterogeneous D (CV 0.3) and a σ-only change (20 → 60 nm)
      // are benign for aggregation (detectors.md §7 negative controls)
      const { totals, warns, blocks } = nullRates([
        { gen: { seed: 301, particles: 120, box: 40, field: 32 } },
        { gen: { seed: 302, diffusionCv: 0.3, dropProbability: 0.01 } },
        { gen: { seed: 303, sigma: (t: number) => (t < 300 ? 0.02 : 0.06) }, ctx: { ...context, localizationError: 0.04 } },
      ], 900);
      console.log('mixed null looks', JSON.stringify(totals), 'warns', warns, 'blocks', blocks);
      expectWithinTarget(totals.nearestNeighbour, 0.05, false);
      expectWithinTarget(totals.persistentPairs, 0.05, false);
      expectWithinTarget(totals.slowTracks, 0.15, false); // one look per 3 blocks at 3α
      const [low] = clopperPearson(warns, blocks);
      expect(low).toBeLessThanOrEqual(0.2);
    });
  });

  describe('#push (injected aggregation at the default setting)', { timeout: 60_000 }, () => {
    it('push() warns on 30 % (and mostly 10 %) of particles in dimers, lists the pairs by id, and the pair look keeps its design delay', () => {
      // Reference delay of the persistent-pair look: L frames span (L − 1)Δt, then the wait to the
      // block end, uniform on [0, B] for a random onset phase: median (L − 1)Δt + B/2 (derived from
      // the block design, detectors.md §0 rule 1 and §3c). Dimers at 0.718 D (estimators.md §8).
      const warnDelays: number[] = [], pairDelays: number[] = [];
      let reference = Number.NaN;
      const detected: Record<number, number> = { 0.1: 0, 0.3: 0 };
      let seeds = 0;
      for (const fraction of [0.1, 0.3]) {
        for (let seed = 0; seed < 5; seed++) {
          seeds++;
          const onset = 80 + 10 * ((seed * 0.37 + fraction) % 1);
          const r = run({ seed: 500 + seed + 100 * fraction, particles: 60, injected: { onset, fraction, contact: 1.0 } }, 480);
          const summary = r.detector.summary();
          const L = summary.design.persistenceFrames!;
          reference = (L - 1) * DT + 5;
          if (r.firstWarn !== null) {
            detected[fraction]++;
            warnDelays.push(r.firstWarn - onset);
            // every listed pair is a true dimer (ids as in the generator's truth), and there is one
            expect(r.pairsAtWarn.length).toBeGreaterThan(0);
            const truth = new Set(r.truePairsAtWarn.map(([a, b]) => `${a}:${b}`));
            for (const [a, b] of r.pairsAtWarn) expect(truth.has(`${a}:${b}`)).toBe(true);
          }
          const first = summary.looks.persistentPairs.firstSignificant;
          if (first !== null) pairDelays.push(first - onset);
        }
      }
      const median = quantile(warnDelays, 0.5), p95 = quantile(warnDelays, 0.95);
      console.log(`injected dimers: detected ${detected[0.1]}/5 at 10 %, ${detected[0.3]}/5 at 30 %, warn delay median ${median.toFixed(1)} s, 95th ${p95.toFixed(1)} s; pair-look delay median ${quantile(pairDelays, 0.5).toFixed(1)} s against reference ${reference.toFixed(1)} s`);
      // 30 %: every seed within 400 s; 10 % (about 2 dimers in view): most seeds (calibration
      // script for the full sweep)
      expect(detected[0.3]).toBe(5);
      expect(detected[0.1]).toBeGreaterThanOrEqual(3);
      const pairMedian = quantile(pairDelays, 0.5);
      expect(pairMedian).toBeLessThanOrEqual(1.3 * reference);
      expect(pairMedian).toBeGreaterThanOrEqual(reference / 1.3);
    });

    it('summary() gives the share of tracks twice as bright (§3e intensity population), near the truth after unresolved sticking and near 0 without', () => {
      // 160 beads in 60 µm × 60 µm; from 20 s, beads that touch stick (5 % a frame) and show as
      // one centroid with the summed intensity. The fit counts each track once, by its median ln I.
      const population = (gen: Partial<ClumpingStepsOptions>, seconds: number) => {
        const generator = new ClumpingSteps({ particles: 160, box: 70, field: 60, diffusion: D, frameInterval: DT, sigma: SIGMA, seed: 31, ...gen });
        const detector = new ClumpingDetector();
        let last = generator.next();
        for (let k = 0; k < Math.round(seconds / DT); k++) {
          detector.push(last, context);
          last = generator.next();
        }
        return { summary: detector.summary(), generator, present: last.count };
      };
      const clean = population({}, 60).summary.intensityDimerFraction!;
      expect(clean.tracks).toBeGreaterThan(100);
      expect(clean.value).toBeLessThan(0.05);
      expect(clean.ci95[0]).toBe(0);
      expect(clean.monomerIntensity).toBeGreaterThan(0);
      const stuck = population({ sticking: { onset: 20, probability: 0.05, contact: 0.9, unresolved: true } }, 60);
      const fit = stuck.summary.intensityDimerFraction!;
      const truth = stuck.generator.dimerLeaderIds().length / stuck.present;
      expect(truth).toBeGreaterThan(0.05);
      expect(Math.abs(fit.value - truth)).toBeLessThan(Math.max(0.06, fit.ci95[1] - fit.ci95[0]));
      expect(fit.ci95[0]).toBeGreaterThan(0);
      // without intensities there is nothing to fit
      expect(population({ intensityNoise: null }, 30).summary.intensityDimerFraction).toBeNull();
    });

    it('push() on unresolved sticking records merges at about twice the brightness and warns', () => {
      // detectors.md §3d: I_after/I_before ≈ 2 for equal particles; the merged centroid carries the
      // leader's id in the generator, so every recorded merge's b must be a true dimer leader.
      let warned = 0;
      const ratios: number[] = [];
      for (let seed = 0; seed < 3; seed++) {
        const r = run({ seed: 700 + seed, sticking: { onset: 80, probability: 1, contact: 0.9, unresolved: true } }, 300);
        const summary = r.detector.summary();
        if (r.firstWarn !== null) warned++;
        const leaders = new Set(r.generator.dimerLeaderIds());
        expect(summary.merges.length).toBeGreaterThan(0);
        for (const m of summary.merges) {
          ratios.push(m.ratio);
          if (leaders.size > 0 && r.generator.dimerLeaderIds().length > 0) expect(m.z).toBeGreaterThan(3);
        }
        expect(summary.dimerFraction).not.toBeNull();
      }
      console.log('merge ratios', ratios.map((x) => x.toFixed(2)).join(' '));
      expect(warned).toBe(3);
      const medianRatio = quantile(ratios, 0.5);
      expect(medianRatio).toBeGreaterThan(1.6);
      expect(medianRatio).toBeLessThan(2.5);
    });

    it('push() raises stop when the dimer fraction passes stopFraction, with the fraction and its CI', () => {
      const r = run({ seed: 900, injected: { onset: 70, fraction: 0.7, contact: 1.0 } }, 240);
      const stop = r.conditions.find((c) => c.level === 'stop');
      expect(stop).toBeDefined();
      expect(stop!.kind).toBe('clumping');
      expect(stop!.effect!.value).toBeGreaterThanOrEqual(0.2);
      expect(stop!.message).toMatch(/fresh dilution/);
      expect(stop!.falseAlarm.perHour).toBe(0.15);
    });
  });

  describe('#summary', () => {
    it('summary() is bounded by maxListed and reports the design', () => {
      const r = run({ seed: 950, particles: 120, injected: { onset: 30, fraction: 0.8, contact: 1.0 } }, 150, { maxListed: 3, blockSeconds: 5 });
      const s = r.detector.summary();
      expect(s.pairs.length).toBeLessThanOrEqual(3);
      expect(s.persistentPairs.length).toBeLessThanOrEqual(3);
      expect(s.merges.length).toBeLessThanOrEqual(3);
      expect(s.design.blockFrames).toBe(100);
      expect(s.design.closeDistance).toBe(1.5); // 3 radii of 0.5 µm
      expect(s.nearestNeighbour?.baselineZ).not.toBeNull();
      expect(JSON.parse(JSON.stringify(s))).toEqual(s);
    });

    it('summary() before any frame has no statistics', () => {
      const s = new ClumpingDetector().summary();
      expect(s.nearestNeighbour).toBeNull();
      expect(s.dimerFraction).toBeNull();
      expect(s.design.persistenceFrames).toBeNull();
    });
  });
});
