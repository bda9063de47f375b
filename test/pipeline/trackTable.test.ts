import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { statsLayout } from '../../src/pipeline/statsLayout.js';
import { TrackTable } from '../../src/pipeline/trackTable.js';

describe('TrackTable', () => {
  it('touch + endStale end exactly the tracks unseen for more than maxGap slots, with their lengths, however frames skip', () => {
    // Reference: a Map of id → last slot and length, ended when slot − last > maxGap (the linking
    // gap allowance, CONTRACTS; common practice, no source). The table's O(maxGap) shortcut must never hide an end.
    const frame = fc.record({ advance: fc.integer({ min: 1, max: 4 }), present: fc.uniqueArray(fc.integer({ min: 0, max: 11 }), { maxLength: 12 }) });
    fc.assert(
      fc.property(fc.integer({ min: 0, max: 3 }), fc.array(frame, { minLength: 1, maxLength: 120 }), (maxGap, frames) => {
        const table = new TrackTable(statsLayout(2, 4), 9, 1, 1000);
        const live = new Map<number, { last: number; length: number }>();
        const endedBy = (slot: number): [number, number][] => {
          const out: [number, number][] = [];
          for (const [id, track] of live) if (slot - track.last > maxGap) out.push([id, track.length]);
          for (const [id] of out) live.delete(id);
          return out.sort((a, b) => a[0] - b[0]);
        };
        const check = (got: { id: number; length: number }[], want: [number, number][]) =>
          expect(got.map((e) => [e.id, e.length] as [number, number]).sort((a, b) => a[0] - b[0])).toEqual(want);
        let slot = -1;
        for (const f of frames) {
          const gap = slot < 0 ? 1 : f.advance;
          slot = slot < 0 ? 0 : slot + f.advance;
          if (gap > 1) check(table.endStale(slot - 1, maxGap), endedBy(slot - 1)); // as the pipeline does after drops
          for (const id of f.present) {
            table.touch(table.lookupOrCreate(id, slot, slot * 0.01), slot, slot * 0.01);
            const track = live.get(id);
            live.set(id, { last: slot, length: (track?.length ?? 0) + 1 });
          }
          check(table.endStale(slot, maxGap), endedBy(slot));
          expect(table.liveCount()).toBe(live.size);
        }
      }),
      { numRuns: 400 },
    );
  });
});
