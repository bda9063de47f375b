import type { Frame } from '../src/frame.js';
import { ServerError } from './serverError.js';

/** Typed arrays use the host's byte order; bins are little-endian (CONTRACTS §4). */
const LITTLE_ENDIAN = new Uint8Array(Uint16Array.of(1).buffer)[0] === 1;

/** Which numeric array of a frame message. */
type Field = 'x' | 'y' | 'z' | 'intensity' | 'id';

/**
 * The reused columnar buffers one rig connection decodes its frames into: Float64Arrays for
 * coordinates and intensity, a Uint32Array for ids, allocated once and grown by doubling, so a
 * frame costs no allocation in the steady state. A MessagePack `bin` (a Buffer view at any byte
 * offset, so not aligned for a Float64Array) is copied with one memcpy into the aligned buffer and
 * then checked in one pass (DataView little-endian reads on a big-endian host); a plain
 * array (or a typed array that a library's extension type decoded to) is checked element by
 * element. Every value must be finite (ids: integers in
 * [0, 2³² − 1]).
 *
 * The returned frame is a view into these buffers: valid until the next `decode`.
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
    const count = this.length(message.x, 'x', floatBits);
    if (this.length(message.y, 'y', floatBits) !== count) throw new ServerError('JOSTLE_E_FRAME', 'frame arrays differ in length');
    if (count > maxCount) throw new ServerError('JOSTLE_E_FRAME_TOO_LARGE', 'frame holds more particles than maxParticlesPerFrame');
    for (const name of ['z', 'intensity', 'id'] as const) {
      if (message[name] !== undefined && message[name] !== null && this.length(message[name], name, floatBits) !== count) {
        throw new ServerError('JOSTLE_E_FRAME', 'frame arrays differ in length');
      }
    }
    this.ensure(count);
    this.copyFloats(message.x, count, floatBits, pixelSize, this.x);
    this.copyFloats(message.y, count, floatBits, pixelSize, this.y);
    const frame: Frame = { index, t, count, x: this.x, y: this.y };
    if (message.z != null) {
      this.copyFloats(message.z, count, floatBits, pixelSize, this.z);
      frame.z = this.z;
    }
    if (message.intensity != null) {
      this.copyFloats(message.intensity, count, floatBits, 1, this.intensity);
      frame.intensity = this.intensity;
    }
    if (message.id != null) {
      this.copyIds(message.id, count);
      frame.id = this.id;
    }
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

  private copyFloats(value: unknown, count: number, floatBits: 32 | 64, scale: number, out: Float64Array): void {
    if (Array.isArray(value) || value instanceof Float64Array || value instanceof Float32Array || value instanceof Uint32Array) {
      for (let i = 0; i < count; i++) {
        const v = value[i];
        if (typeof v !== 'number') throw new ServerError('JOSTLE_E_FRAME', 'frame arrays must hold numbers');
        if (!Number.isFinite(v)) throw new ServerError('JOSTLE_E_NOT_FINITE', 'frame holds a value that is not finite');
        out[i] = v * scale;
      }
      return;
    }
    const bytes = value as Uint8Array;
    if (LITTLE_ENDIAN) {
      // Fast path: one memcpy of the bin into aligned memory (a msgpackr bin is a view at any byte
      // offset, so it cannot be viewed as a Float64Array in place), then one validating pass.
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
        return;
      }
      const narrow = this.float32Scratch(count);
      new Uint8Array(narrow.buffer, 0, count * 4).set(bytes.subarray(0, count * 4));
      for (let i = 0; i < count; i++) {
        const v = narrow[i];
        if (v - v !== 0) throw new ServerError('JOSTLE_E_NOT_FINITE', 'frame holds a value that is not finite');
        out[i] = v * scale;
      }
      return;
    }
    // A DataView reads at any byte offset: msgpackr's bins are views into the message buffer.
    const view = new DataView(bytes.buffer, bytes.byteOffset, bytes.byteLength);
    for (let i = 0; i < count; i++) {
      const v = floatBits === 64 ? view.getFloat64(i * 8, true) : view.getFloat32(i * 4, true);
      if (!Number.isFinite(v)) throw new ServerError('JOSTLE_E_NOT_FINITE', 'frame holds a value that is not finite');
      out[i] = v * scale;
    }
  }

  private narrow = new Float32Array(0);

  private float32Scratch(count: number): Float32Array {
    if (this.narrow.length < count) this.narrow = new Float32Array(Math.max(64, 2 * count));
    return this.narrow;
  }

  private copyIds(value: unknown, count: number): void {
    const out = this.id;
    if (Array.isArray(value) || value instanceof Float64Array || value instanceof Float32Array || value instanceof Uint32Array) {
      for (let i = 0; i < count; i++) {
        const v = value[i];
        if (typeof v !== 'number' || !Number.isInteger(v) || v < 0 || v > 0xffffffff) {
          throw new ServerError('JOSTLE_E_FRAME', 'frame id must hold integers in [0, 4294967295]');
        }
        out[i] = v;
      }
      return;
    }
    const bytes = value as Uint8Array;
    if (LITTLE_ENDIAN) {
      // every uint32 is a valid id: one memcpy into the aligned buffer
      new Uint8Array(out.buffer, out.byteOffset, count * 4).set(bytes.subarray(0, count * 4));
      return;
    }
    const view = new DataView(bytes.buffer, bytes.byteOffset, bytes.byteLength);
    for (let i = 0; i < count; i++) out[i] = view.getUint32(i * 4, true);
  }
}
