import { describe, expect, it } from 'vitest';
import type { FrameSteps } from '../../../src/detectors/frameSteps.js';
import { StepCovarianceRing } from '../../../src/detectors/temperature/stepCovarianceRing.js';
import { BrownianSteps } from './brownianSteps.js';

/** FrameSteps with the given per-particle steps (same dx and dy), ids 1..n, one slot per call. */
function frame(slot: number, stepsX: number[], stepsY: number[] = stepsX): FrameSteps {
  const n = stepsX.length;
  return {
    t: slot, frameIndex: slot, slot, slotGap: 1, frameInterval: 1, exposure: 0, count: n,
    trackId: Uint32Array.from({ length: n }, (_, i) => i + 1), trackRow: Int32Array.from({ length: n }, (_, i) => i), x: new Float64Array(n), y: new Float64Array(n),
    intensity: undefined, trackLength: new Uint32Array(n), stepCount: n,
    stepParticle: Int32Array.from({ length: n }, (_, i) => i), dx: Float64Array.from(stepsX), dy: Float64Array.from(stepsY),
    endedCount: 0, endedTrackId: new Uint32Array(0), endedLength: new Uint32Array(0), endedX: new Float64Array(0),
    endedY: new Float64Array(0), field: { xMin: 0, xMax: 1, yMin: 0, yMax: 1 },
  };
}

describe('StepCovarianceRing', () => {
  it('diffusion(sums) gives the CVE check value −0.5 (× N/(N−1)) for the track x = [0, 1, 0, 1, 0]', () => {
    // estimators.md §2 check values [C]: x = [0,1,0,1,0], Δt = 1, R = 0 → D̂ = −0.5, σ̂² = 1
    // (Vestergaard, Blainey & Flyvbjerg 2014 CVE). Mirrored partner tracks keep the frame mean at 0;
    // the N/(N−1) drift-correction factor (detectors.md §1) then multiplies both.
    const ring = new StepCovarianceRing(16);
    const pattern = [1, -1, 1, -1];
    pattern.forEach((s, k) => ring.push(frame(k + 1, [s, s, -s, -s])));
    const sums = ring.sumSince(4);
    const factor = 4 / 3;
    expect(StepCovarianceRing.diffusion(sums, 1)).toBeCloseTo(-0.5 * factor, 12);
    expect(StepCovarianceRing.localizationVariance(sums, 0)).toBeCloseTo(1 * factor, 12);
    // same track with R = 1/6: σ̂² = 5/6 (estimators.md §2)
    expect(StepCovarianceRing.localizationVariance(sums, 1 / 6)).toBeCloseTo((5 / 6) * factor, 12);
  });

  it('push removes common-mode drift: the pure-drift track x = [0, 1, 2, 3, 4] for all particles gives 0', () => {
    // estimators.md §2: a lone drifting track gives D̂ = 1.5 (bias 1.5·v²Δt); with the frame mean
    // subtracted (detectors.md §1) common drift leaves nothing
    const ring = new StepCovarianceRing(16);
    for (let k = 1; k <= 4; k++) ring.push(frame(k, [1, 1, 1]));
    const sums = ring.sumSince(4);
    expect(StepCovarianceRing.diffusion(sums, 1)).toBe(0);
    expect(StepCovarianceRing.localizationVariance(sums, 0)).toBe(0);
  });

  it('diffusion and localizationVariance are unbiased on simulated Brownian steps with σ', () => {
    // Vestergaard et al. 2014: the CVE is unbiased; estimators.md §2 variance formula for the
    // tolerance: Var(D̂)/D² ≈ (6 + 4ε + 2ε²)/(2n) for n 2-D steps, ε = σ²/(DΔt)
    const gen = new BrownianSteps({ seed: 5, particles: 40, diffusion: 0.5, frameInterval: 0.05, sigma: () => 0.05 });
    const ring = new StepCovarianceRing(4096);
    for (let f = 0; f < 2001; f++) ring.push(gen.next().steps);
    const sums = ring.sumSince(2000);
    const d = StepCovarianceRing.diffusion(sums, 0.05);
    const epsilon = 0.05 ** 2 / (0.5 * 0.05);
    const n = sums.squareCount / 2;
    const se = 0.5 * Math.sqrt((6 + 4 * epsilon + 2 * epsilon ** 2) / (2 * n));
    expect(Math.abs(d - 0.5)).toBeLessThan(3 * se);
    expect(StepCovarianceRing.localizationVariance(sums, 0)).toBeCloseTo(0.0025, 3);
  });

  it('push pairs lag-1 products only within a track and across consecutive slots', () => {
    const ring = new StepCovarianceRing(16);
    ring.push(frame(1, [1, -1]));
    ring.push(frame(3, [1, -1])); // slot gap: no products
    expect(ring.sumSince(1).productCount).toBe(0);
    ring.push(frame(4, [1, -1]));
    expect(ring.sumSince(1).productCount).toBe(4); // 2 tracks × 2 axes
  });

  it('sumSince(k) equals the sum of single-frame sums (chunked equals whole)', () => {
    const gen = new BrownianSteps({ seed: 9, particles: 10, diffusion: 0.4, frameInterval: 0.03 });
    const ring = new StepCovarianceRing(8);
    let single = 0;
    for (let f = 0; f < 20; f++) {
      ring.push(gen.next().steps);
      if (f >= 15) single += ring.sumSince(1).sumSquares;
    }
    expect(ring.sumSince(5).sumSquares).toBeCloseTo(single, 12);
    expect(ring.sumSince(100).frames).toBe(8); // clamped to the capacity
  });

  it('push skips non-finite steps', () => {
    const ring = new StepCovarianceRing(4);
    ring.push(frame(1, [1, -1, Number.NaN]));
    expect(ring.sumSince(1).squareCount).toBe(4);
  });

  it('new StepCovarianceRing(1) throws RangeError', () => {
    expect(() => new StepCovarianceRing(1)).toThrow(RangeError);
  });
});
