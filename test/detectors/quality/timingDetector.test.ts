import { describe, expect, it } from 'vitest';
import { TimingDetector } from '../../../src/detectors/quality/timingDetector.js';
import type { Condition } from '../../../src/alerts/condition.js';
import { Random } from '../../../src/stats/random.js';
import { SyntheticSteps, makeContext } from '../drift/syntheticSteps.js';

const DT = 0.01;
const context = makeContext(0.49, 1, 0.02);

function faults(seed: number, slots: number, dropRate: number, duplicateRate: number, bursts = false): { dropped: Set<number>; duplicated: Set<number> } {
  const random = new Random(seed);
  const dropped = new Set<number>();
  const duplicated = new Set<number>();
  for (let k = 5; k < slots; k++) {
    if (random.uniform() < dropRate) {
      const length = bursts ? 1 + random.integer(8) : 1;
      for (let j = 0; j < length && k + j < slots; j++) dropped.add(k + j);
      k += length;
    } else if (random.uniform() < duplicateRate) duplicated.add(k);
  }
  return { dropped, duplicated };
}

function runTiming(seed: number, slots: number, dropRate: number, duplicateRate: number, jitter: number, bursts = false) {
  const { dropped, duplicated } = faults(seed, slots, dropRate, duplicateRate, bursts);
  for (const d of duplicated) dropped.delete(d);
  const source = new SyntheticSteps({ seed, particles: 3, diffusion: 0.49, sigma: 0.02, frameInterval: DT, field: 50, meanTrackLength: Infinity, dropped, duplicated, jitter });
  const detector = new TimingDetector();
  const conditions: Condition[] = [];
  const deliveredSlots: number[] = [];
  while (source.slot < slots - 1) {
    const steps = source.next();
    deliveredSlots.push(steps.slot);
    conditions.push(...detector.push(steps, context));
  }
  return { detector, conditions, source, dropped, duplicated, deliveredSlots };
}

describe('TimingDetector', () => {
  it('new TimingDetector(options) rejects bad options naming the option', () => {
    expect(() => new TimingDetector({ allowedDropRate: 0 })).toThrow(/allowedDropRate/);
    expect(() => new TimingDetector({ medianWindow: 2 })).toThrow(/medianWindow/);
    expect(() => new TimingDetector({ jitterFraction: -1 })).toThrow(/jitterFraction/);
  });

  describe('#push is exact on the synthetic faults of detectors.md §6a', () => {
    for (const [label, rate, bursts] of [['0.1 %', 0.001, false], ['1 %', 0.01, false], ['bursts', 0.003, true]] as const) {
      it(`counts every dropped frame at ${label} with no false positives`, () => {
        // detectors.md §6a: 100 % recall, 0 false positives; jitter 0.1 % of Δt alongside
        const { detector, source } = runTiming(7, 60000, rate, 0.0005, 0.001 * DT, bursts);
        const summary = detector.summary();
        expect(summary.dropped).toBe(source.droppedSoFar);
        expect(summary.duplicated).toBe(source.duplicatesSoFar);
        expect(source.droppedSoFar).toBeGreaterThan(0);
        const missing = summary.droppedEvents.reduce((sum, e) => sum + e.missing, 0);
        expect(missing).toBe(source.droppedSoFar);
      });
    }

    it('places each drop event at the first frame after the gap', () => {
      const { detector, dropped } = runTiming(8, 20000, 0.002, 0, 0);
      const expected: number[] = [];
      for (let k = 0; k < 20000; k++) if (!dropped.has(k) && dropped.has(k - 1)) expected.push(k);
      expect(detector.summary().droppedEvents.map((e) => e.frameIndex)).toEqual(expected);
    });
  });

  it('rates 1 % drops against p0 = 0.1 % as warn and 0.05 % as info only', () => {
    // exact binomial test (Clopper & Pearson's binomial setting); detectors.md §6a drop rate
    const heavy = runTiming(9, 20000, 0.01, 0, 0);
    expect(heavy.conditions.some((c) => c.key === 'timing:dropped' && c.level === 'warn')).toBe(true);
    const light = runTiming(10, 20000, 0.0005, 0, 0);
    expect(light.conditions.some((c) => c.key === 'timing:dropped' && c.level === 'info')).toBe(true);
    expect(light.conditions.some((c) => c.key === 'timing:dropped' && c.level === 'warn')).toBe(false);
  });

  it('warns on duplicated frames and clears after a clean block', () => {
    const { conditions } = runTiming(11, 5000, 0, 0, 0, false);
    expect(conditions.filter((c) => c.key === 'timing:duplicated')).toHaveLength(0);
    const source = new SyntheticSteps({ seed: 12, particles: 3, diffusion: 0.49, sigma: 0.02, frameInterval: DT, field: 50, meanTrackLength: Infinity, duplicated: new Set([300]) });
    const detector = new TimingDetector();
    const seen: Condition[] = [];
    for (let f = 0; f < 3000; f++) seen.push(...detector.push(source.next(), context));
    const keyed = seen.filter((c) => c.key === 'timing:duplicated');
    expect(keyed.map((c) => c.level)).toEqual(['warn', null]);
    expect(detector.summary().duplicated).toBe(1);
  });

  it('estimates jitter as 1.4826·MAD (≈ √2 × the timestamp SD) and warns above 1 % of Δt', () => {
    // Hampel 1974 normal-consistent MAD; interval of two independent jittered stamps has SD √2·j (arithmetic)
    const quiet = runTiming(13, 5000, 0, 0, 0.002 * DT);
    expect(quiet.detector.summary().jitter! / (Math.SQRT2 * 0.002 * DT)).toBeGreaterThan(0.85);
    expect(quiet.detector.summary().jitter! / (Math.SQRT2 * 0.002 * DT)).toBeLessThan(1.15);
    expect(quiet.conditions.some((c) => c.key === 'timing:jitter')).toBe(false);
    const noisy = runTiming(14, 5000, 0, 0, 0.02 * DT);
    expect(noisy.conditions.some((c) => c.key === 'timing:jitter' && c.level === 'warn')).toBe(true);
  });

  it('#noteBackwards raises one warn with the frame index, and it clears after a clean block', () => {
    const detector = new TimingDetector({ blockFrames: 100 });
    const source = new SyntheticSteps({ seed: 15, particles: 3, diffusion: 0.49, sigma: 0.02, frameInterval: DT, field: 50, meanTrackLength: Infinity });
    for (let f = 0; f < 50; f++) detector.push(source.next(), context);
    const raised = detector.noteBackwards(0.2, 50);
    expect(raised).toHaveLength(1);
    expect(raised[0].level).toBe('warn');
    expect(raised[0].message).toMatch(/50/);
    expect(detector.noteBackwards(0.3, 51)).toHaveLength(0);
    const later: Condition[] = [];
    for (let f = 0; f < 300; f++) later.push(...detector.push(source.next(), context));
    expect(later.filter((c) => c.key === 'timing:backwards').map((c) => c.level)).toEqual([null]);
    expect(detector.summary().backwards).toBe(2);
  });
});
