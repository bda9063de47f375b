import { describe, expect, it } from 'vitest';
import { Linker, linkerDefaults } from '../../src/linking/linker.js';
import type { LinkerEstimates, LinkerOptions } from '../../src/linking/linker.js';
import { greedyConfusionBound } from '../../src/linking/greedyConfusionBound.js';
import { simulateBrownian } from './simulateBrownian.js';
import type { SimulatedFrame } from './simulateBrownian.js';
import { scoreLinks } from './scoreLinks.js';
import { greedyConfusion } from './greedyConfusion.js';

const frameInterval = 0.05; // s
const noDrift: LinkerEstimates = { frameInterval };

/** Link one frame given as plain arrays; returns the ids. */
function step(linker: Linker, xs: number[], ys: number[], slot: number, estimates = noDrift): number[] {
  const out = new Uint32Array(xs.length);
  linker.link(Float64Array.from(xs), Float64Array.from(ys), xs.length, slot, estimates, out);
  return Array.from(out);
}

/** Run a linker over simulated frames, one slot per frame. */
function runLinker(linker: Linker, frames: SimulatedFrame[], estimates: LinkerEstimates): Uint32Array[] {
  return frames.map((frame, slot) => {
    const out = new Uint32Array(frame.count);
    linker.link(frame.x, frame.y, frame.count, slot, estimates, out);
    return out;
  });
}

// Simulated sample (an invented bead suspension): D = 0.2 µm²/s, Δt = 0.05 s, σ = 20 nm,
// so the 2-D mean squared step of the detections is ⟨s²⟩ = 4DΔt + 4σ² = 0.0416 µm².
const diffusion = 0.2;
const sigma = 0.02;
const meanSquaredStep = 4 * diffusion * frameInterval + 4 * sigma * sigma;
const estimates: LinkerEstimates = { diffusion, localizationVariance: sigma * sigma, frameInterval };

function crowdedField(crowdingParameter: number, missProbability: number, seed: number, particles: number, frames: number) {
  const box = Math.sqrt(particles / (crowdingParameter / meanSquaredStep));
  const simulated = simulateBrownian({
    seed, particles, box, frames, diffusion, frameInterval, sigma, missProbability,
  });
  return { box, frames: simulated };
}

describe('Linker', () => {
  describe('#constructor', () => {
    it('new Linker() accepts no options and exposes the documented defaults', () => {
      const linker = new Linker();
      expect(linker.activeTrackCount).toBe(0);
      expect(linkerDefaults).toEqual({
        initialMaxDisplacement: 1, gateTailProbability: 1e-4, maxGapFrames: 2, missProbability: 0.05,
        penalizeMissedFrames: false,
      });
    });
    it('new Linker(options) rejects each bad option with a RangeError naming it', () => {
      const cases: [LinkerOptions, string][] = [
        [{ maxDisplacement: 0 }, 'Linker requires maxDisplacement finite and > 0'],
        [{ maxDisplacement: Infinity }, 'Linker requires maxDisplacement finite and > 0'],
        [{ initialMaxDisplacement: -1 }, 'Linker requires initialMaxDisplacement finite and > 0'],
        [{ gateTailProbability: 1 }, 'Linker requires gateTailProbability in (0, 1)'],
        [{ maxGapFrames: 1.5 }, 'Linker requires maxGapFrames to be an integer ≥ 0'],
        [{ maxGapFrames: -1 }, 'Linker requires maxGapFrames to be an integer ≥ 0'],
        [{ missProbability: 0 }, 'Linker requires missProbability in (0, 1)'],
        [{ missProbability: NaN }, 'Linker requires missProbability in (0, 1)'],
        [{ appearanceDensity: 0 }, 'Linker requires appearanceDensity finite and > 0'],
      ];
      for (const [options, message] of cases) {
        expect(() => new Linker(options)).toThrow(RangeError);
        expect(() => new Linker(options)).toThrow(message);
      }
    });
  });

  describe('#link', () => {
    it('link() gives fresh ids from 1 and keeps them when the detection order changes', () => {
      const linker = new Linker({ maxDisplacement: 0.5 });
      expect(step(linker, [1, 5, 9], [1, 5, 9], 0)).toEqual([1, 2, 3]);
      expect(step(linker, [9.1, 1.1, 5.1], [9, 1, 5], 1)).toEqual([3, 1, 2]);
      expect(linker.activeTrackCount).toBe(3);
    });

    it('link() gives a new particle the next unused id', () => {
      const linker = new Linker({ maxDisplacement: 0.5 });
      step(linker, [1, 5], [1, 5], 0);
      expect(step(linker, [20, 1.1, 5.1], [20, 1, 5], 1)).toEqual([3, 1, 2]);
    });

    it('link() handles an empty frame and a single detection', () => {
      const linker = new Linker({ maxDisplacement: 0.5 });
      expect(step(linker, [], [], 0)).toEqual([]);
      expect(step(linker, [3], [4], 1)).toEqual([1]);
      expect(step(linker, [], [], 2)).toEqual([]);
      expect(step(linker, [3.1], [4], 3)).toEqual([1]); // bridged one empty slot
    });

    it('link() minimises the total cost of a subnetwork instead of taking the closest pair first', () => {
      // Crocker & Grier 1996: maximise the product of Gaussian propagators over the subnetwork,
      // i.e. minimise Σ(d² − L²) with unlinked particles at L². Worked by hand with L = 1 µm:
      // tracks A(0, 0), B(0.9, 0), detections P(0.5, 0), Q(1.4, 0). The closest pair is B–P
      // (0.16 − 1 = −0.84, A and Q unlinked); A–P with B–Q gives (0.25 − 1) + (0.25 − 1) = −1.5.
      const linker = new Linker({ maxDisplacement: 1 });
      expect(step(linker, [0, 0.9], [0, 0], 0)).toEqual([1, 2]);
      expect(step(linker, [0.5, 1.4], [0, 0], 1)).toEqual([1, 2]);
    });

    it('link() starts a new track instead of linking when appearanceDensity makes births likelier', () => {
      // detectors.md §5 cost, worked by hand: L = 1 µm and no D give v_1 = L²/(2 ln 1e4) = 0.0543 µm²;
      // a 0.5 µm step costs 0.25/(2v_1) + ln(2πv_1) − ln 0.95 + ln β = 1.28 + ln β against the miss
      // cost −ln 0.05 = 3.00, so it links only while β < e^1.72 ≈ 5.6 µm⁻².
      const eager = new Linker({ maxDisplacement: 1 });
      step(eager, [0], [0], 0);
      expect(step(eager, [0.5], [0], 1)).toEqual([1]);
      const linksBelow = new Linker({ maxDisplacement: 1, appearanceDensity: 4 });
      step(linksBelow, [0], [0], 0);
      expect(step(linksBelow, [0.5], [0], 1)).toEqual([1]);
      const birthsAbove = new Linker({ maxDisplacement: 1, appearanceDensity: 8 });
      step(birthsAbove, [0], [0], 0);
      expect(step(birthsAbove, [0.5], [0], 1)).toEqual([2]);
    });

    it('link() bridges up to maxGapFrames missed slots and starts a new track after more', () => {
      const linker = new Linker({ maxDisplacement: 0.5, maxGapFrames: 2 });
      step(linker, [2], [2], 0);
      expect(step(linker, [2.1], [2], 3)).toEqual([1]); // 2 slots missed: bridged
      expect(step(linker, [2.2], [2], 7)).toEqual([2]); // 3 slots missed: new track
    });

    it('link() ends tracks unseen for more than maxGapFrames slots and lists them in endedTracks()', () => {
      const linker = new Linker({ maxDisplacement: 0.5, maxGapFrames: 1 });
      step(linker, [1, 5], [1, 5], 10);
      step(linker, [1.1, 5.1], [1, 5], 11);
      step(linker, [1.2], [1], 12); // id 2 unseen for 1 slot: still open
      expect(linker.endedTracks().count).toBe(0);
      step(linker, [1.3], [1], 13); // id 2 unseen for 2 slots: ends now
      const ended = linker.endedTracks();
      expect(ended.count).toBe(1);
      expect(ended.id[0]).toBe(2);
      expect(ended.firstSlot[0]).toBe(10);
      expect(ended.lastSlot[0]).toBe(11);
      expect(ended.length[0]).toBe(2);
      expect(ended.lastX[0]).toBeCloseTo(5.1, 12);
      expect(linker.activeTrackCount).toBe(1);
      step(linker, [1.4], [1], 14);
      expect(linker.endedTracks().count).toBe(0); // the view is reset by each call
      linker.endAll();
      expect(linker.endedTracks().count).toBe(1);
      expect(linker.endedTracks().length[0]).toBe(5);
      expect(linker.activeTrackCount).toBe(0);
    });

    it('link() gives id 0 to detections with NaN coordinates and ignores frames whose slot does not increase', () => {
      const linker = new Linker({ maxDisplacement: 0.5 });
      expect(step(linker, [1, NaN, 3], [1, 2, Infinity], 0)).toEqual([1, 0, 0]);
      expect(linker.skippedDetections).toBe(2);
      expect(step(linker, [1], [1], 0)).toEqual([0]);
      expect(linker.skippedFrames).toBe(1);
      expect(step(linker, [1.05], [1], 1)).toEqual([1]);
    });

    it('link() does not mutate its inputs', () => {
      const linker = new Linker({ maxDisplacement: 0.5 });
      const x = Float64Array.of(1, 2);
      const y = Float64Array.of(3, 4);
      const out = new Uint32Array(2);
      linker.link(x, y, 2, 0, noDrift, out);
      linker.link(x, y, 2, 1, noDrift, out);
      expect(Array.from(x)).toEqual([1, 2]);
      expect(Array.from(y)).toEqual([3, 4]);
    });

    it('link() gates at L = √((4DΔt + 4σ²)·ln(1/ε)) from the estimates, initialMaxDisplacement before them', () => {
      // detectors.md §5 "Choosing L" [D]: P(|d| > L) = ε for a 2-D Gaussian step.
      const linker = new Linker({ initialMaxDisplacement: 0.8 });
      step(linker, [0], [0], 0, noDrift);
      expect(linker.lastGate).toBe(0.8);
      step(linker, [0], [0], 1, estimates);
      expect(linker.lastGate).toBeCloseTo(Math.sqrt(meanSquaredStep * Math.log(1e4)), 12);
      const fixed = new Linker({ maxDisplacement: 0.3 });
      step(fixed, [0], [0], 0, estimates);
      expect(fixed.lastGate).toBe(0.3);
    });

    it('link() follows a drifting field when given the drift, which an undrifted gate fragments', () => {
      // Drift of 3 per-axis step SDs per frame (detectors.md §5: gate around drift-predicted positions).
      const perAxisStep = Math.sqrt(2 * diffusion * frameInterval + 2 * sigma * sigma);
      const speed = (3 * perAxisStep) / frameInterval; // µm/s
      const driftVelocity: [number, number] = [0.6 * speed, 0.8 * speed];
      const particles = 200;
      const box = Math.sqrt(particles / (0.003 / meanSquaredStep));
      const frames = simulateBrownian({
        seed: 9, particles, box, frames: 30, diffusion, frameInterval, sigma, missProbability: 0, driftVelocity,
      });
      const everywhere = { low: -Infinity, high: Infinity };
      const predicted = runLinker(new Linker(), frames, { ...estimates, driftVelocity });
      const unpredicted = runLinker(new Linker(), frames, estimates);
      const scorePredicted = scoreLinks(frames, predicted, particles, 2, everywhere);
      const scoreUnpredicted = scoreLinks(frames, unpredicted, particles, 2, everywhere);
      const tracks = (ids: Uint32Array[]) => new Set(ids.flatMap((frame) => Array.from(frame))).size;
      // common practice, no source: one track per particle means no fragmentation.
      expect(tracks(predicted) / particles).toBeLessThan(1.05);
      expect(scorePredicted.linkError).toBeLessThan(0.01);
      expect(tracks(unpredicted) / particles).toBeGreaterThan(2);
      expect(scoreUnpredicted.linkError).toBeGreaterThan(0.05);
    });
  });

  describe('on simulated Brownian fields', () => {
    // detectors.md §5 pass criteria: link error ≤ P_NN(ξ) = πξ/(1 + πξ) at every ξ, ≤ 1 % at
    // ξ ≤ 0.003, and ≥ 95 % of gaps closed with p_miss = 0.05 and G = 2.
    for (const crowdingParameter of [0.003, 0.01, 0.03, 0.1]) {
      it(`link() errs less than the greedy bound πξ/(1 + πξ) at ξ = ${crowdingParameter}`, () => {
        const particles = 800;
        const { box, frames } = crowdedField(crowdingParameter, 0, 1000 + crowdingParameter * 1e4, particles, 20);
        const linker = new Linker();
        const ids = runLinker(linker, frames, estimates);
        const margin = 3 * linker.lastGate;
        const window = { low: margin, high: box - margin };
        const score = scoreLinks(frames, ids, particles, 2, window);
        const bound = greedyConfusionBound(crowdingParameter)!;
        expect(score.trueLinks).toBeGreaterThan(5000);
        expect(score.linkError).toBeLessThan(bound);
        if (crowdingParameter <= 0.003) expect(score.linkError).toBeLessThanOrEqual(0.01);
        if (crowdingParameter >= 0.03) {
          // The simulator reproduces the greedy confusion it is compared with (detectors.md §5
          // table, "P_NN simulated" within 20 %), and the global assignment does better than greedy.
          const greedy = greedyConfusion(frames, window);
          expect(Math.abs(greedy / bound - 1)).toBeLessThan(0.2);
          expect(score.linkError).toBeLessThan(greedy);
        }
      });
    }

    it('link() keeps errors ≤ 1 % and closes ≥ 95 % of gaps at ξ = 0.003 with p_miss = 0.05, G = 2', () => {
      const particles = 800;
      const { box, frames } = crowdedField(0.003, 0.05, 4242, particles, 30);
      const linker = new Linker({ maxGapFrames: 2, missProbability: 0.05 });
      const ids = runLinker(linker, frames, estimates);
      const margin = 3 * linker.lastGate;
      const score = scoreLinks(frames, ids, particles, 2, { low: margin, high: box - margin });
      expect(score.trueGaps).toBeGreaterThan(500);
      expect(score.linkError).toBeLessThanOrEqual(0.01);
      expect(score.closedGaps / score.trueGaps).toBeGreaterThanOrEqual(0.95);
    });

    it('link() with penalizeMissedFrames closes fewer gaps than without on the same field', () => {
      const particles = 800;
      const { box, frames } = crowdedField(0.01, 0.05, 99, particles, 30);
      const window = { low: 2, high: box - 2 };
      const plain = scoreLinks(frames, runLinker(new Linker(), frames, estimates), particles, 2, window);
      const penalized = scoreLinks(
        frames, runLinker(new Linker({ penalizeMissedFrames: true }), frames, estimates), particles, 2, window,
      );
      expect(penalized.closedGaps).toBeLessThan(plain.closedGaps);
    });
  });
});
