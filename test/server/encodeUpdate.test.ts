import { decode } from '@msgpack/msgpack';
import { describe, expect, it } from 'vitest';
import { encodeUpdate } from '../../server/encodeUpdate.js';
import type { RunState } from '../../server/protocol.js';

// The spliced update must decode, with an independent MessagePack library (@msgpack/msgpack) and
// JSON.parse, to exactly the message built field by field.

const state = { run: 'a', label: 'bench "A"', state: 'live', report: { msd: [{ lag: 0.05, value: 0.1 }] }, history: { t: [1, 2] }, positions: { t: null, frames: [] }, counters: { frames: 3 } } as unknown as RunState;

describe('encodeUpdate', () => {
  it('encodeUpdate(state, json, n) equals JSON of { type: update, ...state, coalesced: n }', () => {
    expect(JSON.parse(encodeUpdate(state, 'json', 7) as string)).toEqual({ type: 'update', ...state, coalesced: 7 });
  });

  it('encodeUpdate(state, msgpack, n) decodes with @msgpack/msgpack to the same message, for several n from one cached body', () => {
    for (const n of [0, 5, 300, 70000]) {
      expect(decode(encodeUpdate(state, 'msgpack', n) as Buffer)).toEqual({ type: 'update', ...state, coalesced: n });
    }
  });
});
