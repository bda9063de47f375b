import { Packr, Unpackr } from 'msgpackr';
import { ServerError } from './serverError.js';

/** The encoding a client speaks: MessagePack (binary frames) or JSON (text frames). */
export type Encoding = 'msgpack' | 'json';

// Plain maps only: no msgpackr records or extensions are required of (or sent to) a client,
// and maps become plain objects. `__proto__` keys are dropped below (no prototype tricks).
const unpackr = new Unpackr({ useRecords: false, mapsAsObjects: true });
const packr = new Packr({ useRecords: false });

/**
 * Decodes one WebSocket message into a plain object: a binary message as MessagePack, a text
 * message as JSON (CONTRACTS §4). MessagePack `bin` fields come out as Buffer views into the
 * message (not 8-byte aligned: copy them, see {@link FrameBuffers}).
 *
 * @throws ServerError `JOSTLE_E_DECODE` when the bytes are not one object
 * @example
 * decodeMessage(Buffer.from('{"type":"end"}'), false) // → { type: 'end' }
 */
export function decodeMessage(data: Buffer, isBinary: boolean): Record<string, unknown> {
  let value: unknown;
  try {
    value = isBinary ? unpackr.unpack(data) : JSON.parse(data.toString('utf8'));
  } catch {
    throw new ServerError('JOSTLE_E_DECODE', isBinary ? 'message is not valid MessagePack' : 'message is not valid JSON');
  }
  if (value === null || typeof value !== 'object' || Array.isArray(value) || ArrayBuffer.isView(value)) {
    throw new ServerError('JOSTLE_E_DECODE', 'message is not an object');
  }
  if (Object.prototype.hasOwnProperty.call(value, '__proto__')) delete (value as Record<string, unknown>).__proto__;
  return value as Record<string, unknown>;
}

/**
 * Encodes one server message in the client's encoding: MessagePack bytes or a JSON string.
 * Typed arrays become `bin` in MessagePack and plain arrays in JSON.
 *
 * @example
 * encodeMessage({ type: 'accepted', run: 'a' }, 'json') // → '{"type":"accepted","run":"a"}'
 */
export function encodeMessage(message: object, encoding: Encoding): Buffer | string {
  return encoding === 'msgpack' ? packr.pack(message) : JSON.stringify(message);
}
