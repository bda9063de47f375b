import { describe, expect, it } from 'vitest';
import { segmentRelativeSe } from '../../../src/detectors/clumping/segmentRelativeSe.js';
import { TrackRecords } from '../../../src/detectors/clumping/trackRecord.js';
import { Random } from '../../../src/stats/random.js';

describe('segmentRelativeSe', () => {
  it('segmentRelativeSe(N, x, R) reproduces the N_min table for 20 % and 10 % SE', () => {
    // detectors.md §6d table [computed] from the Vestergaard, Blainey & Flyvbjerg (2014) variance:
    // ε = 0 → 76 (20 %), 301 (10 %); ε = 1 → 152 (20 %); ε = −1/3 (blur, σ = 0) → 62 (20 %)
    const cases: [number, number, number, number][] = [[0, 0, 0.2, 76], [0, 0, 0.1, 301], [1, 0, 0.2, 152], [0, 1 / 6, 0.2, 62]];
    for (const [x, R, target, nMin] of cases) {
      expect(segmentRelativeSe(nMin, x, R)).toBeLessThanOrEqual(target);
      expect(segmentRelativeSe(nMin - 1, x, R)).toBeGreaterThan(target);
    }
  });
});

describe('TrackRecords', () => {
  describe('#segmentDiffusion', () => {
    it('segmentDiffusion() is unbiased and its SD matches segmentRelativeSe at x = 1, N = 100', () => {
      // detectors.md §6d [V]: x = 1, N = 100: SD 0.230 simulated against 0.247 predicted (2-D CVE,
      // Vestergaard, Blainey & Flyvbjerg 2014)
      const random = new Random(8);
      const D = 0.4, dt = 0.05, sigma = Math.sqrt(1 * D * dt), reps = 3000;
      const values: number[] = [];
      const records = new TrackRecords(4); // grows as records are taken: exercises the copy
      for (let rep = 0; rep < reps; rep++) {
        const k = records.allocate(0);
        let tx = 0, ty = 0;
        let ox = sigma * random.normal(), oy = sigma * random.normal();
        for (let s = 1; s <= 100; s++) {
          tx += Math.sqrt(2 * D * dt) * random.normal();
          ty += Math.sqrt(2 * D * dt) * random.normal();
          const nx = tx + sigma * random.normal(), ny = ty + sigma * random.normal();
          records.addStep(k, nx - ox, ny - oy, s);
          ox = nx; oy = ny;
        }
        values.push(records.segmentDiffusion(k, dt) / D);
        if (rep % 2 === 1) records.release(k); // half are given back and handed out again
      }
      const mean = values.reduce((a, b) => a + b, 0) / reps;
      const sd = Math.sqrt(values.reduce((a, b) => a + (b - mean) ** 2, 0) / (reps - 1));
      expect(Math.abs(mean - 1)).toBeLessThan(0.02); // SE of the mean ≈ 0.0045
      expect(sd).toBeGreaterThan(0.2);
      expect(sd).toBeLessThan(segmentRelativeSe(100, 1, 0) * 1.05);
    });

    it('segmentDiffusion() is NaN without a cross product and resetSegment() starts afresh', () => {
      const records = new TrackRecords();
      const other = records.allocate(0);
      records.addStep(other, 5, 5, 1);
      records.addStep(other, 5, 5, 2);
      records.release(other); // a reused record starts empty
      const k = records.allocate(10);
      expect(k).toBe(other);
      records.addStep(k, 0.1, 0.1, 11);
      expect(records.segmentDiffusion(k, 0.05)).toBeNaN();
      records.addStep(k, 0.1, 0.1, 13); // across a gap: no cross product
      expect(records.segmentDiffusion(k, 0.05)).toBeNaN();
      records.addStep(k, 0.1, -0.1, 14);
      expect(records.segmentDiffusion(k, 0.05)).toBeCloseTo((3 * 0.02) / (2 * 0.05 * 6) + 0 / (0.05 * 2), 12);
      records.resetSegment(k);
      expect(records.segmentSteps[k]).toBe(0);
    });
  });

  describe('#intensitiesAround', () => {
    it('intensitiesAround(split) splits the ring at the slot, latest first before, earliest first after', () => {
      const records = new TrackRecords(2);
      const before = records.allocate(0);
      records.addIntensity(before, 100, 0);
      const k = records.allocate(0);
      for (let s = 0; s < 60; s++) {
        records.addIntensity(k, s, s); // ring of 48 keeps slots 12..59
        records.allocate(s); // growth copies the rings on the way
      }
      const out = new Float64Array(10);
      expect(records.intensitiesAround(k, 30, false, 3, out)).toBe(3);
      expect(Array.from(out.subarray(0, 3))).toEqual([30, 29, 28]);
      expect(records.intensitiesAround(k, 30, true, 3, out)).toBe(3);
      expect(Array.from(out.subarray(0, 3))).toEqual([31, 32, 33]);
      expect(records.intensitiesAround(k, 5, false, 3, out)).toBe(0);
      const latest = records.latestIntensityAt(k);
      expect([records.logIntensity[latest], records.intensitySlot[latest]]).toEqual([59, 59]);
      expect(Array.from(records.intensities(before))).toEqual([100]);
      expect(records.latestIntensityAt(records.allocate(70))).toBe(-1);
    });
  });
});
