import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { TrackCache } from '../../src/detectors/trackCache.js';

describe('TrackCache', () => {
  it('answers like a plain Map whatever rows it is given (rows reused, wrong, huge or negative)', () => {
    // Reference: the built-in Map, driven by the same random operations (common practice, no source).
    const op = fc.oneof(
      fc.record({ kind: fc.constant('set' as const), id: fc.integer({ min: 0, max: 20 }), row: fc.integer({ min: -2, max: 12 }), value: fc.integer() }),
      fc.record({ kind: fc.constant('find' as const), id: fc.integer({ min: 0, max: 20 }), row: fc.oneof(fc.integer({ min: -2, max: 12 }), fc.constant(1 << 21)) }),
      fc.record({ kind: fc.constant('delete' as const), id: fc.integer({ min: 0, max: 20 }) }),
      fc.record({ kind: fc.constant('clear' as const) }),
    );
    fc.assert(
      fc.property(fc.array(op, { maxLength: 200 }), (ops) => {
        const cache = new TrackCache<number>();
        const reference = new Map<number, number>();
        for (const o of ops) {
          if (o.kind === 'set') {
            cache.set(o.id, o.row, o.value);
            reference.set(o.id, o.value);
          } else if (o.kind === 'find') {
            expect(cache.find(o.id, o.row)).toBe(reference.get(o.id));
          } else if (o.kind === 'delete') {
            expect(cache.delete(o.id)).toBe(reference.delete(o.id));
          } else {
            cache.clear();
            reference.clear();
          }
          expect(cache.size).toBe(reference.size);
        }
        expect([...cache.entries()]).toEqual([...reference.entries()]);
      }),
      { numRuns: 500 },
    );
  });

  it('finds a track through its row after a row is handed to another track', () => {
    const cache = new TrackCache<string>();
    cache.set(1, 0, 'first');
    expect(cache.find(1, 0)).toBe('first');
    cache.delete(1); // track 1 ends; the pipeline reuses row 0 for track 2
    expect(cache.find(1, 0)).toBeUndefined();
    cache.set(2, 0, 'second');
    expect(cache.find(2, 0)).toBe('second');
    expect(cache.find(1, 0)).toBeUndefined();
    cache.set(1, 5, 'again'); // the id comes back on another row
    expect(cache.find(1, 0)).toBe('again');
    expect(cache.find(2, 0)).toBe('second');
  });
});
