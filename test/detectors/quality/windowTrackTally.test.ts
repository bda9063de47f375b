import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { WindowTrackTally } from '../../../src/detectors/quality/windowTrackTally.js';

/** The reference: one plain record per id in a Map (the tracks detector's earlier form). */
class MapTally {
  readonly byId = new Map<number, { steps: number; length: number }>();
  step(id: number, length: number): void {
    const r = this.byId.get(id);
    if (r) {
      r.steps++;
      r.length = length;
    } else this.byId.set(id, { steps: 1, length });
  }
  end(id: number, length: number): void {
    const r = this.byId.get(id);
    if (r) r.length = length;
  }
  totals(minimumSteps: number): { steps: number; longSteps: number } {
    let steps = 0;
    let longSteps = 0;
    for (const r of this.byId.values()) {
      steps += r.steps;
      if (r.length - 1 >= minimumSteps) longSteps += r.steps;
    }
    return { steps, longSteps };
  }
}

describe('WindowTrackTally', () => {
  it('tallies like one record per id in a Map, whatever rows it is given (reused, moved, huge, negative)', () => {
    // Reference: a Map of plain records driven by the same random operations (common practice, no source).
    const op = fc.oneof(
      { weight: 8, arbitrary: fc.record({ kind: fc.constant('step' as const), id: fc.integer({ min: 0, max: 15 }), row: fc.oneof(fc.integer({ min: -1, max: 10 }), fc.constant(1 << 21), fc.constant(3000)), length: fc.integer({ min: 1, max: 40 }) }) },
      { weight: 2, arbitrary: fc.record({ kind: fc.constant('end' as const), id: fc.integer({ min: 0, max: 15 }), length: fc.integer({ min: 1, max: 40 }) }) },
      { weight: 2, arbitrary: fc.record({ kind: fc.constant('totals' as const), minimumSteps: fc.integer({ min: 0, max: 30 }) }) },
      { weight: 1, arbitrary: fc.record({ kind: fc.constant('clear' as const) }) },
    );
    fc.assert(
      fc.property(fc.array(op, { maxLength: 300 }), (ops) => {
        const tally = new WindowTrackTally();
        const reference = new MapTally();
        for (const o of ops) {
          if (o.kind === 'step') {
            tally.step(o.id, o.row, o.length);
            reference.step(o.id, o.length);
          } else if (o.kind === 'end') {
            tally.end(o.id, o.length);
            reference.end(o.id, o.length);
          } else if (o.kind === 'totals') {
            expect(tally.totals(o.minimumSteps)).toEqual(reference.totals(o.minimumSteps));
          } else {
            tally.clear();
            reference.byId.clear();
          }
          expect(tally.size).toBe(reference.byId.size);
        }
        for (const m of [0, 5, 20]) expect(tally.totals(m)).toEqual(reference.totals(m));
      }),
      { numRuns: 500 },
    );
  });

  it('keeps rows apart as the pipeline hands them out: a row reused by a new track after the old one ended', () => {
    const tally = new WindowTrackTally();
    for (let k = 2; k <= 11; k++) tally.step(1, 0, k); // track 1: 10 steps, length 11
    tally.end(1, 11);
    for (let k = 2; k <= 4; k++) tally.step(2, 0, k); // track 2 takes row 0: 3 steps, length 4
    expect(tally.totals(10)).toEqual({ steps: 13, longSteps: 10 });
    expect(tally.totals(3)).toEqual({ steps: 13, longSteps: 13 });
    tally.clear();
    expect(tally.totals(0)).toEqual({ steps: 0, longSteps: 0 });
  });
});
