import { describe, expect, it } from 'vitest';
import { SegmentCollector } from '../../../src/detectors/vibration/segmentCollector.js';
import { SimulatedStream } from './simulateSteps.js';

describe('SegmentCollector', () => {
  it('new SegmentCollector(length) rejects a length below 8', () => {
    expect(() => new SegmentCollector(4)).toThrow(RangeError);
    expect(() => new SegmentCollector(8.5)).toThrow(RangeError);
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
  });
});
