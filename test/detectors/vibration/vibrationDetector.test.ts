import { describe, expect, it } from 'vitest';
import { AlertEngine } from '../../../src/alerts/alertEngine.js';
import type { Condition } from '../../../src/alerts/condition.js';
import { VibrationDetector, type VibrationDetectorOptions } from '../../../src/detectors/vibration/vibrationDetector.js';
import { clopperPearson } from '../../../src/stats/quantiles.js';
import { SimulatedStream, contextFor, type StreamSettings } from './simulateSteps.js';

const L = 256;
const K = 8;
const WINDOW_FRAMES = K * L + 1; // K·L steps need K·L + 1 frames
const DT = 0.01;
const BIN_HZ = 1 / (L * DT);

interface Run {
  detector: VibrationDetector;
  conditions: Condition[];
}

/** Feeds `frames` frames of a seeded stream; calls `onWindow` after each tested window. */
function run(
  frames: number,
  stream: Partial<StreamSettings>,
  options: Partial<VibrationDetectorOptions> = {},
  onWindow?: (detector: VibrationDetector, t: number) => void,
): Run {
  const s = new SimulatedStream(stream);
  const context = contextFor(s.settings);
  const detector = new VibrationDetector(options);
  const conditions: Condition[] = [];
  let windows = 0;
  for (let i = 0; i < frames; i++) {
    const frame = s.next();
    for (const c of detector.push(frame, context)) conditions.push(c);
    if (onWindow && detector.windowsTested !== windows) {
      windows = detector.windowsTested;
      onWindow(detector, frame.t);
    }
  }
  return { detector, conditions };
}

/**
 * Consecutive conditions of one key change level, or re-report a line that moved: its frequency
 * by more than a bin, or its amplitude outside the 95 % CI reported before.
 */
function changesOnly(conditions: readonly Condition[]): void {
  for (let i = 1; i < conditions.length; i++) {
    const [before, now] = [conditions[i - 1], conditions[i]];
    if (now.level !== before.level) continue;
    expect(now.level).not.toBe(null);
    const moved =
      Math.abs((now.detail!.frequencyHz as number) - (before.detail!.frequencyHz as number)) > BIN_HZ ||
      now.effect!.value < before.effect!.ci95![0] ||
      now.effect!.value > before.effect!.ci95![1];
    expect(moved).toBe(true);
  }
}

const sinc = (f: number, te: number): number => (f * te === 0 ? 1 : Math.abs(Math.sin(Math.PI * f * te) / (Math.PI * f * te)));
const alias = (f: number): number => Math.abs(f - 100 * Math.round(f / 100));

describe('VibrationDetector', () => {
  describe('new VibrationDetector(options)', () => {
    it('rejects bad options with a message naming the option', () => {
      expect(() => new VibrationDetector({ segmentLength: 100 })).toThrow(/segmentLength/);
      expect(() => new VibrationDetector({ segments: 1 })).toThrow(/segments/);
      expect(() => new VibrationDetector({ hopSegments: 9 })).toThrow(/hopSegments/);
      expect(() => new VibrationDetector({ falseWarnsPerHour: 0 })).toThrow(/falseWarnsPerHour/);
      expect(() => new VibrationDetector({ alphaPerWindow: 1 })).toThrow(/alphaPerWindow/);
      expect(() => new VibrationDetector({ axes: 'diagonal' as never })).toThrow(/axes/);
      expect(() => new VibrationDetector({ minParticles: 2 })).toThrow(/minParticles/);
      expect(() => new VibrationDetector({ maxParticles: 2 })).toThrow(/maxParticles/);
      expect(() => new VibrationDetector({ maxParticles: 10.5 })).toThrow(/maxParticles/);
      expect(() => new VibrationDetector({ wanderBins: 1 })).toThrow(/wanderBins/);
      expect(() => new VibrationDetector({ stopAmplitudeRatio: -1 })).toThrow(RangeError);
    });
    it('derives α per window from the hourly share: 0.2 / (3600 / (L·Δt))', () => {
      // Task convention: budget per window = share / windows per hour, windows per hour = 3600/(L·Δt)
      const { detector } = run(3, {});
      const s = detector.summary();
      expect(s.windowsPerHour).toBeCloseTo(3600 / (L * DT), 9);
      expect(s.alphaPerWindow).toBeCloseTo(0.2 / (3600 / (L * DT)), 12);
    });
  });

  describe('#summary', () => {
    it('summary() before any window has no peaks and method none', () => {
      const { detector } = run(10, {});
      const s = detector.summary();
      expect(s.peaks).toEqual([]);
      expect(s.windows).toBe(0);
      expect(s.method).toBe('none');
      expect(s.spectrum.frequency).toEqual([]);
    });
  });

  describe('#push', () => {
    it('push: null family-wise false-alarm rate at α = 0.05 over 200 independent windows is in [0.5α, 1.5α]', { timeout: 60_000 }, () => {
      // Shumway 1970 (JASA 65:1527) null F(2K, 2Σ(N−1)) with Šidák over bins; detectors.md §2 null test
      // (Brownian + σ + heterogeneous D ×0.3–1.7 + constant drift + drops; non-overlapping windows: hop = K)
      let windows = 0;
      let alarms = 0;
      // (segments of 128 frames and N = 16 keep the 200 windows fast; the F-test's null does not depend on
      // either); 0.1 % dropped frames break about 12 % of the segments, which are skipped
      run(
        Math.ceil(1.3 * 200 * K * 128),
        { seed: 101, particles: 16, diffusionSpread: 0.7, driftVelocity: [0.05, -0.03], dropProbability: 0.001 },
        { alphaPerWindow: 0.05, hopSegments: K, segmentLength: 128 },
        (detector) => {
          if (windows === 200) return;
          windows++;
          const s = detector.summary().spectrum;
          if (Math.max(...s.statistic) > s.threshold) alarms++;
        },
      );
      expect(windows).toBe(200);
      const [low, high] = clopperPearson(alarms, windows);
      expect(low).toBeLessThan(0.05);
      expect(high).toBeGreaterThan(0.05);
      expect(alarms / windows).toBeGreaterThanOrEqual(0.025);
      expect(alarms / windows).toBeLessThanOrEqual(0.075);
    });

    it('push: power at 13.7 Hz matches the sensitivity table (4 nm → 0.42, 6 nm → 0.99)', { timeout: 60_000 }, () => {
      // detectors.md §2 sensitivity table [V] (α = 0.01 over M = 126 bins on one axis; here α = 0.0199 over
      // 2M bins of two axes, the same per-bin level): N = 40, D = 0.5 µm²/s, Δt = 10 ms, σ = 30 nm, 8 × 256 frames
      for (const [amplitude, expected] of [
        [0.004, 0.42],
        [0.006, 0.99],
      ] as const) {
        let detected = 0;
        const seeds = 30;
        for (let seed = 0; seed < seeds; seed++) {
          const { detector } = run(WINDOW_FRAMES, { seed: 200 + seed, vibrationAmplitude: amplitude }, { alphaPerWindow: 0.0199 });
          if (detector.summary().current.some((p) => p.axis === 'x' && Math.abs(p.frequency - 13.7) <= BIN_HZ)) detected++;
        }
        const [low, high] = clopperPearson(detected, seeds);
        expect(low).toBeLessThanOrEqual(expected);
        expect(high).toBeGreaterThanOrEqual(expected);
      }
    });

    it('push: at the default setting detects lines at or above A_90, including above Nyquist, within ±1 bin', { timeout: 60_000 }, () => {
      // A_90 calibrated by tools/calibrate/vibration.ts (README table); aliasing per detectors.md §2:
      // f_v = 1.3 f_s appears at 0.3 f_s, with candidates {k f_s ± f_a}; exposure τ_e = Δt
      const cases = [
        { f: 5, A: 0.02 },
        { f: 13.7, A: 0.0075 },
        { f: 45, A: 0.004 },
        { f: 130, A: 0.02 },
      ];
      let covered = 0;
      let detections = 0;
      for (const { f, A } of cases) {
        let detected = 0;
        const seeds = 12;
        for (let seed = 0; seed < seeds; seed++) {
          const { detector } = run(WINDOW_FRAMES, { seed: 300 + seed, vibrationAmplitude: A, vibrationFrequency: f });
          const peak = detector.summary().current.find((p) => p.axis === 'x');
          if (!peak) continue;
          detected++;
          detections++;
          expect(Math.abs(peak.frequency - alias(f))).toBeLessThanOrEqual(BIN_HZ);
          // reported amplitude is corrected at the observed frequency; what it should be:
          const expected = (A * sinc(f, DT)) / sinc(alias(f), DT);
          if (peak.amplitudeCi95[0] <= expected && expected <= peak.amplitudeCi95[1]) covered++;
          if (f === 130) {
            // the true frequency is among the candidates, and its amplitude there is about A
            const i = peak.aliasesHz.findIndex((c) => Math.abs(c - 130) <= BIN_HZ);
            expect(i).toBeGreaterThanOrEqual(0);
            expect(peak.aliasesHz.some((c) => Math.abs(c - 70) <= BIN_HZ)).toBe(true);
            const atTrue = peak.aliasAmplitudes[i] as number;
            expect(atTrue / A).toBeGreaterThan(0.6);
            expect(atTrue / A).toBeLessThan(1.4);
          }
        }
        expect(detected).toBeGreaterThanOrEqual(11);
      }
      // 95 % CIs: coverage over all detections not far below 0.95 (Clopper–Pearson upper bound)
      expect(clopperPearson(covered, detections)[1]).toBeGreaterThan(0.95);
    });

    it('push: a line at f_v = f_s with τ_e = 1/f_s is not detected (blind spot), nor 125 Hz with τ_e = 8 ms', () => {
      // estimators.md §10 / detectors.md §2: exposure averaging |sinc(π f τ_e)| is zero at multiples of 1/τ_e
      for (const { f, te } of [
        { f: 100, te: 0.01 },
        { f: 125, te: 0.008 },
      ]) {
        const { detector, conditions } = run(WINDOW_FRAMES + 2 * L, { seed: 400, vibrationAmplitude: 0.5, vibrationFrequency: f, exposure: te });
        expect(detector.summary().windows).toBe(3);
        expect(detector.summary().peaks).toEqual([]);
        expect(conditions.filter((c) => c.level !== null)).toEqual([]);
      }
      // control: just off the blind spot (118 Hz, τ_e = 8 ms: |sinc| = 0.06) the same motion shows at 18 Hz
      const { detector } = run(WINDOW_FRAMES, { seed: 400, vibrationAmplitude: 0.5, vibrationFrequency: 118, exposure: 0.008 });
      const peak = detector.summary().current[0];
      expect(peak).toBeDefined();
      expect(Math.abs(peak.frequency - 18)).toBeLessThanOrEqual(BIN_HZ);
    });

    it('push: with maxParticles M, the F-test is the one run on the first M particles alone, and still finds a 20 nm line', () => {
      // The cap keeps the first M particles to step into each segment; the test is exact on any such subset
      // (Shumway 1970, JASA 65:1527). Here all 40 step every frame, so the subset is the first 10 in frame order.
      const capped = new VibrationDetector({ maxParticles: 10 });
      const alone = new VibrationDetector();
      const full = new VibrationDetector();
      const stream = new SimulatedStream({ seed: 950, vibrationAmplitude: 0.02 }); // A_90 ≈ 5.8 nm at N = 40 (README), ≈ 12 nm at 10
      const context = contextFor(stream.settings);
      for (let i = 0; i < WINDOW_FRAMES + L; i++) {
        const frame = stream.next();
        capped.push(frame, context);
        full.push(frame, context);
        alone.push({ ...frame, count: 10, stepCount: Math.min(frame.stepCount, 10) }, context);
      }
      const a = capped.summary();
      const b = alone.summary();
      expect(a.windows).toBe(2);
      expect(b.windows).toBe(2);
      expect(a.spectrum.statistic).toEqual(b.spectrum.statistic);
      expect(a.spectrum.threshold).toBe(b.spectrum.threshold);
      // and it differs from the test on all 40 (more particles, more degrees of freedom)
      expect(full.summary().spectrum.statistic).not.toEqual(a.spectrum.statistic);
      const peak = a.current.find((p) => p.axis === 'x');
      expect(peak).toBeDefined();
      expect(Math.abs(peak!.frequency - 13.7)).toBeLessThanOrEqual(BIN_HZ);
    });

    it('push: one particle oscillating alone raises no alarm', () => {
      // detectors.md §2: its power enters numerator and denominator (negative control)
      const { detector, conditions } = run(WINDOW_FRAMES + 3 * L, { seed: 500, loneAmplitude: 0.3, loneFrequency: 13.7 });
      expect(detector.summary().windows).toBe(4);
      expect(conditions.filter((c) => c.level !== null)).toEqual([]);
      expect(detector.summary().peaks).toEqual([]);
    });

    it('push: a sine plus slow random-walk drift is still reported as vibration, and the wander is not', { timeout: 60_000 }, () => {
      // detectors.md §2 classification: narrow excess above bin 2 → vibration; excess at the lowest bins → drift
      for (let seed = 0; seed < 5; seed++) {
        const { detector } = run(WINDOW_FRAMES + L, { seed: 600 + seed, vibrationAmplitude: 0.01, wanderSpeed: 2, wanderTime: 5 });
        const peaks = detector.summary().peaks;
        expect(peaks.some((p) => p.axis === 'x' && Math.abs(p.frequency - 13.7) <= BIN_HZ)).toBe(true);
        for (const p of peaks) expect(Math.abs(p.frequency - 13.7)).toBeLessThanOrEqual(BIN_HZ);
      }
    });

    it('push: delay after onset is within one window plus hop', { timeout: 60_000 }, () => {
      // Task reference: delay one window + hop = (K + 1)·L·Δt = 23.04 s; median within 1.3× of it
      const reference = (K + 1) * L * DT;
      const delays: number[] = [];
      for (let seed = 0; seed < 12; seed++) {
        const onset = K * L * DT + ((seed * 0.618) % 1) * L * DT + 0.37;
        const frames = Math.ceil(onset / DT) + (K + 2) * L;
        const { conditions } = run(frames, { seed: 700 + seed, vibrationAmplitude: 0.0075, vibrationOnset: onset });
        const first = conditions.find((c) => c.key === 'vibration:x' && c.level !== null);
        expect(first).toBeDefined();
        delays.push((first as Condition).t - onset);
      }
      delays.sort((a, b) => a - b);
      expect(delays[0]).toBeGreaterThan(0);
      expect(delays[Math.floor(delays.length / 2)]).toBeLessThanOrEqual(1.3 * reference);
      expect(delays[delays.length - 1]).toBeLessThanOrEqual(reference + DT);
    });

    it('push: reports on change only (of level, or of the line), grades info / warn / stop by MSD bias and σ, and clears when the line stops', () => {
      // Severity rule (task): MSD effect A²(1 − cos ωτ) (estimators.md §10) vs 2Dτ + 2σ²; stop when A_eff > 2σ
      const graded = (A: number): Condition[] =>
        run(2200 + (K + 2) * L, { seed: 800, vibrationAmplitude: A, vibrationEnd: 22 }).conditions.filter((c) => c.key === 'vibration:x');
      const small = graded(0.01);
      // as the line leaves the window its amplitude falls, re-reported at the same level, then it clears
      expect(small[0].level).toBe('info');
      expect(small.slice(0, -1).every((c) => c.level === 'info')).toBe(true);
      expect(small[small.length - 1].level).toBe(null);
      changesOnly(small);
      const medium = graded(0.04);
      // while the line fades out of the window it may step down through info before clearing
      expect(medium[0].level).toBe('warn');
      expect(medium[medium.length - 1].level).toBe(null);
      changesOnly(medium);
      expect(medium[0].message).toMatch(/13\.\d+ Hz along x/);
      expect(medium[0].message).toMatch(/MSD/);
      expect(medium[0].effect?.unit).toBe('µm');
      // false-alarm figures follow the hourly share: α = 0.2/(3600/(L·Δt)), ARL0 = L/α frames, 0.2 per hour
      expect(medium[0].falseAlarm.pValue).toBeCloseTo(0.2 / (3600 / (L * DT)), 12);
      expect(medium[0].falseAlarm.perHour).toBeCloseTo(0.2, 12);
      expect(medium[0].falseAlarm.arl0Frames).toBeCloseTo(L / (0.2 / (3600 / (L * DT))), 6);
      expect(medium[0].statistic.value).toBeGreaterThan(medium[0].statistic.threshold);
      expect(medium[0].detail?.aliasesHz).toBeDefined();
      const large = graded(0.1);
      expect(large[0].level).toBe('stop');
      changesOnly(large);
    });

    it('push: reports a line again at the same level when its amplitude leaves the reported CI, so the alert follows it', () => {
      // 30 nm (warn) growing to 45 nm at 40 s: once the window holds only the larger line, the
      // latest condition (and the engine's alert) describes 45 nm, not the first window's 30 nm
      const { conditions } = run(8000, { seed: 801, vibrationAmplitude: 0.03, vibrationChange: 40, vibrationAmplitudeLater: 0.045 });
      const axis = conditions.filter((c) => c.key === 'vibration:x');
      expect(axis[0].level).toBe('warn');
      expect(axis[0].effect!.value).toBeGreaterThan(0.025);
      expect(axis[0].effect!.value).toBeLessThan(0.035);
      expect(axis.length).toBeGreaterThan(1);
      const last = axis[axis.length - 1];
      expect(last.level).not.toBe(null);
      expect(last.effect!.value).toBeGreaterThan(0.04);
      expect(last.effect!.value).toBeLessThan(0.05);
      expect(last.message).toContain(`${(last.effect!.value * 1000).toFixed(1)} nm 0-to-peak`);
      changesOnly(axis);
      // the alert engine keeps one alert and updates its message and effect
      const engine = new AlertEngine();
      for (const c of axis) engine.push([c]);
      const alerts = engine.alerts().filter((a) => a.kind === 'vibration');
      expect(alerts).toHaveLength(1);
      expect(alerts[0].message).toBe(last.message);
    });

    it('push: the combined-axes form F(4K, 4Σ(N−1)) finds a diagonal line as axis xy', () => {
      // detectors.md §2 step 5: add numerators and denominators across axes
      const { detector } = run(WINDOW_FRAMES, { seed: 900, vibrationAmplitude: 0.01, vibrationAngle: Math.PI / 4 }, { axes: 'combined' });
      const peak = detector.summary().current[0];
      expect(peak.axis).toBe('xy');
      expect(Math.abs(peak.frequency - 13.7)).toBeLessThanOrEqual(BIN_HZ);
      expect(peak.amplitude / 0.01).toBeGreaterThan(0.7);
      expect(peak.amplitude / 0.01).toBeLessThan(1.3);
    });

    it('push: with most segments broken by drops, Lomb–Scargle takes over and finds the line', { timeout: 60_000 }, () => {
      // Lomb 1976; Scargle 1982; Baluev 2008 (MNRAS 385:1279) false-alarm level; detectors.md §2 uneven timestamps
      const { detector } = run(3 * WINDOW_FRAMES, { seed: 1000, dropProbability: 0.02, vibrationAmplitude: 0.01 });
      const s = detector.summary();
      expect(s.method).toBe('lomb-scargle');
      const peak = s.current.find((p) => p.axis === 'x');
      expect(peak).toBeDefined();
      expect(Math.abs((peak as { frequency: number }).frequency - 13.7)).toBeLessThan(0.1);
      const expected = (0.01 * sinc(13.7, DT)) / sinc(13.7, DT);
      expect(peak?.amplitudeCi95[0]).toBeLessThanOrEqual(expected * 1.05);
      expect(peak?.amplitudeCi95[1]).toBeGreaterThanOrEqual(expected * 0.95);
    });

    it('push: with drops and no vibration, the Lomb–Scargle fallback stays quiet at the default setting', { timeout: 60_000 }, () => {
      // Baluev 2008: FAP per window = α; at α ≈ 1.4e-4 over 25 windows a false line is very unlikely
      const { detector, conditions } = run(6 * WINDOW_FRAMES, { seed: 1100, dropProbability: 0.02, diffusionSpread: 0.7, driftVelocity: [0.05, 0] });
      expect(detector.summary().method).toBe('lomb-scargle');
      expect(detector.summary().windows).toBeGreaterThan(25);
      expect(conditions.filter((c) => c.level !== null)).toEqual([]);
    });
  });
});
