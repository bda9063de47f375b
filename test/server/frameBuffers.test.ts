import { describe, expect, it } from 'vitest';
import { FrameBuffers } from '../../server/frameBuffers.js';
import { isRunId, parseRunMessage, parseTagMessage } from '../../server/rigMessageFields.js';
import { originAllowed } from '../../server/accessGuard.js';

// Decoding rules of CONTRACTS §4: little-endian IEEE-754 float64 (float32 with floatBits 32) and
// uint32 ids in bins (IEEE 754-2019 binary64/binary32 layouts), plain arrays, equal lengths, finite values.

function bin(values: number[], kind: 'f64' | 'f32' | 'u32', offset = 0): Uint8Array {
  const width = kind === 'f64' ? 8 : 4;
  const bytes = new Uint8Array(offset + values.length * width);
  const view = new DataView(bytes.buffer);
  values.forEach((v, i) => {
    const at = offset + i * width;
    if (kind === 'f64') view.setFloat64(at, v, true);
    else if (kind === 'f32') view.setFloat32(at, v, true);
    else view.setUint32(at, v, true);
  });
  return bytes.subarray(offset);
}

describe('FrameBuffers', () => {
  describe('#decode', () => {
    it('decode(bins) reads little-endian float64 at any byte offset', () => {
      const b = new FrameBuffers();
      // 1/3 has no short decimal form: a byte-exact round trip is the check
      const frame = b.decode({ index: 3, t: 0.15, x: bin([1 / 3, -2.5], 'f64', 3), y: bin([1e-300, 7], 'f64', 5), id: bin([4294967295, 0], 'u32', 1) }, 64, 1, 10);
      expect(frame.count).toBe(2);
      expect(Array.from(frame.x.subarray(0, 2))).toEqual([1 / 3, -2.5]);
      expect(Array.from(frame.y.subarray(0, 2))).toEqual([1e-300, 7]);
      expect(Array.from(frame.id!.subarray(0, 2))).toEqual([4294967295, 0]);
    });

    it('decode(bins) views an aligned bin in place (zero-copy) and copies an unaligned one, checking both', () => {
      const b = new FrameBuffers();
      const x = bin([1.5, -2], 'f64', 8); // byte offset 8: aligned
      const y = bin([3, 4], 'f64', 3); // byte offset 3: not aligned
      const id = bin([7, 9], 'u32', 4);
      const frame = b.decode({ index: 0, t: 0, x, y, id }, 64, 1, 10);
      expect(frame.x.buffer).toBe(x.buffer); // the message's own bytes
      expect(frame.x.byteOffset).toBe(x.byteOffset);
      expect(frame.y.buffer).not.toBe(y.buffer); // copied into the connection's buffer
      expect(frame.id!.buffer).toBe(id.buffer);
      expect(Array.from(frame.x.subarray(0, 2))).toEqual([1.5, -2]);
      expect(Array.from(frame.y.subarray(0, 2))).toEqual([3, 4]);
      expect(Array.from(frame.id!.subarray(0, 2))).toEqual([7, 9]);
      // a pixel size other than 1 needs the scaled copy, aligned or not
      const scaled = b.decode({ index: 1, t: 0.1, x: bin([1.5, -2], 'f64', 8), y }, 64, 2, 10);
      expect(Array.from(scaled.x.subarray(0, 2))).toEqual([3, -4]);
      // the zero-copy path still refuses values that are not finite
      for (const bad of [NaN, Infinity, -Infinity]) {
        expect(() => b.decode({ index: 2, t: 0.2, x: bin([1, bad], 'f64', 16), y: bin([1, 2], 'f64', 16) }, 64, 1, 10)).toThrow(/not finite/);
      }
    });

    it('decode(bins, floatBits 32) reads float32 and scales by the pixel size', () => {
      const frame = new FrameBuffers().decode({ index: 0, t: 0, x: bin([0.5, 3], 'f32'), y: bin([1, 2], 'f32') }, 32, 0.1, 10);
      expect(Array.from(frame.x.subarray(0, 2))).toEqual([0.5 * 0.1, 3 * 0.1]);
    });

    it('decode(typed arrays) takes the elements of a typed array a library extension decoded to', () => {
      const frame = new FrameBuffers().decode({ index: 0, t: 0, x: Float64Array.of(1.25, 2), y: Float32Array.of(0.5, 4), id: Uint32Array.of(9, 8) }, 64, 2, 10);
      expect(Array.from(frame.x.subarray(0, 2))).toEqual([2.5, 4]);
      expect(Array.from(frame.y.subarray(0, 2))).toEqual([1, 8]);
      expect(Array.from(frame.id!.subarray(0, 2))).toEqual([9, 8]);
    });

    it('decode(arrays) reuses its buffers from frame to frame (the frame is a view)', () => {
      const b = new FrameBuffers();
      const first = b.decode({ index: 0, t: 0, x: [1, 2], y: [3, 4] }, 64, 1, 10);
      const second = b.decode({ index: 1, t: 0.1, x: [5], y: [6] }, 64, 1, 10);
      expect(second.x).toBe(first.x);
      expect(second.count).toBe(1);
      expect(first.x[0]).toBe(5);
    });

    it('decode() rejects unequal lengths, NaN, infinities, bad ids, bad index and ragged bins', () => {
      const b = new FrameBuffers();
      const code = (m: Record<string, unknown>, bits: 32 | 64 = 64) => {
        try {
          b.decode(m, bits, 1, 3);
          return 'accepted';
        } catch (error) {
          return (error as { code: string }).code;
        }
      };
      expect(code({ index: 0, t: 0, x: [1, 2], y: [1] })).toBe('JOSTLE_E_FRAME');
      expect(code({ index: 0, t: 0, x: [1], y: [1], z: [1, 2] })).toBe('JOSTLE_E_FRAME');
      expect(code({ index: 0, t: 0, x: bin([NaN], 'f64'), y: [1] })).toBe('JOSTLE_E_NOT_FINITE');
      expect(code({ index: 0, t: 0, x: [Infinity], y: [1] })).toBe('JOSTLE_E_NOT_FINITE');
      expect(code({ index: 0, t: 0, x: bin([Infinity], 'f32'), y: bin([1], 'f32') }, 32)).toBe('JOSTLE_E_NOT_FINITE');
      expect(code({ index: 0, t: 0, x: [1], y: [1], id: [1.5] })).toBe('JOSTLE_E_FRAME');
      expect(code({ index: 0, t: 0, x: [1], y: ['1'] })).toBe('JOSTLE_E_FRAME');
      expect(code({ index: -1, t: 0, x: [1], y: [1] })).toBe('JOSTLE_E_FRAME');
      expect(code({ index: 0, t: NaN, x: [1], y: [1] })).toBe('JOSTLE_E_FRAME');
      expect(code({ index: 0, t: 0, x: new Uint8Array(7), y: [1] })).toBe('JOSTLE_E_FRAME');
      expect(code({ index: 0, t: 0, x: { 0: 1 }, y: [1] })).toBe('JOSTLE_E_FRAME');
      expect(code({ index: 0, t: 0, x: [1, 2, 3, 4], y: [1, 2, 3, 4] })).toBe('JOSTLE_E_FRAME_TOO_LARGE');
      expect(code({ index: 0, t: 0, x: [], y: [] })).toBe('accepted');
    });

    it('decode(rows) gives the same columns as decode(arrays), optional fields, pixel size and ids included', () => {
      // the row-wise extension: one record per particle instead of one array per field
      const x = [1 / 3, -2.5, 7];
      const y = [0.1, 1e-300, -4];
      const z = [0, 2, 3];
      const intensity = [100, 250.5, 80];
      const id = [4294967295, 0, 12];
      const columns = new FrameBuffers().decode({ index: 4, t: 0.2, x, y, z, intensity, id }, 64, 0.5, 10);
      const rows = x.map((_, p) => ({ id: id[p], x: x[p], y: y[p], z: z[p], intensity: intensity[p] }));
      const fromRows = new FrameBuffers().decode({ index: 4, t: 0.2, rows }, 64, 0.5, 10);
      expect(fromRows.count).toBe(3);
      for (const field of ['x', 'y', 'z', 'intensity', 'id'] as const) {
        expect(Array.from(fromRows[field]!.subarray(0, 3)), field).toEqual(Array.from(columns[field]!.subarray(0, 3)));
      }
      expect(fromRows.x[0]).toBe((1 / 3) * 0.5); // scaled by the pixel size, like the columns
      expect(fromRows.intensity![1]).toBe(250.5); // intensity is not scaled
      // optional fields absent (or null) in the first row stay absent
      const plain = new FrameBuffers().decode({ index: 0, t: 0, rows: [{ x: 1, y: 2, z: null }, { x: 3, y: 4 }] }, 64, 1, 10);
      expect(plain.count).toBe(2);
      expect(plain.z).toBeUndefined();
      expect(plain.id).toBeUndefined();
      expect(Array.from(plain.y.subarray(0, 2))).toEqual([2, 4]);
      expect(new FrameBuffers().decode({ index: 0, t: 0, rows: [] }, 64, 1, 10).count).toBe(0);
    });

    it('decode(rows) rejects a bad row, ragged fields, columns beside rows and too many rows', () => {
      const b = new FrameBuffers();
      const code = (m: Record<string, unknown>) => {
        try {
          b.decode(m, 64, 1, 3);
          return 'accepted';
        } catch (error) {
          return (error as { code: string }).code;
        }
      };
      const frame = (rows: unknown, extra: Record<string, unknown> = {}) => ({ index: 0, t: 0, rows, ...extra });
      expect(code(frame({ 0: { x: 1, y: 1 } }))).toBe('JOSTLE_E_FRAME'); // not an array
      expect(code(frame([{ x: 1, y: 1 }, [1, 2]]))).toBe('JOSTLE_E_FRAME'); // a row that is not a record
      expect(code(frame([null]))).toBe('JOSTLE_E_FRAME');
      expect(code(frame([{ x: 1 }]))).toBe('JOSTLE_E_FRAME'); // y missing
      expect(code(frame([{ x: '1', y: 1 }]))).toBe('JOSTLE_E_FRAME');
      expect(code(frame([{ x: 1, y: NaN }]))).toBe('JOSTLE_E_NOT_FINITE'); // MessagePack can carry NaN
      expect(code(frame([{ x: 1, y: 1, z: -Infinity }]))).toBe('JOSTLE_E_NOT_FINITE');
      expect(code(frame([{ x: 1, y: 1, id: 1 }, { x: 2, y: 2 }]))).toBe('JOSTLE_E_FRAME'); // ragged: the first row sets the fields
      expect(code(frame([{ x: 1, y: 1 }, { x: 2, y: 2, intensity: 5 }]))).toBe('JOSTLE_E_FRAME');
      expect(code(frame([{ x: 1, y: 1, id: -1 }]))).toBe('JOSTLE_E_FRAME');
      expect(code(frame([{ x: 1, y: 1, id: 2 ** 32 }]))).toBe('JOSTLE_E_FRAME');
      expect(code(frame([{ x: 1, y: 1 }], { x: [1], y: [1] }))).toBe('JOSTLE_E_FRAME'); // both forms
      expect(code(frame([{ x: 1, y: 1 }, { x: 1, y: 1 }, { x: 1, y: 1 }, { x: 1, y: 1 }]))).toBe('JOSTLE_E_FRAME_TOO_LARGE');
      expect(code(frame([{ x: 1, y: 1, id: 3 }, { x: 1, y: 1, id: 4 }]))).toBe('accepted');
    });
  });
});

describe('parseRunMessage', () => {
  it('parseRunMessage(run) needs a positive frameInterval and checks every field', () => {
    expect(parseRunMessage({ type: 'run', frameInterval: 0.05 })).toEqual({ run: undefined, label: '', pixelSize: 1, floatBits: 64, pipeline: { frameInterval: 0.05 } });
    const full = parseRunMessage({ type: 'run', run: 'a.B-9_', frameInterval: 0.05, exposure: 0.01, radius: 0.5, radiusSd: 0.01, temperature: 21, medium: 'glycerol-water:0.3', floatBits: 32, pixelSize: 0.065, label: 'x' });
    expect(full.pipeline).toEqual({ frameInterval: 0.05, exposure: 0.01, radius: 0.5, radiusSd: 0.01, temperature: 21, medium: 'glycerol-water:0.3' });
    const code = (m: Record<string, unknown>) => {
      try {
        parseRunMessage(m);
        return 'accepted';
      } catch (error) {
        return (error as { code: string }).code;
      }
    };
    expect(code({ type: 'run' })).toBe('JOSTLE_E_RUN');
    expect(code({ type: 'run', frameInterval: 0 })).toBe('JOSTLE_E_RUN');
    expect(code({ type: 'run', frameInterval: 0.05, exposure: 0.06 })).toBe('JOSTLE_E_RUN');
    expect(code({ type: 'run', frameInterval: 0.05, radiusSd: 0.01 })).toBe('JOSTLE_E_RUN');
    expect(code({ type: 'run', frameInterval: 0.05, floatBits: 16 })).toBe('JOSTLE_E_RUN');
    expect(code({ type: 'run', frameInterval: 0.05, medium: 'honey' })).toBe('JOSTLE_E_MEDIUM');
    expect(code({ type: 'run', frameInterval: 0.05, run: 'a/b' })).toBe('JOSTLE_E_RUN');
  });
});

describe('isRunId', () => {
  it('isRunId(id) takes 1-64 of A-Za-z0-9._- and refuses . and ..', () => {
    expect(isRunId('x')).toBe(true);
    expect(isRunId('a'.repeat(64))).toBe(true);
    expect(isRunId('a'.repeat(65))).toBe(false);
    expect(isRunId('')).toBe(false);
    expect(isRunId('..')).toBe(false);
    expect(isRunId('.')).toBe(false);
    expect(isRunId('a b')).toBe(false);
    expect(isRunId('é')).toBe(false);
  });
});

describe('parseTagMessage', () => {
  it('parseTagMessage(tag) makes a point mark without end and refuses an end before start', () => {
    expect(parseTagMessage({ label: 'pump-on', start: 4 })).toEqual({ label: 'pump-on', start: 4, end: null, note: '' });
    expect(() => parseTagMessage({ label: 'x', start: 4, end: 3 })).toThrow(/end/);
  });
});

describe('originAllowed', () => {
  it('originAllowed(request) accepts no Origin or one whose host is the Host header', () => {
    expect(originAllowed({ headers: { host: '127.0.0.1:7311' } })).toBe(true);
    expect(originAllowed({ headers: { host: '127.0.0.1:7311', origin: 'http://127.0.0.1:7311' } })).toBe(true);
    expect(originAllowed({ headers: { host: '127.0.0.1:7311', origin: 'http://127.0.0.1:7312' } })).toBe(false);
    expect(originAllowed({ headers: { host: '127.0.0.1:7311', origin: 'null' } })).toBe(false);
  });
});
