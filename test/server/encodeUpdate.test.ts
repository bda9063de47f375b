import { decode } from '@msgpack/msgpack';
import { describe, expect, it } from 'vitest';
import { encodeUpdate, positionsJson } from '../../server/encodeUpdate.js';
import type { RunState } from '../../server/protocol.js';

// The spliced update must decode, with an independent MessagePack library (@msgpack/msgpack) and
// JSON.parse, to exactly the message built field by field.

const state = { run: 'a', label: 'bench "A"', state: 'live', report: { msd: [{ lag: 0.05, value: 0.1 }] }, history: { t: [1, 2] }, positions: { t: null, frames: [] }, counters: { frames: 3 } } as unknown as RunState;

describe('encodeUpdate', () => {
  it('encodeUpdate(state, json, n) equals JSON of { type: update, ...state, coalesced: n }', () => {
    expect(JSON.parse(encodeUpdate(state, 'json', 7) as string)).toEqual({ type: 'update', ...state, coalesced: 7 });
  });

  it('encodeUpdate(state, json, n) splices the positions from their per-frame text, equal to JSON of the whole state', () => {
    const older = { t: 0.95, x: [1 / 3, -2.5], y: [7, 1e-300], id: [4, 5] };
    const newer = { t: 1, x: [0.1, -2.4], y: [7.1, 0], id: null };
    // a label holding the marker's characters must not catch the splice
    const first = { ...state, label: '"positions":"@jostle:positions@"', positions: { t: 0.95, frames: [older] } } as unknown as RunState;
    expect(JSON.parse(encodeUpdate(first, 'json', 1) as string)).toEqual({ type: 'update', ...first, coalesced: 1 });
    // the next state shares the older frame's object (its text comes from the cache)
    const second = { ...first, positions: { t: 1, frames: [newer, older] } } as unknown as RunState;
    expect(JSON.parse(encodeUpdate(second, 'json', 0) as string)).toEqual({ type: 'update', ...second, coalesced: 0 });
    expect(positionsJson(second.positions)).toBe(JSON.stringify(second.positions));
    expect(positionsJson({ t: null, frames: [] })).toBe(JSON.stringify({ t: null, frames: [] }));
  });

  it('encodeUpdate(state, msgpack, n) decodes with @msgpack/msgpack to the same message, for several n from one cached body', () => {
    for (const n of [0, 5, 300, 70000]) {
      expect(decode(encodeUpdate(state, 'msgpack', n) as Buffer)).toEqual({ type: 'update', ...state, coalesced: n });
    }
  });
});
