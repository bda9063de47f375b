import { mkdtemp, rm } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { MessageChannel, receiveMessageOnPort } from 'node:worker_threads';
import { afterEach, describe, expect, it } from 'vitest';
import { packBatch, unpackBatch } from '../../server/batchSql.mjs';
import { Recorder, type FrameRow, type RecordRow } from '../../server/recorder.js';
import type { Frame } from '../../src/frame.js';

const folders: string[] = [];
afterEach(async () => {
  for (const f of folders.splice(0)) await rm(f, { recursive: true, force: true });
});

function frame(index: number, n: number, parts: { z?: boolean; id?: boolean; intensity?: boolean }): Frame {
  return {
    index,
    t: index * 0.002,
    count: n,
    x: Float64Array.from({ length: n + 3 }, (_, i) => index + i * 0.25), // longer than count: only n values kept
    y: Float64Array.from({ length: n + 3 }, (_, i) => -i),
    z: parts.z ? Float64Array.from({ length: n }, (_, i) => i / 7) : undefined,
    id: parts.id ? Uint32Array.from({ length: n }, (_, i) => 4_000_000_000 - i) : undefined,
    intensity: parts.intensity ? Float64Array.from({ length: n }, (_, i) => 1000 + i) : undefined,
  };
}

/** The bytes of the first n values, as the recording stores them (little-endian, as in memory). */
function bytesOf(values: Float64Array | Uint32Array | undefined, n: number): number[] | null {
  return values ? Array.from(new Uint8Array(values.buffer, values.byteOffset, n * values.BYTES_PER_ELEMENT)) : null;
}

describe('packBatch / unpackBatch (the recording batch handed to the writer thread)', () => {
  it('unpackBatch(packBatch(rows)) gives back every frame row with its BLOBs, and the readings', async () => {
    const data = await mkdtemp(join(tmpdir(), 'jostle-pack-'));
    folders.push(data);
    const recorder = new Recorder(data, { writerThread: false });
    const sources = [frame(0, 5, { id: true }), frame(1, 3, { z: true, intensity: true }), frame(2, 0, {}), frame(3, 4, { z: true, id: true, intensity: true })];
    const rows: RecordRow[] = [
      recorder.frameRow('run-a', sources[0]),
      { kind: 'temperature', run: 'run-a', t: 0.001, celsius: 21.5 },
      recorder.frameRow('run-b', sources[1]),
      recorder.frameRow('run-a', sources[2]),
      recorder.frameRow('run-b', sources[3]),
    ];
    const { message, transfer } = packBatch(rows);
    expect(message.runs).toEqual(['run-a', 'run-b']);
    expect(transfer).toHaveLength(1 + 4); // the numbers, and one buffer per frame row
    // through a real port, as to the thread: the buffers are moved (detached here), not copied
    const channel = new MessageChannel();
    channel.port1.postMessage(message, transfer);
    const frameRows = rows.filter((r): r is FrameRow => r.kind === 'frame');
    for (const row of frameRows) expect(row.packed.byteLength).toBe(0);
    const received = receiveMessageOnPort(channel.port2)?.message as typeof message;
    channel.port1.close();
    const back = unpackBatch(received);
    expect(back.map((r) => r.kind)).toEqual(['frame', 'frame', 'frame', 'frame', 'temperature']);
    expect(back[4]).toEqual({ kind: 'temperature', run: 'run-a', t: 0.001, celsius: 21.5 });
    const expectedRuns = ['run-a', 'run-b', 'run-a', 'run-b'];
    for (let f = 0; f < 4; f++) {
      const got = back[f] as FrameRow;
      const src = sources[f];
      const n = src.count;
      expect(got.run).toBe(expectedRuns[f]);
      expect(got.index).toBe(src.index);
      expect(got.t).toBe(src.t);
      expect(got.count).toBe(n);
      expect(Array.from(got.x)).toEqual(bytesOf(src.x, n));
      expect(Array.from(got.y)).toEqual(bytesOf(src.y, n));
      expect(got.z ? Array.from(got.z) : null).toEqual(bytesOf(src.z, n));
      expect(got.id ? Array.from(got.id) : null).toEqual(bytesOf(src.id, n));
      expect(got.intensity ? Array.from(got.intensity) : null).toEqual(bytesOf(src.intensity, n));
      // bytes: what counts against the quota, the BLOBs' total
      expect(got.bytes).toBe(n * (16 + (src.z ? 8 : 0) + (src.id ? 4 : 0) + (src.intensity ? 8 : 0)));
    }
    recorder.close();
  });
});
