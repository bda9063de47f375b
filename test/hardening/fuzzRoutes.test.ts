import { request } from 'node:http';
import fc from 'fast-check';
import { Packr } from 'msgpackr';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { WebSocket } from 'ws';
import { RigClient } from '../../tools/rig/rigClient.js';
import { badRigMessage, goodFrame, MESSAGE_CODES, wildMessage, wildValue } from '../../tools/soak/fuzzCases.js';
import { brownianFrames } from '../helpers/brownianFrames.js';
import { collect, testServer, until } from '../server/serverHarness.js';

// The same fuzz through real sockets on loopback (fewer cases: each is a round trip), to prove
// that the running server stays up, answers every bad rig or dashboard message with
// `error {code, reason, seq}` and counts it, keeps the good ones, and that `/api/runs` answers
// arbitrary paths and bodies with 2xx/4xx, never 500 (CONTRACTS §4, server/README.md routes).

const TOKEN = 'test-token-0123';
const bearer = { authorization: `Bearer ${TOKEN}` };
const seed = 20261202;
const packr = new Packr({ useRecords: false });
let server: Awaited<ReturnType<typeof testServer>>;
const logged: string[] = [];

beforeAll(async () => {
  server = await testServer({ maxParticlesPerFrame: 20, log: (line) => logged.push(line) }); // 20: as fuzzCases' 21-centroid frame expects
  const rig = await RigClient.connect(`${server.ws}/rig`, { token: TOKEN });
  await rig.open({ type: 'run', run: 'bench-c', frameInterval: 0.05 });
  for (const f of brownianFrames({ seed: 5, particles: 6, frames: 30, frameInterval: 0.05, diffusion: 0.3 })) await rig.frame(f);
  await rig.end();
  await until(() => server.registry.get('bench-c')?.state === 'ended');
  await rig.close();
});
afterAll(async () => {
  await server.stop();
});

function http(path: string, method = 'GET', body?: string | Buffer, headers: Record<string, string> = bearer): Promise<{ status: number; text: string }> {
  return new Promise((resolve, reject) => {
    const req = request({ host: '127.0.0.1', port: server.port, path, method, headers }, (res) => {
      let text = '';
      res.setEncoding('utf8');
      res.on('data', (chunk) => (text += chunk));
      res.on('end', () => resolve({ status: res.statusCode ?? 0, text }));
    });
    req.on('error', reject);
    req.end(body);
  });
}

const segment = fc.oneof(
  fc.constantFrom('..', '.', '%2e%2e', '%2E', '%2f', '%2F..', '%5c', '%252e%252e', '%252f', '%E0%A4%A', '%', '%00', 'bench-c', 'nope', 'report', 'frames.csv', 'tags.csv', 'tags', 'runs', 'api', ''),
  fc.string({ maxLength: 12 }).map((s) => encodeURIComponent(s)),
  fc.stringMatching(/^[A-Za-z0-9._-]{1,70}$/),
);

describe('/api/runs under fuzz', () => {
  it('answers arbitrary paths with 200, 400, 404 or 405, never 500, and never a file from outside (400 requests)', async () => {
    const statuses = new Map<number, number>();
    await fc.assert(
      fc.asyncProperty(fc.array(segment, { minLength: 0, maxLength: 4 }), fc.constantFrom('GET', 'POST', 'PUT', 'DELETE', 'HEAD'), async (parts, method) => {
        const path = `/api/runs/${parts.join('/')}`;
        const { status, text } = await http(path, method, method === 'POST' ? '{}' : undefined);
        statuses.set(status, (statuses.get(status) ?? 0) + 1);
        expect([200, 201, 400, 404, 405]).toContain(status);
        expect(text).not.toMatch(/root:|\[extensions\]|BEGIN/);
        if (status === 200 && method === 'GET') expect(path).toMatch(/^\/api\/runs\/(bench-c\/(report|frames\.csv|tags\.csv)\/?)?$|^\/api\/runs\/?$/);
      }),
      { seed, numRuns: 400 },
    );
    expect(statuses.get(400)).toBeGreaterThan(10);
    expect(statuses.get(404)).toBeGreaterThan(10);
    expect(logged.filter((l) => /request failed/.test(l))).toEqual([]);
  }, 60_000);

  it('POST /api/runs/<id>/tags takes a good tag (201) and refuses anything else with 400 and a code (300 bodies)', async () => {
    const before = server.registry.recorder.tags('bench-c').length;
    let created = 0;
    const body = fc.oneof(
      fc.record({ label: fc.string({ minLength: 1, maxLength: 20 }), start: fc.double({ min: 0, max: 10, noNaN: true }), note: fc.string({ maxLength: 20 }) }).map((t) => JSON.stringify(t)),
      wildMessage.map((m) => JSON.stringify(m)),
      fc.json(),
      fc.string({ maxLength: 50 }),
      fc.constant('x'.repeat(70 * 1024)), // over the 64 KiB body limit
      wildValue.map((v) => JSON.stringify(v) ?? 'null'),
    );
    await fc.assert(
      fc.asyncProperty(body, async (text) => {
        const { status, text: answer } = await http('/api/runs/bench-c/tags', 'POST', text);
        expect([201, 400]).toContain(status);
        if (status === 201) created++;
        else expect(JSON.parse(answer).error.code).toMatch(/^JOSTLE_E_(TAG|BODY)$/);
      }),
      { seed, numRuns: 300 },
    );
    expect(created).toBeGreaterThan(20);
    expect(server.registry.recorder.tags('bench-c').length - before).toBe(created); // every 201 is kept, nothing else
  }, 60_000);
});

describe('sockets under fuzz', () => {
  it('a rig socket answers 600 bad messages mixed with good frames one by one, counts them and keeps every good frame', async () => {
    const c = await collect(`${server.ws}/rig`, bearer);
    c.socket.send(JSON.stringify({ type: 'run', run: 'socket-fuzz', frameInterval: 0.05 }));
    await c.next((m) => m.type === 'accepted');
    const before = server.counters.rejectedMessages;
    const bads = fc.sample(badRigMessage, { seed, numRuns: 600 });
    let last = -1;
    let seq = 1;
    const badSeqs: number[] = [];
    for (const [k, bad] of bads.entries()) {
      const wire = bad(last, Math.max(0, last) * 0.05);
      c.socket.send(wire.bytes, { binary: wire.isBinary });
      badSeqs.push(++seq);
      if (k % 3 === 0) {
        last++;
        const good = goodFrame(last, last * 0.05, k % 2 === 0, { deep: [[[{}]]] });
        c.socket.send(good.bytes, { binary: good.isBinary });
        seq++;
      }
    }
    await until(() => c.messages.filter((m) => m.type === 'error').length >= badSeqs.length, 15_000);
    const errors = c.messages.filter((m) => m.type === 'error');
    expect(errors.map((e) => e.seq)).toEqual(badSeqs);
    for (const e of errors) expect(MESSAGE_CODES.has(e.code as string)).toBe(true);
    expect(server.counters.rejectedMessages - before).toBe(600);
    expect(server.registry.get('socket-fuzz')!.pipeline.counts().frames).toBe(last + 1);
    expect(c.socket.readyState).toBe(WebSocket.OPEN);
    await c.close();
  }, 30_000);

  it('a dashboard socket answers each bad tag or ack with error {code, reason, seq}, counts it, and keeps the good tags (400 messages)', async () => {
    const c = await collect(`${server.ws}/watch?run=bench-c`, bearer);
    await c.next((m) => m.type === 'snapshot');
    const before = { rejected: server.counters.rejectedDashboardMessages, tags: server.registry.recorder.tags('bench-c').length };
    const message = fc.oneof(
      fc.record({ type: fc.constant('tag'), label: fc.string({ minLength: 1, maxLength: 10 }), start: fc.double({ min: 0, max: 5, noNaN: true }) }).map((m) => ({ good: true, m: m as unknown })),
      wildMessage.map((m) => ({ good: false, m: m as unknown })),
      fc.record({ type: fc.constant('ack'), alert: fc.oneof(fc.string({ maxLength: 10 }), wildValue) }).map((m) => ({ good: false, m: m as unknown })),
    );
    const sample = fc.sample(message, { seed, numRuns: 400 });
    const badSeqs: number[] = [];
    let good = 0;
    sample.forEach((s, i) => {
      const m = s.m as Record<string, unknown>;
      // a generated message that is in fact a good tag counts as good
      const isGoodTag = m?.type === 'tag' && typeof m.label === 'string' && m.label.length > 0 && m.label.length <= 200 && typeof m.start === 'number' && Number.isFinite(m.start) &&
        (m.end === undefined || m.end === null || (typeof m.end === 'number' && Number.isFinite(m.end) && m.end >= m.start)) &&
        (m.note === undefined || m.note === null || (typeof m.note === 'string' && m.note.length <= 2000));
      if (isGoodTag) good++;
      else badSeqs.push(i + 1);
      if (i % 2) c.socket.send(packr.pack(m), { binary: true });
      else c.socket.send(JSON.stringify(m));
    });
    c.socket.send(Buffer.from([0xc1, 0x00]), { binary: true }); // not MessagePack
    badSeqs.push(sample.length + 1);
    await until(() => c.messages.filter((m) => m.type === 'error').length >= badSeqs.length, 15_000);
    const errors = c.messages.filter((m) => m.type === 'error');
    expect(errors.map((e) => e.seq)).toEqual(badSeqs);
    for (const e of errors) {
      expect(MESSAGE_CODES.has(e.code as string)).toBe(true);
      expect(String(e.reason).length).toBeGreaterThan(0);
    }
    expect(errors.some((e) => e.code === 'JOSTLE_E_ACK')).toBe(true);
    expect(server.counters.rejectedDashboardMessages - before.rejected).toBe(badSeqs.length);
    await until(() => server.registry.recorder.tags('bench-c').length - before.tags === good);
    expect(good).toBeGreaterThan(50);
    expect(c.socket.readyState).toBe(WebSocket.OPEN);
    await c.close();
  }, 30_000);

  it('the run-list socket answers any message with an error and stays open', async () => {
    const c = await collect(`${server.ws}/watch`, bearer);
    await c.next((m) => m.type === 'runs');
    c.socket.send(JSON.stringify({ type: 'tag', label: 'x', start: 1 }));
    const error = await c.next((m) => m.type === 'error');
    expect(error).toMatchObject({ code: 'JOSTLE_E_TYPE', seq: 1 });
    expect(c.socket.readyState).toBe(WebSocket.OPEN);
    await c.close();
  });
});
