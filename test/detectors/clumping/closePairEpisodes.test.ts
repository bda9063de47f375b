import { describe, expect, it } from 'vitest';
import { ClosePairEpisodes } from '../../../src/detectors/clumping/closePairEpisodes.js';

describe('ClosePairEpisodes', () => {
  describe('#see', () => {
    it('see(a, b) counts consecutive frames whatever the order of the ids', () => {
      const episodes = new ClosePairEpisodes();
      for (let slot = 0; slot < 5; slot++) {
        episodes.see(slot % 2 ? 9 : 3, slot % 2 ? 3 : 9, slot, slot * 0.05, 1);
        episodes.sweep(slot);
      }
      expect(episodes.get(3, 9)).toMatchObject({ a: 3, b: 9, frames: 5, since: 0 });
    });

    it('see(a, b) continues across a dropped frame (slot gap) but restarts after a frame apart', () => {
      // common practice, no source: a gap in the data is not evidence of separation
      const episodes = new ClosePairEpisodes();
      episodes.see(1, 2, 0, 0, 1); episodes.sweep(0);
      episodes.see(1, 2, 2, 0.1, 2); episodes.sweep(2); // slot 1 dropped
      expect(episodes.get(1, 2)?.frames).toBe(3);
      episodes.sweep(3); // delivered frame without the pair
      expect(episodes.get(1, 2)).toBeUndefined();
      expect(episodes.size).toBe(0);
      episodes.see(1, 2, 4, 0.2, 1); episodes.sweep(4);
      expect(episodes.get(1, 2)?.frames).toBe(1);
    });

    it('see(a, b) keeps pairs apart whatever the size of the ids, up to 2³² − 1, and near the 2²¹ key boundary', () => {
      // Track ids are unsigned 32-bit (CONTRACTS): a pair key must not confuse two pairs
      const episodes = new ClosePairEpisodes();
      const big = 2 ** 32 - 1;
      const edge = 2 ** 21;
      const pairs: [number, number][] = [[1, 2], [2, 1 + 2 ** 32 - 2], [edge - 1, edge], [edge, edge + 1], [edge + 1, big], [big - 1, big]];
      for (let slot = 0; slot < 3; slot++) {
        for (const [a, b] of pairs) episodes.see(b, a, slot, slot * 0.05, 1);
        if (slot < 2) episodes.see(edge, big, slot, slot * 0.05, 1); // this one only on two frames
        episodes.sweep(slot);
      }
      expect(episodes.size).toBe(pairs.length);
      for (const [a, b] of pairs) expect(episodes.get(a, b)).toMatchObject({ a, b, frames: 3 });
      expect(episodes.get(edge, big)).toBeUndefined();
      expect([...episodes.values()].map((e) => `${e.a}:${e.b}`).sort()).toEqual(pairs.map(([a, b]) => `${a}:${b}`).sort());
    });
  });
});
