import { encodeMessage, type Encoding } from './decodeMessage.js';
import type { RunState } from './protocol.js';

const cache = new WeakMap<RunState, Map<Encoding, Buffer | string>>();

/**
 * Encodes an `update` message for one dashboard, encoding the (large) run state only once per
 * state and encoding however many dashboards watch: the shared body is `{type: 'update', ...state}`
 * and each dashboard's `coalesced` count is spliced in as a last field. In JSON the text is
 * spliced before its closing brace; in MessagePack the map header's count is raised by one
 * (fixmap, map16 or map32) and the key/value pair appended, which is a valid map of the
 * MessagePack specification. O(size of the state) once, then O(size) copy per dashboard.
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
    body = encodeMessage({ type: 'update', ...state }, encoding);
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
