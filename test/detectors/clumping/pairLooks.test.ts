import { describe, expect, it } from 'vitest';
import { persistenceFrames } from '../../../src/detectors/clumping/chancePersistence.js';
import { ClumpingDetector, type ClumpingOptions } from '../../../src/detectors/clumping/clumpingDetector.js';
import { clopperPearson } from '../../../src/stats/quantiles.js';
import { ClumpingSteps, makeContext, type ClumpingStepsOptions } from './clumpingSteps.js';

// The close-pair and slow-track signals at a fast camera's rate: above 2·lookHz the detector looks
// at one frame in k. Invented sample, as in clumpingDetector.test.ts: 1 µm beads (r = 0.5 µm) in water at
// 20 °C, D = 0.43 µm²/s, σ = 20 nm, now on the "Harbour Street" bench's fast camera at 1,000 frames/s.
const D = 0.43;
const DT = 0.001;
const SIGMA = 0.02;
const context = makeContext(D, SIGMA, 0.5);

function generator(gen: Partial<ClumpingStepsOptions> & { seed: number }): ClumpingSteps {
  return new ClumpingSteps({ particles: 40, box: 50, field: 40, diffusion: D, frameInterval: DT, sigma: SIGMA, intensityNoise: null, ...gen });
}

describe('ClumpingDetector close-pair looks at 1,000 frames/s', () => {
  it('new ClumpingDetector({ lookHz }) rejects a rate that is not positive', () => {
    expect(() => new ClumpingDetector({ lookHz: 0 })).toThrow(/lookHz/);
    expect(() => new ClumpingDetector({ lookHz: Number.NaN })).toThrow(/lookHz/);
  });

  it('push() logs exactly the pairs a brute-force check of every k-th frame finds within r_c for L looks, with L designed at k·Δt', () => {
    // Reference: an O(N²) pass over the look frames (slots 0, k, 2k, … with no drops), the run of
    // consecutive looks each pair spends within r_c, and the first look after the baseline at which
    // a run reaches L looks (logged once per run). Our own brute force, independent of the
    // detector's neighbour list and episode map.
    const lookHz = 250; // k = 4 at 1 kHz
    const k = 4;
    const options: Partial<ClumpingOptions> = { blockSeconds: 2, baselineBlocks: 5, signalAlpha: 0.05, maxListed: 100000, lookHz };
    const detector = new ClumpingDetector(options);
    const gen = generator({ seed: 811, particles: 60, injected: { onset: 14, fraction: 0.3, contact: 1.0 } });
    const closeDistance = 1.5; // 3 × the radius
    const baselineFrames = (5 * 2) / DT; // frames before the baseline ends (no drops)
    const runs = new Map<string, { since: number; looks: number; logged: boolean }>();
    // the pooled baseline CVE D from each track's displacements between consecutive looks (the
    // estimator of Vestergaard, Blainey & Flyvbjerg 2014 on steps of k·Δt; our own recomputation)
    const lastLook = new Map<number, { x: number; y: number; slot: number; dx: number; dy: number; stepSlot: number }>();
    const pooled = { squares: 0, squareCount: 0, cross: 0, crossCount: 0 };
    const expected: { a: number; b: number; since: number; looks: number }[] = [];
    let persistenceLooks = -1;
    for (let f = 0; f < 30 / DT; f++) {
      const steps = gen.next();
      detector.push(steps, context);
      if (steps.slot % k !== 0) continue;
      for (let i = 0; i < steps.count; i++) {
        const id = steps.trackId[i];
        const before = lastLook.get(id);
        const here = { x: steps.x[i], y: steps.y[i], slot: steps.slot, dx: 0, dy: 0, stepSlot: -1 };
        if (before && before.slot === steps.slot - k) {
          here.dx = here.x - before.x;
          here.dy = here.y - before.y;
          here.stepSlot = steps.slot;
          if (f < baselineFrames) {
            pooled.squares += here.dx ** 2 + here.dy ** 2;
            pooled.squareCount += 2;
            if (before.stepSlot === steps.slot - k) {
              pooled.cross += here.dx * before.dx + here.dy * before.dy;
              pooled.crossCount += 2;
            }
          }
        }
        lastLook.set(id, here);
      }
      if (persistenceLooks < 0 && f >= baselineFrames) {
        const design = detector.summary().design;
        const dReference = pooled.squares / (2 * k * DT * pooled.squareCount) + pooled.cross / (k * DT * pooled.crossCount);
        expect(Math.abs((design.baselineDiffusion as number) - dReference) / dReference).toBeLessThan(1e-12);
        expect(dReference).toBeGreaterThan(0.9 * D); // and near the beads' D (σ and blur cancel in the CVE)
        expect(dReference).toBeLessThan(1.1 * D);
        expect(design.lookFrames).toBe(k);
        // L in looks from the law at the look interval k·Δt, then in frames (L − 1)·k + 1
        persistenceLooks = persistenceFrames({
          diffusion: design.baselineDiffusion as number,
          closeDistance,
          frameInterval: k * DT,
          closePairsPerFrame: design.baselineClosePairsPerFrame as number,
          chancePairsPerHour: 0.05 * (3600 / 2),
        });
        expect(design.persistenceFrames).toBe((persistenceLooks - 1) * k + 1);
        expect(design.closeDistance).toBe(closeDistance);
      }
      const seen = new Set<string>();
      for (let i = 0; i < steps.count; i++) {
        for (let j = i + 1; j < steps.count; j++) {
          const dx = steps.x[i] - steps.x[j];
          const dy = steps.y[i] - steps.y[j];
          if (dx * dx + dy * dy > closeDistance * closeDistance) continue;
          const a = Math.min(steps.trackId[i], steps.trackId[j]);
          const b = Math.max(steps.trackId[i], steps.trackId[j]);
          const key = `${a}:${b}`;
          seen.add(key);
          const run = runs.get(key) ?? { since: steps.t, looks: 0, logged: false };
          run.looks++;
          runs.set(key, run);
          if (persistenceLooks > 0 && f >= baselineFrames && !run.logged && run.looks >= persistenceLooks) {
            run.logged = true;
            expected.push({ a, b, since: run.since, looks: run.looks });
          }
        }
      }
      for (const key of [...runs.keys()]) if (!seen.has(key)) runs.delete(key);
    }
    const logged = detector.summary().persistentPairs; // most recent first
    expect(expected.length).toBeGreaterThan(5); // the injected dimers, and some chance pairs
    expect(logged.length).toBe(expected.length);
    const byKey = new Map(logged.map((p) => [`${p.a}:${p.b}:${p.since}`, p]));
    for (const e of expected) {
      const p = byKey.get(`${e.a}:${e.b}:${e.since}`);
      expect(p, `pair ${e.a}–${e.b} since ${e.since}`).toBeDefined();
      expect(p?.frames).toBe((e.looks - 1) * k + 1);
    }
  });

  it('push() continues a close pair across a look interval whose frames were all dropped, and ends it on a look where the pair is apart', () => {
    // Two still tracks 1 µm apart (r_c = 1.5 µm) and a third far away, k = 5, a 20-frame baseline
    // block. Case 1: slots 100–104 never arrive (no look in that interval), so the episode that began
    // at slot 0 goes on and is logged as one pair since t = 0. Case 2: the same slots arrive with
    // the pair 3 µm apart on slot 100 only (a look): the episode ends there and a new one begins at
    // slot 105, so the logged pair is since 0.105 s.
    function runCase(apartAt: number | null): { since: number; frames: number }[] {
      const detector = new ClumpingDetector({ lookHz: 200, blockSeconds: 0.02, baselineBlocks: 1, signalAlpha: 0.2, maxListed: 10 });
      const steps = generator({ seed: 1 }).next(); // a FrameSteps to reuse, rewritten below
      steps.count = 3;
      steps.stepCount = 0;
      steps.endedCount = 0;
      steps.intensity = undefined;
      steps.field = { xMin: 0, xMax: 40, yMin: 0, yMax: 40 };
      let previous = -1;
      for (let slot = 0; slot < 4000; slot++) {
        if (apartAt === null && slot >= 100 && slot < 105) continue;
        for (let i = 0; i < 3; i++) {
          steps.trackId[i] = [7, 9, 12][i];
          steps.trackRow[i] = i;
        }
        steps.x[0] = 10;
        steps.y[0] = 10;
        steps.x[1] = slot === apartAt ? 13 : 11;
        steps.y[1] = 10;
        steps.x[2] = 30;
        steps.y[2] = 30;
        steps.slot = slot;
        steps.slotGap = previous < 0 ? 1 : slot - previous;
        steps.t = slot * DT;
        previous = slot;
        detector.push(steps, context);
      }
      const summary = detector.summary();
      expect(summary.design.lookFrames).toBe(5);
      expect(summary.design.persistenceFrames as number).toBeLessThan(3000);
      return summary.persistentPairs.filter((p) => p.a === 7 && p.b === 9);
    }
    const dropped = runCase(null);
    expect(dropped).toHaveLength(1);
    expect(dropped[0].since).toBe(0);
    const apart = runCase(100);
    expect(apart).toHaveLength(1);
    expect(apart[0].since).toBeCloseTo(0.105, 12);
  });

  it('push() on CSR particles at 1 kHz keeps the close-pair look within its false-alarm target (k = 5)', { timeout: 120_000 }, () => {
    // detectors.md §7 protocol, as the 20 frames/s null test in clumpingDetector.test.ts: the
    // sensitive setting (2.5-s blocks, α = 0.05 per look), the upper 95 % bound ≤ 1.5α + 0.02.
    let looks = 0;
    let significant = 0;
    let slowLooks = 0;
    let slowSignificant = 0;
    for (const seed of [901, 902]) {
      const gen = generator({ seed, dropProbability: seed === 902 ? 0.01 : 0 });
      const detector = new ClumpingDetector({ blockSeconds: 2.5, baselineBlocks: 12, signalAlpha: 0.05 });
      for (let f = 0; f < 330 / DT; f++) detector.push(gen.next(), context);
      const summary = detector.summary();
      expect(summary.design.lookFrames).toBe(5);
      looks += summary.looks.persistentPairs.looks;
      significant += summary.looks.persistentPairs.significant;
      slowLooks += summary.looks.slowTracks.looks;
      slowSignificant += summary.looks.slowTracks.significant;
    }
    const [low, high] = clopperPearson(significant, looks);
    console.log(`1 kHz CSR null: ${significant} significant pair looks of ${looks} (95 % CI ${low.toFixed(3)}–${high.toFixed(3)})`);
    expect(looks).toBeGreaterThanOrEqual(230);
    expect(low).toBeLessThanOrEqual(0.05);
    expect(high).toBeLessThanOrEqual(1.5 * 0.05 + 0.02);
    // the slow-track look (per-track D on 150 steps of 5 ms): one look per 3 blocks at 3α
    const [slowLow, slowHigh] = clopperPearson(slowSignificant, slowLooks);
    console.log(`1 kHz CSR null: ${slowSignificant} significant slow-track looks of ${slowLooks} (95 % CI ${slowLow.toFixed(3)}–${slowHigh.toFixed(3)})`);
    expect(slowLooks).toBeGreaterThanOrEqual(75);
    expect(slowLow).toBeLessThanOrEqual(0.15);
    expect(slowHigh).toBeLessThanOrEqual(1.5 * 0.15 + 0.02);
  });

  it('push() at 1 kHz finds injected dimers by the pair look, with the design delay of L looks and half a block, and by the slow tracks, and warns', { timeout: 120_000 }, () => {
    // Reference delay (derived from the block design, detectors.md §3c, as at 20 frames/s):
    // L looks span (L − 1)·k·Δt, then the wait to the block end, uniform on [0, B]: median
    // (L − 1)·k·Δt + B/2. Default setting (10-s blocks, 6 baseline blocks).
    const delays: number[] = [];
    let reference = Number.NaN;
    for (const seed of [921, 922, 923]) {
      const onset = 70 + 3 * (seed - 921);
      const gen = generator({ seed, particles: 60, injected: { onset, fraction: 0.3, contact: 1.0 } });
      const detector = new ClumpingDetector();
      let warned = false;
      for (let f = 0; f < 125 / DT; f++) for (const c of detector.push(gen.next(), context)) if (c.level === 'warn' || c.level === 'stop') warned = true;
      const summary = detector.summary();
      // the slow-track sign (dimers at 0.718 D, per-track D from 5-ms displacements) agrees, so a warn
      expect(summary.looks.slowTracks.firstSignificant, `seed ${seed}`).not.toBeNull();
      expect(warned, `seed ${seed}`).toBe(true);
      expect(summary.dimerFraction?.value ?? 0).toBeGreaterThan(0.1);
      expect(summary.design.lookFrames).toBe(5);
      const L = summary.design.persistenceFrames as number; // frames, (L_looks − 1)·5 + 1
      reference = (L - 1) * DT + 5;
      const first = summary.looks.persistentPairs.firstSignificant;
      expect(first, `seed ${seed}`).not.toBeNull();
      delays.push((first as number) - onset);
    }
    delays.sort((a, b) => a - b);
    console.log(`1 kHz injected dimers: pair-look delays ${delays.map((d) => d.toFixed(1)).join(', ')} s against reference ${reference.toFixed(1)} s`);
    // every seed within the reference's block plus one more block, none before L looks could pass
    for (const delay of delays) {
      expect(delay).toBeLessThanOrEqual(reference + 15);
      expect(delay).toBeGreaterThanOrEqual(reference - 5);
    }
  });
});
