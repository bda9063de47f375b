import { describe, expect, it } from 'vitest';
import type { FrameSteps } from '../../../src/detectors/frameSteps.js';
import { SegmentCollector } from '../../../src/detectors/vibration/segmentCollector.js';
import { SimulatedStream } from './simulateSteps.js';

/** A copy of `frame` with its particles (and their steps) in the order `order`, track rows given by `rowOf`. */
function reordered(frame: FrameSteps, order: readonly number[], rowOf: (particle: number, k: number) => number): FrameSteps {
  const n = order.length;
  const copy: FrameSteps = {
    ...frame,
    count: n,
    trackId: Uint32Array.from(order, (i) => frame.trackId[i]),
    trackRow: Int32Array.from(order, (i, k) => rowOf(i, k)),
    x: Float64Array.from(order, (i) => frame.x[i]),
    y: Float64Array.from(order, (i) => frame.y[i]),
    trackLength: Uint32Array.from(order, (i) => frame.trackLength[i]),
    stepCount: frame.stepCount === 0 ? 0 : n,
    stepParticle: Int32Array.from(order, (_, k) => k),
    dx: Float64Array.from(order, (i) => frame.dx[i]),
    dy: Float64Array.from(order, (i) => frame.dy[i]),
  };
  return copy;
}

describe('SegmentCollector', () => {
  it('new SegmentCollector(length) rejects a length below 8', () => {
    expect(() => new SegmentCollector(4)).toThrow(RangeError);
    expect(() => new SegmentCollector(8.5)).toThrow(RangeError);
  });

  it('new SegmentCollector(length, maxRows) rejects maxRows below 1 or fractional', () => {
    expect(() => new SegmentCollector(16, 0)).toThrow(/maxRows/);
    expect(() => new SegmentCollector(16, 2.5)).toThrow(/maxRows/);
    expect(() => new SegmentCollector(16, Number.NaN)).toThrow(/maxRows/);
  });

  describe('#push', () => {
    it('push(steps) completes a segment every L one-slot steps and keeps the steps exactly', () => {
      // Definition of the F-test input (Shumway 1970, JASA 65:1527: K segments of equal length; common practice)
      const stream = new SimulatedStream({ seed: 3, particles: 5 });
      const collector = new SegmentCollector(16);
      const kept: number[] = [];
      let completed = 0;
      for (let i = 0; i < 1 + 32; i++) {
        const frame = stream.next();
        if (frame.stepCount > 0) kept.push(frame.dx[2]);
        if (collector.push(frame)) {
          completed++;
          expect(collector.completeRows).toBe(5);
          expect(collector.rowTrackId[2]).toBe(3);
          for (let t = 0; t < 16; t++) expect(collector.stepsX[2 * 16 + t]).toBe(kept[(completed - 1) * 16 + t]);
        }
      }
      expect(completed).toBe(2);
    });

    it('push(steps) discards a segment broken by a dropped frame and counts it', () => {
      // detectors.md §2 (uneven timestamps): skip segments that contain drops
      const stream = new SimulatedStream({ seed: 4, particles: 4, dropProbability: 0.2 });
      const collector = new SegmentCollector(16);
      for (let i = 0; i < 400; i++) {
        const frame = stream.next();
        if (collector.push(frame)) expect(collector.completeRows).toBe(4);
      }
      expect(collector.brokenSegments).toBeGreaterThan(10);
      // P(16 steps without a drop) = 0.8^17 ≈ 2 %: few segments complete (binomial, common practice)
      expect(collector.completedSegments).toBeLessThan(collector.brokenSegments);
    });

    it('push(steps) leaves out a particle that misses a slot inside the segment', () => {
      // Only particles present throughout the segment enter the F-test (detectors.md §2 step 1)
      const stream = new SimulatedStream({ seed: 5, particles: 6 });
      const collector = new SegmentCollector(8);
      let done = false;
      stream.next();
      for (let i = 0; i < 8 && !done; i++) {
        const frame = stream.next();
        if (i === 4) {
          // particle index 1 (track 2) not linked on this frame: remove its step
          frame.stepParticle[1] = frame.stepParticle[frame.stepCount - 1];
          frame.dx[1] = frame.dx[frame.stepCount - 1];
          frame.dy[1] = frame.dy[frame.stepCount - 1];
          frame.stepCount--;
        }
        done = collector.push(frame);
      }
      expect(done).toBe(true);
      expect(collector.completeRows).toBe(5);
      expect(Array.from(collector.rowTrackId.subarray(0, 5))).not.toContain(2);
    });

    it('push(steps) ignores a duplicated frame (slot gap 0)', () => {
      const stream = new SimulatedStream({ seed: 6, particles: 3 });
      const collector = new SegmentCollector(8);
      stream.next();
      let completedAt = -1;
      for (let i = 0; i < 9; i++) {
        const frame = stream.next();
        if (i === 3) {
          const gap = frame.slotGap;
          frame.slotGap = 0;
          expect(collector.push(frame)).toBe(false);
          frame.slotGap = gap;
        }
        if (collector.push(frame)) completedAt = i;
      }
      expect(completedAt).toBe(7);
      expect(collector.brokenSegments).toBe(0);
    });

    it('push(steps) with maxRows keeps the first maxRows particles to step into the segment, with the same steps as without the limit', () => {
      // Any subset chosen without looking at the steps keeps the F-test exact (Shumway 1970, JASA 65:1527)
      const stream = new SimulatedStream({ seed: 7, particles: 12 });
      const capped = new SegmentCollector(16, 5);
      const full = new SegmentCollector(16);
      let completed = 0;
      for (let i = 0; i < 1 + 48; i++) {
        const frame = stream.next();
        const a = capped.push(frame);
        const b = full.push(frame);
        expect(a).toBe(b);
        if (!a) continue;
        completed++;
        expect(capped.completeRows).toBe(5);
        expect(full.completeRows).toBe(12);
        expect(Array.from(capped.rowTrackId.subarray(0, 5))).toEqual([1, 2, 3, 4, 5]);
        expect(Array.from(capped.stepsX.subarray(0, 5 * 16))).toEqual(Array.from(full.stepsX.subarray(0, 5 * 16)));
        expect(Array.from(capped.stepsY.subarray(0, 5 * 16))).toEqual(Array.from(full.stepsY.subarray(0, 5 * 16)));
      }
      expect(completed).toBe(3);
      // memory stays bounded by maxRows rows of L steps per axis
      expect(capped.stepsX.length).toBeLessThanOrEqual(5 * 16);
    });

    it('push(steps) with maxRows follows kept particles through a new order each frame, whether the track rows are stable or only the index', () => {
      // The track row is a hint (FrameSteps.trackRow): with the index as row, lookups fall back to the ids
      for (const rows of ['stable', 'index'] as const) {
        const stream = new SimulatedStream({ seed: 8, particles: 10 });
        const capped = new SegmentCollector(8, 4);
        const full = new SegmentCollector(8);
        let frameNumber = 0;
        let checked = 0;
        for (let i = 0; i < 1 + 16; i++) {
          const frame = stream.next();
          // rotate the order by one particle a frame; the first frame of each segment starts at particle 3
          const shift = (3 + frameNumber++) % 10;
          const order = Array.from({ length: 10 }, (_, k) => (k + shift) % 10);
          const copy = reordered(frame, order, (particle, k) => (rows === 'stable' ? particle : k));
          const a = capped.push(copy);
          expect(full.push(copy)).toBe(a);
          if (!a) continue;
          checked++;
          const ids = Array.from(capped.rowTrackId.subarray(0, capped.completeRows));
          expect(ids).toHaveLength(4);
          for (let r = 0; r < 4; r++) {
            const fullRow = Array.from(full.rowTrackId.subarray(0, full.completeRows)).indexOf(ids[r]);
            expect(Array.from(capped.stepsX.subarray(r * 8, r * 8 + 8))).toEqual(Array.from(full.stepsX.subarray(fullRow * 8, fullRow * 8 + 8)));
          }
        }
        expect(checked).toBe(2);
      }
    });
  });
});
