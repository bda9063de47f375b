import { encodeMessage, type Encoding } from './decodeMessage.js';
import type { RunPositions, RunState } from './protocol.js';

const cache = new WeakMap<RunState, Map<Encoding, Buffer | string>>();
/** JSON text of each trail frame, by its (never changed) plain-array object. */
const frameJson = new WeakMap<object, string>();
/** Stands for the positions in the JSON of the rest of the state; spliced out (it is the last key). */
const MARK = '@jostle:positions@';
const POSITIONS_MARK = `"positions":"${MARK}"`;

/**
 * JSON text of a state's positions, equal to `JSON.stringify(positions)`, each frame's part
 * encoded once per frame object and reused by later updates that carry the same frame (the live
 * run shares a kept frame's object between its states). O(new frames' centroids).
 */
export function positionsJson(positions: RunPositions): string {
  const parts: string[] = [];
  for (const frame of positions.frames) {
    let text = frameJson.get(frame);
    if (text === undefined) {
      text = JSON.stringify(frame);
      frameJson.set(frame, text);
    }
    parts.push(text);
  }
  return `{"t":${JSON.stringify(positions.t)},"frames":[${parts.join(',')}]}`;
}

/** `{type: 'update', ...state}` as JSON, the positions from their per-frame cache. */
function updateJson(state: RunState): string {
  const { positions, ...rest } = state;
  // positions last, as a marker string, then replaced by its text: the last occurrence of the
  // marker is this key's (a label holding the same characters comes earlier in the text)
  const text = JSON.stringify({ type: 'update', ...rest, positions: MARK });
  const at = text.lastIndexOf(POSITIONS_MARK);
  return `${text.slice(0, at)}"positions":${positionsJson(positions)}${text.slice(at + POSITIONS_MARK.length)}`;
}

/**
 * Encodes an `update` message for one dashboard, encoding the (large) run state only once per
 * state and encoding however many dashboards watch: the shared body is `{type: 'update', ...state}`
 * and each dashboard's `coalesced` count is spliced in as a last field. In JSON the text is
 * spliced before its closing brace; in MessagePack the map header's count is raised by one
 * (fixmap, map16 or map32) and the key/value pair appended, which is a valid map of the
 * MessagePack specification. O(size of the state) once, then O(size) copy per dashboard. In JSON
 * the positions' frames are taken from a per-frame cache (`positionsJson`): a kept trail frame is
 * encoded once however many updates carry it.
 *
 * @example
 * encodeUpdate(state, 'json', 2) // → '{"type":"update","run":"a",…,"coalesced":2}'
 */
export function encodeUpdate(state: RunState, encoding: Encoding, coalesced: number): Buffer | string {
  let byEncoding = cache.get(state);
  if (!byEncoding) {
    byEncoding = new Map();
    cache.set(state, byEncoding);
  }
  let body = byEncoding.get(encoding);
  if (body === undefined) {
    // (a state without positions, as some tests build, is encoded whole)
    body = encoding === 'json' && state.positions ? updateJson(state) : encodeMessage({ type: 'update', ...state }, encoding);
    byEncoding.set(encoding, body);
  }
  if (typeof body === 'string') return `${body.slice(0, -1)},"coalesced":${coalesced}}`;
  const tail = encodeMessage({ coalesced }, 'msgpack') as Buffer;
  const head = body[0];
  // the tail is itself a one-entry map: drop its header to keep only the key/value pair
  const pair = tail.subarray(tail[0] === 0xde ? 3 : tail[0] === 0xdf ? 5 : 1);
  const out = Buffer.concat([body, pair]);
  if (head >= 0x80 && head < 0x8f) out[0] = head + 1;
  else if (head === 0xde && out.readUInt16BE(1) < 0xffff) out.writeUInt16BE(out.readUInt16BE(1) + 1, 1);
  else if (head === 0xdf) out.writeUInt32BE(out.readUInt32BE(1) + 1, 1);
  else return encodeMessage({ type: 'update', ...state, coalesced }, 'msgpack');
  return out;
}
