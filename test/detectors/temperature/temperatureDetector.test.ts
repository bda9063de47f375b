import { describe, expect, it } from 'vitest';
import type { Condition } from '../../../src/alerts/condition.js';
import { TemperatureDetector, type TemperatureDetectorOptions } from '../../../src/detectors/temperature/temperatureDetector.js';
import { expectedDiffusion } from '../../../src/physics/expectedDiffusion.js';
import { clopperPearson } from '../../../src/stats/quantiles.js';
import { BrownianSteps, type BrownianStepsOptions, quantilesOf } from './brownianSteps.js';

const WATER = { kind: 'water' } as const;
const DT = 0.033; // s, about 30 frames per second
const RADIUS = 0.5; // µm (a 1 µm bead)
/** Stokes–Einstein D in water (Pátek et al. 2009 viscosity, via src/physics), µm²/s. */
const seDiffusion = (celsius: number): number => expectedDiffusion({ celsius, radius: RADIUS, medium: WATER }).value;
const D25 = seDiffusion(25);

interface RunResult {
  detector: TemperatureDetector;
  conditions: Condition[];
}

/** Drive a detector over a generated stream; stop early when `until` says so. */
function run(stream: BrownianStepsOptions, options: TemperatureDetectorOptions, frames: number, until?: (c: Condition) => boolean): RunResult {
  const generator = new BrownianSteps(stream);
  const detector = new TemperatureDetector(options);
  const conditions: Condition[] = [];
  for (let f = 0; f < frames; f++) {
    const { steps, context } = generator.next();
    for (const condition of detector.push(steps, context)) {
      conditions.push(condition);
      if (until?.(condition)) return { detector, conditions };
    }
  }
  return { detector, conditions };
}

// Monte Carlo tests take seconds each on a shared 2-core machine: allow 60 s per test (speed is not asserted).
describe('TemperatureDetector', { timeout: 60_000 }, () => {
  describe('constructor', () => {
    it('new TemperatureDetector(bad option) throws RangeError naming the option', () => {
      expect(() => new TemperatureDetector({ falseWarnsPerHour: 0 })).toThrow(/falseWarnsPerHour/);
      expect(() => new TemperatureDetector({ riseRatio: 0.9 })).toThrow(/riseRatio/);
      expect(() => new TemperatureDetector({ fallRatio: 1.1 })).toThrow(/fallRatio/);
      expect(() => new TemperatureDetector({ absoluteShare: 1 })).toThrow(/absoluteShare/);
      expect(() => new TemperatureDetector({ blockFrames: 1.5 })).toThrow(/blockFrames/);
      expect(() => new TemperatureDetector({ toleranceKelvin: -1 })).toThrow(RangeError);
      expect(() => new TemperatureDetector({ medium: 'honey' })).toThrow(/medium/);
    });
  });

  describe('#push on null streams', () => {
    // Sensitive setting: each of the two charts at ARL0 = 2000 frames, so together about one
    // signal per 10³ armed frames (the renewal rate 2/ARL0 of charts restarted at 0 after each
    // signal). Design figures from the Brook & Evans (1972) Markov chain; the Clopper & Pearson
    // (1934) interval of the observed rate must contain the design rate.
    const scenarios: [string, Partial<BrownianStepsOptions>][] = [
      ['clean', {}],
      ['heterogeneous D (CV 0.3, log-normal)', { diffusionCv: 0.3 }],
      ['2 % dropped frames', { dropProbability: 0.02 }],
    ];
    for (const [name, extra] of scenarios) {
      it(`push keeps the chart false-alarm rate at the design value: ${name}`, () => {
        let signals = 0;
        let armedFrames = 0;
        let warns = 0;
        for (let seed = 1; seed <= 8; seed++) {
          const { detector, conditions } = run(
            { seed: 100 * seed, particles: 50, diffusion: D25, frameInterval: DT, ...extra },
            { arl0Frames: 2000, confirmSteps: 1e4 },
            12000,
          );
          signals += detector.signals.rise + detector.signals.fall;
          armedFrames += detector.armedFrames;
          warns += conditions.filter((c) => c.level === 'warn').length;
        }
        const [low, high] = clopperPearson(signals, armedFrames);
        expect(low).toBeLessThan(2 / 2000);
        expect(high).toBeGreaterThan(2 / 2000);
        // only a small fraction of chart signals survive the fresh-data attribution
        expect(warns).toBeLessThanOrEqual(Math.max(2, 0.1 * signals));
      });
    }
  });

  describe('#push on heating steps', () => {
    // Steps of 1–6 K at the default budget (0.25 false warns per hour at 30 fps), N = 100.
    // D(T) from Stokes–Einstein with the Pátek et al. 2009 water viscosity. Reference delay:
    // h/KL with the per-frame drift of the LLR at the true θ ratio r,
    // μ = n(r(1 − 1/q) − ln q) (detectors.md §4 "Detection delay"); the median chart delay must be
    // within 1.3× of it. The reported warn comes one confirmation window (1e5 steps) later.
    for (const kelvin of [1, 2, 3, 6]) {
      it(`push warns of a ${kelvin} K heating step with the chart's median delay within 1.3 h/KL`, () => {
        const factor = seDiffusion(25 + kelvin) / D25;
        const sigma = 0.02;
        const theta0 = 4 * D25 * DT + 4 * sigma ** 2;
        const r = (4 * D25 * factor * DT + 4 * sigma ** 2) / theta0;
        const onset = 1500 * DT;
        const chartDelays: number[] = [];
        const alertDelays: number[] = [];
        let covered = 0;
        let detected = 0;
        let reference = 0;
        const seeds = 12;
        for (let seed = 1; seed <= seeds; seed++) {
          const { detector, conditions } = run(
            { seed: 7000 + 31 * seed + kelvin, particles: 100, diffusion: D25, frameInterval: DT, diffusionFactor: (t) => (t >= onset ? factor : 1), reportedTemperature: 25 },
            {},
            kelvin === 1 ? 9000 : 4500,
            (c) => c.level === 'warn' && c.key === 'temperature:cusum:rise' && c.t >= onset,
          );
          const hit = conditions.find((c) => c.level === 'warn' && c.key === 'temperature:cusum:rise' && c.t >= onset);
          const h = detector.summary().chart.h ?? Number.NaN;
          reference = h / (99 * (r * (1 - 1 / 1.03) - Math.log(1.03)));
          if (hit === undefined) continue;
          detected++;
          const detail = hit.detail as { signalTime: number; diffusionAfter: number; deltaKelvin: number };
          chartDelays.push((detail.signalTime - onset) / DT);
          alertDelays.push((hit.t - onset) / DT);
          const change = detector.summary().change!;
          const truth = D25 * factor;
          if (change.diffusionAfter.ci95[0] <= truth && truth <= change.diffusionAfter.ci95[1]) covered++;
          expect(change.deltaKelvin!).toBeGreaterThan(kelvin - 1);
          expect(change.deltaKelvin!).toBeLessThan(kelvin + 1);
        }
        const { median } = quantilesOf(chartDelays);
        const alert = quantilesOf(alertDelays);
        console.info(`heating ${kelvin} K: detected ${detected}/${seeds}, chart delay median ${median.toFixed(0)} frames ` +
          `(h/KL ${reference.toFixed(0)}), alert delay median ${alert.median.toFixed(0)}, p95 ${alert.p95.toFixed(0)} frames`);
        expect(detected).toBeGreaterThanOrEqual(kelvin === 1 ? 9 : 12);
        expect(median).toBeLessThanOrEqual(1.3 * reference);
        expect(median).toBeGreaterThanOrEqual(reference / 2);
        // the D-after CI (fresh confirmation window) covers the true D
        expect(covered).toBeGreaterThanOrEqual(Math.floor(0.75 * detected));
      });
    }

    it('push dates a 6 K step at the chart\'s last zero, within a few frames of the onset', () => {
      // Page (1954): the last zero of the CUSUM estimates the change point
      const onset = 1500 * DT;
      const factor = seDiffusion(31) / D25;
      const { detector } = run(
        { seed: 42, particles: 100, diffusion: D25, frameInterval: DT, diffusionFactor: (t) => (t >= onset ? factor : 1), reportedTemperature: 25 },
        {},
        4000,
        (c) => c.level === 'warn',
      );
      const change = detector.summary().change!;
      expect(Math.abs(change.t - onset) / DT).toBeLessThan(20);
    });
  });

  describe('#push on a heating ramp', () => {
    it('push warns of a 1 K/min ramp before the sample has warmed by 3 K', () => {
      // detectors.md §4 synthetic tests: a 1 K/min ramp must alarm; expected in about the time
      // the ramp takes to reach the design shift (≈ 1.2 K) plus the chart and confirmation delays
      const onset = 1500 * DT;
      const warmedAt: number[] = [];
      for (let seed = 1; seed <= 8; seed++) {
        const { conditions } = run(
          {
            seed: 500 + seed, particles: 100, diffusion: D25, frameInterval: DT, reportedTemperature: 25,
            diffusionFactor: (t) => seDiffusion(25 + Math.max(0, t - onset) / 60) / D25,
          },
          {},
          1500 + 6000,
          (c) => c.level === 'warn',
        );
        const hit = conditions.find((c) => c.level === 'warn');
        expect(hit?.key).toBe('temperature:cusum:rise');
        warmedAt.push((hit!.t - onset) / 60);
      }
      const { median, p95 } = quantilesOf(warmedAt);
      console.info(`1 K/min ramp: warmed by ${median.toFixed(2)} K (median), ${p95.toFixed(2)} K (p95) at the warn`);
      expect(p95).toBeLessThan(3);
    });
  });

  describe('#push on benign and other changes', () => {
    it('push says nothing about D when only σ changes (focus, 20 → 40 nm)', () => {
      // detectors.md §4 synthetic tests: a σ-only change must not fire the D alarm (the noise
      // detector owns σ); the chart itself does signal, and the CVE attributes it to σ
      // (Vestergaard et al. 2014: the CVE D̂ does not depend on σ)
      let localization = 0;
      for (let seed = 1; seed <= 10; seed++) {
        const onset = 1500 * DT;
        const { detector, conditions } = run(
          { seed: 900 + seed, particles: 100, diffusion: D25, frameInterval: DT, sigma: (t) => (t >= onset ? 0.04 : 0.02) },
          {},
          5000,
        );
        expect(conditions).toEqual([]);
        localization += detector.signals.localization;
      }
      expect(localization).toBeGreaterThanOrEqual(8);
    });

    it('push fires the fall chart when 40 % of the particles pair into dimers (D × 0.72)', () => {
      // detectors.md §4/§7: aggregation lowers D (dimer D = 0.72 D); the mean D falls by 11.2 %
      const onset = 1500 * DT;
      for (let seed = 1; seed <= 6; seed++) {
        const { detector, conditions } = run(
          { seed: 300 + seed, particles: 100, diffusion: D25, frameInterval: DT, aggregation: { onset, fraction: 0.4, ratio: 0.72 } },
          {},
          4500,
          (c) => c.level === 'warn',
        );
        const hit = conditions.find((c) => c.level === 'warn');
        expect(hit?.key).toBe('temperature:cusum:fall');
        const after = detector.summary().change!.diffusionAfter;
        const truth = D25 * (1 - 0.4 * 0.28);
        expect(after.ci95[0] - 0.01).toBeLessThan(truth);
        expect(after.ci95[1] + 0.01).toBeGreaterThan(truth);
        expect(hit!.message).toMatch(/aggregat/);
      }
    });
  });

  describe('#push absolute check', () => {
    // The sample is ΔT warmer than reported; D from Stokes–Einstein (Pátek et al. 2009 water).
    // With a 1 % radius uncertainty the look-level interval is about ±1.5 K, so 3 K clears the
    // 1 K tolerance. The 95 % implied-temperature CI must cover the true temperature.
    for (const kelvin of [3, 4, 6, -4]) {
      it(`push warns when the sample is ${kelvin} K off the reported temperature, with a CI covering the truth`, () => {
        for (let seed = 1; seed <= 5; seed++) {
          const { detector, conditions } = run(
            { seed: 60 + seed, particles: 50, diffusion: seDiffusion(25 + kelvin), frameInterval: DT, reportedTemperature: 25, radius: RADIUS },
            { radiusSd: 0.005, absoluteBlockSeconds: 10 },
            1300,
          );
          const absolute = conditions.filter((c) => c.key === 'temperature:absolute');
          expect(absolute.at(-1)?.level).toBe('warn');
          expect(Math.sign(absolute.at(-1)!.effect!.value)).toBe(Math.sign(kelvin));
          const implied = detector.summary().implied!;
          expect(implied.ci95[0]).toBeLessThanOrEqual(25 + kelvin);
          expect(implied.ci95[1]).toBeGreaterThanOrEqual(25 + kelvin);
        }
      });
    }

    it('push gives no absolute warn when the reported temperature is right', () => {
      // null case of the same check (α per look ≈ 2.8e-4 at 10 s looks)
      for (let seed = 1; seed <= 5; seed++) {
        const { conditions } = run(
          { seed: 80 + seed, particles: 50, diffusion: D25, frameInterval: DT, reportedTemperature: 25, radius: RADIUS },
          { radiusSd: 0.01, absoluteBlockSeconds: 10 },
          1300,
        );
        expect(conditions.filter((c) => c.key === 'temperature:absolute' && c.level === 'warn')).toEqual([]);
      }
    });

    it('push makes no absolute check for a fixed-viscosity medium', () => {
      // CONTRACTS §1: `viscosity:<mPa·s>` is fixed, so there is no implied temperature (null)
      const { detector, conditions } = run(
        { seed: 5, particles: 50, diffusion: seDiffusion(31), frameInterval: DT, reportedTemperature: 25, radius: RADIUS },
        { medium: 'viscosity:0.89', radiusSd: 0.005, absoluteBlockSeconds: 10 },
        1300,
      );
      expect(conditions.filter((c) => c.key === 'temperature:absolute')).toEqual([]);
      expect(detector.summary().implied).toBeNull();
      expect(detector.summary().series.t).toEqual([]);
    });
  });

  describe('#summary', () => {
    it('summary() keeps a bounded, time-ordered series and the chart state', () => {
      const { detector } = run(
        { seed: 7, particles: 20, diffusion: D25, frameInterval: DT, reportedTemperature: 25, radius: RADIUS },
        { absoluteBlockSeconds: 1, maxSeries: 8 },
        1500,
      );
      const summary = detector.summary();
      expect(summary.series.t.length).toBeGreaterThan(2);
      expect(summary.series.t.length).toBeLessThanOrEqual(8);
      for (let i = 1; i < summary.series.t.length; i++) expect(summary.series.t[i]).toBeGreaterThan(summary.series.t[i - 1]);
      expect(summary.reported).toBe(25);
      expect(summary.implied!.ci95[0]).toBeLessThan(summary.implied!.ci95[1]);
      expect(summary.chart.upper).toBeGreaterThanOrEqual(0);
      expect(JSON.parse(JSON.stringify(summary)).series.t.length).toBe(summary.series.t.length);
    });
  });
});
