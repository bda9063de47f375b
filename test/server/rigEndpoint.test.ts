import { encode as independentEncode, decode as independentDecode } from '@msgpack/msgpack';
import { Packr } from 'msgpackr';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { WebSocket } from 'ws';
import { RigClient } from '../../tools/rig/rigClient.js';
import { brownianFrames } from '../helpers/brownianFrames.js';
import { collect, testServer, until } from './serverHarness.js';

// The live protocol of CONTRACTS §4, spoken by four different rigs, and its bad-input policy.
// MessagePack framing follows the MessagePack specification (msgpack/msgpack spec.md: bin 8/16/32,
// float 64, map); the independent @msgpack/msgpack library checks that no msgpackr-specific
// extension is needed.

const TOKEN = 'test-token-0123';
const auth = { authorization: `Bearer ${TOKEN}` };
const frames = brownianFrames({ seed: 11, particles: 12, frames: 40, frameInterval: 0.05, diffusion: 0.4, sigma: 0.02 });

let server: Awaited<ReturnType<typeof testServer>>;
beforeAll(async () => {
  server = await testServer({ maxPayloadBytes: 64 * 1024 });
});
afterAll(async () => {
  await server.stop();
});

function liveFrames(run: string): number {
  return server.registry.get(run)?.pipeline.counts().frames ?? -1;
}

describe('/rig', () => {
  it('accepts a msgpackr rig sending Float64Array bins and answers in MessagePack', async () => {
    const rig = await RigClient.connect(`${server.ws}/rig`, { token: TOKEN, encoding: 'msgpack' });
    const accepted = await rig.open({ type: 'run', run: 'bins-msgpackr', frameInterval: 0.05, label: 'bench A' });
    expect(accepted).toEqual({ type: 'accepted', run: 'bins-msgpackr', lastIndex: null, resumed: false });
    for (const frame of frames) await rig.frame(frame);
    await rig.end();
    await until(() => server.registry.get('bins-msgpackr')?.state === 'ended');
    expect(liveFrames('bins-msgpackr')).toBe(40);
    expect(server.registry.get('bins-msgpackr')?.pipeline.counts().centroids).toBe(40 * 12);
    await rig.close();
  });

  it('accepts a JSON rig with plain arrays and answers in JSON', async () => {
    const c = await collect(`${server.ws}/rig`, auth);
    c.socket.send(JSON.stringify({ type: 'run', run: 'plain-json', frameInterval: 0.05 }));
    expect(await c.next((m) => m.type === 'accepted')).toMatchObject({ run: 'plain-json' });
    for (const f of frames.slice(0, 10)) {
      c.socket.send(JSON.stringify({ type: 'frame', index: f.index, t: f.t, x: Array.from(f.x.subarray(0, f.count)), y: Array.from(f.y.subarray(0, f.count)), id: Array.from(f.id!.subarray(0, f.count)) }));
    }
    await until(() => liveFrames('plain-json') === 10);
    await c.close();
  });

  it('accepts a row-wise rig (one record per particle) in JSON and in MessagePack, with the same report as a columnar rig', async () => {
    // the server's row-wise extension of the frame message: rows: [{ x, y, id }, …]
    const run = async (name: string, encoding: 'json' | 'msgpack', layout: 'rows' | 'columns') => {
      const rig = await RigClient.connect(`${server.ws}/rig`, { token: TOKEN, encoding, layout });
      await rig.open({ type: 'run', run: name, frameInterval: 0.05, radius: 0.5, temperature: 22 });
      for (const frame of frames) await rig.frame(frame);
      await rig.end();
      await until(() => server.registry.get(name)?.state === 'ended');
      expect(rig.errors).toEqual([]);
      await rig.close();
      return server.registry.get(name)!.pipeline.report();
    };
    const columns = await run('rows-baseline', 'msgpack', 'columns');
    const jsonRows = await run('rows-json', 'json', 'rows');
    expect(jsonRows.input.frames).toBe(40);
    expect(jsonRows.msd).toEqual(columns.msd);
    expect(jsonRows.diffusion.coefficient).toEqual(columns.diffusion.coefficient);
    // the independent encoder's maps, as a rig in another language would send its records
    const c = await collect(`${server.ws}/rig`, auth);
    c.socket.send(independentEncode({ type: 'run', run: 'rows-msgpack', frameInterval: 0.05, radius: 0.5, temperature: 22 }));
    await c.next((m) => m.type === 'accepted');
    for (const f of frames) {
      const rows = Array.from({ length: f.count }, (_, p) => ({ id: f.id![p], x: f.x[p], y: f.y[p] }));
      c.socket.send(independentEncode({ type: 'frame', index: f.index, t: f.t, rows }));
    }
    c.socket.send(independentEncode({ type: 'end' }));
    await until(() => server.registry.get('rows-msgpack')?.state === 'ended');
    expect(server.registry.get('rows-msgpack')!.pipeline.report().msd).toEqual(columns.msd);
    // a ragged row is refused like any bad frame field, and the run goes on
    c.socket.send(independentEncode({ type: 'run', run: 'rows-msgpack', frameInterval: 0.05 }));
    await c.next((m) => m.type === 'accepted');
    c.socket.send(independentEncode({ type: 'frame', index: 100, t: 5, rows: [{ x: 1, y: 2, id: 1 }, { x: 3, y: 4 }] }));
    expect(await c.next((m) => m.type === 'error')).toMatchObject({ code: 'JOSTLE_E_FRAME' });
    await c.close();
  });

  it('accepts the independent @msgpack/msgpack encoder with plain arrays', async () => {
    const c = await collect(`${server.ws}/rig`, auth);
    c.socket.send(independentEncode({ type: 'run', run: 'plain-msgpack', frameInterval: 0.05 }));
    const accepted = await c.next((m) => m.type === 'accepted');
    expect(accepted.run).toBe('plain-msgpack');
    for (const f of frames.slice(0, 5)) {
      c.socket.send(independentEncode({ type: 'frame', index: f.index, t: f.t, x: Array.from(f.x.subarray(0, f.count)), y: Array.from(f.y.subarray(0, f.count)) }));
    }
    await until(() => liveFrames('plain-msgpack') === 5);
    await c.close();
  });

  it('accepts the independent @msgpack/msgpack encoder with little-endian bins, float32 included', async () => {
    const c = await collect(`${server.ws}/rig`, auth);
    c.socket.send(independentEncode({ type: 'run', run: 'bins-f32', frameInterval: 0.05, floatBits: 32 }));
    await c.next((m) => m.type === 'accepted');
    const x = Float32Array.of(1.5, 2.25, 3);
    const y = Float32Array.of(4, 5.5, 6.75);
    const id = Uint32Array.of(1, 2, 3);
    // bins as plain bytes (a Uint8Array view), the way numpy's .astype('<f4').tobytes() would go
    c.socket.send(independentEncode({ type: 'frame', index: 0, t: 0, x: new Uint8Array(x.buffer), y: new Uint8Array(y.buffer), id: new Uint8Array(id.buffer) }));
    c.socket.send(independentEncode({ type: 'frame', index: 1, t: 0.05, x: new Uint8Array(x.buffer), y: new Uint8Array(y.buffer), id: new Uint8Array(id.buffer) }));
    await until(() => liveFrames('bins-f32') === 2);
    // the server's answer decodes with the independent library too
    c.socket.send(independentEncode({ type: 'frame', index: 1, t: 0.1, x: [1], y: [2] }));
    const error = await c.next((m) => m.type === 'error');
    expect(error).toMatchObject({ code: 'JOSTLE_E_FRAME_ORDER', seq: 4 });
    await c.close();
  });

  it('decodes a bin at an odd byte offset exactly (unaligned views are copied)', async () => {
    const c = await collect(`${server.ws}/rig`, auth);
    const packr = new Packr({ useRecords: false });
    c.socket.send(packr.pack({ type: 'run', run: 'odd-offset', frameInterval: 0.1 }));
    await c.next((m) => m.type === 'accepted');
    // 'q' (a 1-byte key) puts the x bin at an odd offset in the message
    const x = Float64Array.of(0.1, 1e-300, -7.25);
    c.socket.send(packr.pack({ q: 1, type: 'frame', index: 0, t: 0, x, y: Float64Array.of(1, 2, 3), id: Uint32Array.of(5, 6, 7) }));
    await until(() => liveFrames('odd-offset') === 1);
    const positions = server.registry.get('odd-offset')!.runState().positions.frames[0];
    expect(positions.x).toEqual([0.1, 1e-300, -7.25]);
    expect(positions.id).toEqual([5, 6, 7]);
    await c.close();
  });

  it('rejects malformed messages with error {code, reason, seq}, counts them and stays open', async () => {
    const before = server.counters.rejectedMessages;
    const c = await collect(`${server.ws}/rig`, auth);
    c.socket.send('{"type":"frame","index":0,"t":0,"x":[1],"y":[2]}'); // 1: before run
    c.socket.send('{not json'); // 2
    c.socket.send(JSON.stringify({ type: 'run', run: 'bad-input', frameInterval: 0.05 })); // 3
    await c.next((m) => m.type === 'accepted');
    c.socket.send(JSON.stringify({ type: 'frame', index: 0, t: 0, x: [1, 2], y: [3] })); // 4: lengths
    c.socket.send(JSON.stringify({ type: 'frame', index: 0, t: 0, x: [1, null], y: [3, 4] })); // 5: NaN travels as null in JSON
    c.socket.send(new Packr({ useRecords: false }).pack({ type: 'frame', index: 0, t: 0, x: Float64Array.of(1, NaN), y: Float64Array.of(3, 4) })); // 6: NaN in a bin
    c.socket.send(JSON.stringify({ type: 'frame', index: 0, t: 0, x: [1], y: [3], id: [-1] })); // 7
    c.socket.send(JSON.stringify({ type: 'shake' })); // 8
    c.socket.send(JSON.stringify({ type: 'run', frameInterval: -1 })); // 9
    c.socket.send(JSON.stringify({ type: 'frame', index: 0, t: 0, x: [1], y: [3] })); // 10: good
    c.socket.send(JSON.stringify({ type: 'frame', index: 0, t: 0.05, x: [1], y: [3] })); // 11: duplicate index
    c.socket.send(JSON.stringify({ type: 'temperature', t: 1, celsius: 'warm' })); // 12
    await until(() => c.messages.filter((m) => m.type === 'error').length === 10);
    const errors = c.messages.filter((m) => m.type === 'error');
    expect(errors.map((e) => [e.seq, e.code])).toEqual([
      [1, 'JOSTLE_E_NO_RUN'],
      [2, 'JOSTLE_E_DECODE'],
      [4, 'JOSTLE_E_FRAME'],
      [5, 'JOSTLE_E_FRAME'],
      [6, 'JOSTLE_E_NOT_FINITE'],
      [7, 'JOSTLE_E_FRAME'],
      [8, 'JOSTLE_E_TYPE'],
      [9, 'JOSTLE_E_RUN_OPEN'],
      [11, 'JOSTLE_E_FRAME_ORDER'],
      [12, 'JOSTLE_E_TEMPERATURE'],
    ]);
    for (const e of errors) expect(typeof e.reason).toBe('string');
    expect(server.counters.rejectedMessages - before).toBe(10);
    expect(server.registry.get('bad-input')!.counters.rejectedMessages).toBe(8);
    expect(liveFrames('bad-input')).toBe(1);
    expect(c.socket.readyState).toBe(WebSocket.OPEN);
    await c.close();
  });

  it('closes an oversized message with 1009 and counts it', async () => {
    const before = server.counters.oversizedMessages;
    const c = await collect(`${server.ws}/rig`, auth);
    const closed = new Promise<number>((resolve) => c.socket.once('close', (code) => resolve(code)));
    c.socket.send(Buffer.alloc(65 * 1024, 0x90));
    expect(await closed).toBe(1009);
    await until(() => server.counters.oversizedMessages === before + 1);
  });

  it('enforces maxRuns (JOSTLE_E_RUN_LIMIT) and maxDashboardsPerRun (close 1013)', async () => {
    const small = await testServer({ maxRuns: 1, maxDashboardsPerRun: 1 });
    try {
      const a = await RigClient.connect(`${small.ws}/rig`, { token: TOKEN, encoding: 'json' });
      await a.open({ type: 'run', run: 'only', frameInterval: 0.05 });
      const b = await RigClient.connect(`${small.ws}/rig`, { token: TOKEN, encoding: 'json' });
      await expect(b.open({ type: 'run', run: 'second', frameInterval: 0.05 })).rejects.toMatchObject({ code: 'JOSTLE_E_RUN_LIMIT' });
      const first = await collect(`${small.ws}/watch?run=only`, auth);
      const second = await collect(`${small.ws}/watch?run=only`, auth);
      const code = await new Promise<number>((resolve) => second.socket.once('close', (c) => resolve(c)));
      expect(code).toBe(1013);
      await Promise.all([first.close(), a.close(), b.close()]);
    } finally {
      await small.stop();
    }
  });

  it('rejects a frame over maxParticlesPerFrame', async () => {
    const small = await testServer({ maxParticlesPerFrame: 4 });
    try {
      const c = await collect(`${small.ws}/rig`, auth);
      c.socket.send(independentEncode({ type: 'run', run: 'crowded', frameInterval: 0.05 }));
      await c.next((m) => m.type === 'accepted');
      c.socket.send(independentEncode({ type: 'frame', index: 0, t: 0, x: [1, 2, 3, 4, 5], y: [1, 2, 3, 4, 5] }));
      const error = await c.next((m) => m.type === 'error');
      expect(error.code).toBe('JOSTLE_E_FRAME_TOO_LARGE');
      expect(independentDecode(new Packr({ useRecords: false }).pack(error))).toEqual(error);
      await c.close();
    } finally {
      await small.stop();
    }
  });
});
