import type { Frame } from '../src/frame.js';
import { ServerError } from './serverError.js';

/** Typed arrays use the host's byte order; bins are little-endian (CONTRACTS §4). */
const LITTLE_ENDIAN = new Uint8Array(Uint16Array.of(1).buffer)[0] === 1;

/** Which numeric array of a frame message. */
type Field = 'x' | 'y' | 'z' | 'intensity' | 'id';

/**
 * The reused columnar buffers one rig connection decodes its frames into: Float64Arrays for
 * coordinates and intensity, a Uint32Array for ids, allocated once and grown by doubling, so a
 * frame costs no allocation in the steady state. A MessagePack `bin` is a Buffer view into the
 * message at whatever byte offset the payload fell: when that offset is a multiple of the element
 * size (8 for float64 at pixel size 1, 4 for ids) the frame takes a typed-array view of the
 * payload itself, with no copy (zero-copy; still checked in one pass); otherwise it is copied with
 * one memcpy into the aligned buffer and then checked (DataView little-endian reads on a
 * big-endian host). A plain
 * array (or a typed array that a library's extension type decoded to) is checked element by
 * element. Every value must be finite (ids: integers in
 * [0, 2³² − 1]).
 *
 * The returned frame is a view into these buffers or into the message: valid until the next
 * `decode`, and only as long as the message buffer is not reused (ws hands out a fresh one per
 * message; every consumer of a frame copies what it keeps).
 *
 * Complexity: O(count) per frame.
 *
 * @example
 * const buffers = new FrameBuffers();
 * buffers.decode({ index: 0, t: 0, x: [1, 2], y: [3, 4] }, 64, 1, 100).count // → 2
 */
export class FrameBuffers {
  private capacity = 0;
  private x = new Float64Array(0);
  private y = new Float64Array(0);
  private z = new Float64Array(0);
  private intensity = new Float64Array(0);
  private id = new Uint32Array(0);

  /**
   * Validates and copies a `frame` message's arrays.
   * @param message the decoded message (type already checked)
   * @param floatBits 64 or 32: width of float bins
   * @param pixelSize µm per position unit (applied to x, y, z)
   * @param maxCount most centroids accepted
   * @throws ServerError `JOSTLE_E_FRAME` (bad field), `JOSTLE_E_NOT_FINITE`, `JOSTLE_E_FRAME_TOO_LARGE`
   */
  decode(message: Record<string, unknown>, floatBits: 32 | 64, pixelSize: number, maxCount: number): Frame {
    const index = message.index;
    const t = message.t;
    if (typeof index !== 'number' || !Number.isInteger(index) || index < 0) throw new ServerError('JOSTLE_E_FRAME', 'frame index must be a non-negative integer');
    if (typeof t !== 'number' || !Number.isFinite(t)) throw new ServerError('JOSTLE_E_FRAME', 'frame t must be a finite number');
    if (message.rows !== undefined) return this.decodeRows(message, index, t, pixelSize, maxCount);
    const count = this.length(message.x, 'x', floatBits);
    if (this.length(message.y, 'y', floatBits) !== count) throw new ServerError('JOSTLE_E_FRAME', 'frame arrays differ in length');
    if (count > maxCount) throw new ServerError('JOSTLE_E_FRAME_TOO_LARGE', 'frame holds more particles than maxParticlesPerFrame');
    for (const name of ['z', 'intensity', 'id'] as const) {
      if (message[name] !== undefined && message[name] !== null && this.length(message[name], name, floatBits) !== count) {
        throw new ServerError('JOSTLE_E_FRAME', 'frame arrays differ in length');
      }
    }
    this.ensure(count);
    const x = this.copyFloats(message.x, count, floatBits, pixelSize, this.x);
    const y = this.copyFloats(message.y, count, floatBits, pixelSize, this.y);
    const frame: Frame = { index, t, count, x, y };
    if (message.z != null) frame.z = this.copyFloats(message.z, count, floatBits, pixelSize, this.z);
    if (message.intensity != null) frame.intensity = this.copyFloats(message.intensity, count, floatBits, 1, this.intensity);
    if (message.id != null) frame.id = this.copyIds(message.id, count);
    return frame;
  }

  /**
   * The row-wise form of a frame (an extension beyond CONTRACTS §4, for rigs that write one record
   * per particle): `rows: [{ x, y, z?, id?, intensity? }, …]` instead of the column arrays. The
   * first row decides which optional fields the frame has (null counts as absent); every row must
   * then have the same ones.
   * The values go into the same reused columns as the columnar form, checked alike (finite
   * numbers; ids integers in [0, 2³² − 1]); `x`/`y` columns beside `rows` are refused.
   */
  private decodeRows(message: Record<string, unknown>, index: number, t: number, pixelSize: number, maxCount: number): Frame {
    const rows = message.rows;
    if (!Array.isArray(rows)) throw new ServerError('JOSTLE_E_FRAME', 'frame rows must be an array of objects');
    if (message.x != null || message.y != null || message.z != null || message.id != null || message.intensity != null) {
      throw new ServerError('JOSTLE_E_FRAME', 'a frame has either rows or x and y arrays, not both');
    }
    const count = rows.length;
    if (count > maxCount) throw new ServerError('JOSTLE_E_FRAME_TOO_LARGE', 'frame holds more particles than maxParticlesPerFrame');
    this.ensure(count);
    const first = count > 0 ? (rows[0] as Record<string, unknown> | null) : undefined;
    const hasZ = first?.z != null;
    const hasId = first?.id != null;
    const hasIntensity = first?.intensity != null;
    const { x, y, z, id, intensity } = this;
    for (let p = 0; p < count; p++) {
      const row = rows[p] as Record<string, unknown> | null;
      if (row === null || typeof row !== 'object' || Array.isArray(row)) throw new ServerError('JOSTLE_E_FRAME', 'frame rows must be an array of objects');
      x[p] = rowFloat(row.x, pixelSize);
      y[p] = rowFloat(row.y, pixelSize);
      if ((row.z != null) !== hasZ || (row.id != null) !== hasId || (row.intensity != null) !== hasIntensity) {
        throw new ServerError('JOSTLE_E_FRAME', 'frame rows differ in their fields (the first row sets them)');
      }
      if (hasZ) z[p] = rowFloat(row.z, pixelSize);
      if (hasIntensity) intensity[p] = rowFloat(row.intensity, 1);
      if (hasId) {
        const v = row.id;
        if (typeof v !== 'number' || !Number.isInteger(v) || v < 0 || v > 0xffffffff) {
          throw new ServerError('JOSTLE_E_FRAME', 'frame id must hold integers in [0, 4294967295]');
        }
        id[p] = v;
      }
    }
    const frame: Frame = { index, t, count, x, y };
    if (hasZ) frame.z = z;
    if (hasIntensity) frame.intensity = intensity;
    if (hasId) frame.id = id;
    return frame;
  }

  private length(value: unknown, name: Field, floatBits: 32 | 64): number {
    if (Array.isArray(value)) return value.length;
    if (value instanceof Float64Array || value instanceof Float32Array || value instanceof Uint32Array) {
      // a typed array decoded from a library extension type: its elements are the values
      return value.length;
    }
    if (value instanceof Uint8Array) {
      const width = name === 'id' ? 4 : floatBits / 8;
      if (value.byteLength % width !== 0) throw new ServerError('JOSTLE_E_FRAME', `frame ${name} bin length is not a multiple of ${width} bytes`);
      return value.byteLength / width;
    }
    throw new ServerError('JOSTLE_E_FRAME', `frame ${name} must be an array of numbers or a bin`);
  }

  private ensure(count: number): void {
    if (count <= this.capacity) return;
    let capacity = Math.max(64, this.capacity);
    while (capacity < count) capacity *= 2;
    this.capacity = capacity;
    this.x = new Float64Array(capacity);
    this.y = new Float64Array(capacity);
    this.z = new Float64Array(capacity);
    this.intensity = new Float64Array(capacity);
    this.id = new Uint32Array(capacity);
  }

  /** Checks one float array into `out`, or returns a checked view of an aligned bin; returns the array holding the values. */
  private copyFloats(value: unknown, count: number, floatBits: 32 | 64, scale: number, out: Float64Array): Float64Array {
    if (Array.isArray(value) || value instanceof Float64Array || value instanceof Float32Array || value instanceof Uint32Array) {
      for (let i = 0; i < count; i++) {
        const v = value[i];
        if (typeof v !== 'number') throw new ServerError('JOSTLE_E_FRAME', 'frame arrays must hold numbers');
        if (!Number.isFinite(v)) throw new ServerError('JOSTLE_E_NOT_FINITE', 'frame holds a value that is not finite');
        out[i] = v * scale;
      }
      return out;
    }
    const bytes = value as Uint8Array;
    if (LITTLE_ENDIAN && floatBits === 64 && scale === 1 && (bytes.byteOffset & 7) === 0) {
      // Zero-copy: the payload is aligned for a Float64Array; view it in place and check it.
      const view = new Float64Array(bytes.buffer, bytes.byteOffset, count);
      for (let i = 0; i < count; i++) {
        if (view[i] - view[i] !== 0) throw new ServerError('JOSTLE_E_NOT_FINITE', 'frame holds a value that is not finite');
      }
      return view;
    }
    if (LITTLE_ENDIAN) {
      // Unaligned (or scaled, or float32): one memcpy of the bin into aligned memory, then one
      // validating pass.
      if (floatBits === 64) {
        new Uint8Array(out.buffer, out.byteOffset, count * 8).set(bytes.subarray(0, count * 8));
        if (scale === 1) {
          for (let i = 0; i < count; i++) {
            // v − v is 0 for a finite v and NaN for ±Infinity and NaN: one test per value
            if (out[i] - out[i] !== 0) throw new ServerError('JOSTLE_E_NOT_FINITE', 'frame holds a value that is not finite');
          }
        } else {
          for (let i = 0; i < count; i++) {
            const v = out[i];
            if (v - v !== 0) throw new ServerError('JOSTLE_E_NOT_FINITE', 'frame holds a value that is not finite');
            out[i] = v * scale;
          }
        }
        return out;
      }
      const narrow = this.float32Scratch(count);
      new Uint8Array(narrow.buffer, 0, count * 4).set(bytes.subarray(0, count * 4));
      for (let i = 0; i < count; i++) {
        const v = narrow[i];
        if (v - v !== 0) throw new ServerError('JOSTLE_E_NOT_FINITE', 'frame holds a value that is not finite');
        out[i] = v * scale;
      }
      return out;
    }
    // A DataView reads at any byte offset: msgpackr's bins are views into the message buffer.
    const view = new DataView(bytes.buffer, bytes.byteOffset, bytes.byteLength);
    for (let i = 0; i < count; i++) {
      const v = floatBits === 64 ? view.getFloat64(i * 8, true) : view.getFloat32(i * 4, true);
      if (!Number.isFinite(v)) throw new ServerError('JOSTLE_E_NOT_FINITE', 'frame holds a value that is not finite');
      out[i] = v * scale;
    }
    return out;
  }

  private narrow = new Float32Array(0);

  private float32Scratch(count: number): Float32Array {
    if (this.narrow.length < count) this.narrow = new Float32Array(Math.max(64, 2 * count));
    return this.narrow;
  }

  /** Checks the ids into the id buffer, or returns a view of an aligned bin (every uint32 is valid). */
  private copyIds(value: unknown, count: number): Uint32Array {
    const out = this.id;
    if (Array.isArray(value) || value instanceof Float64Array || value instanceof Float32Array || value instanceof Uint32Array) {
      for (let i = 0; i < count; i++) {
        const v = value[i];
        if (typeof v !== 'number' || !Number.isInteger(v) || v < 0 || v > 0xffffffff) {
          throw new ServerError('JOSTLE_E_FRAME', 'frame id must hold integers in [0, 4294967295]');
        }
        out[i] = v;
      }
      return out;
    }
    const bytes = value as Uint8Array;
    if (LITTLE_ENDIAN) {
      // every uint32 is a valid id: a view when aligned (zero-copy), else one memcpy
      if ((bytes.byteOffset & 3) === 0) return new Uint32Array(bytes.buffer, bytes.byteOffset, count);
      new Uint8Array(out.buffer, out.byteOffset, count * 4).set(bytes.subarray(0, count * 4));
      return out;
    }
    const view = new DataView(bytes.buffer, bytes.byteOffset, bytes.byteLength);
    for (let i = 0; i < count; i++) out[i] = view.getUint32(i * 4, true);
    return out;
  }
}

/** One checked number of a row, scaled: a number that is finite. */
function rowFloat(value: unknown, scale: number): number {
  if (typeof value !== 'number') throw new ServerError('JOSTLE_E_FRAME', 'frame rows need numbers for x and y (and z, intensity where given)');
  if (value - value !== 0) throw new ServerError('JOSTLE_E_NOT_FINITE', 'frame holds a value that is not finite');
  return value * scale;
}
