import { request } from 'node:http';
import { statSync, readFileSync } from 'node:fs';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { parseTags } from '../../tools/io/readTags.js';
import { RigClient } from '../../tools/rig/rigClient.js';
import { brownianFrames } from '../helpers/brownianFrames.js';
import { collect, testServer, until } from './serverHarness.js';

// Access rules and HTTP routes of CONTRACTS §4: token as ?token= or Bearer (401 before any
// upgrade), Origin must match Host (403), path tricks refused, unknown runs 404, CSV exports in
// the formats of CONTRACTS §2; and a rig that reconnects resumes its run without doubling frames.

const TOKEN = 'test-token-0123';
let server: Awaited<ReturnType<typeof testServer>>;
const frames = brownianFrames({ seed: 31, particles: 10, frames: 150, frameInterval: 0.05, diffusion: 0.4, sigma: 0.02 });

beforeAll(async () => {
  server = await testServer();
  const rig = await RigClient.connect(`${server.ws}/rig`, { token: TOKEN });
  await rig.open({ type: 'run', run: 'routes', frameInterval: 0.05, label: 'cell 3, "quoted"' });
  for (const f of frames.slice(0, 20)) await rig.frame(f);
  await rig.tag({ label: 'settled', start: 0.2, end: 0.8, note: 'stage, settled' });
  await rig.end();
  await until(() => server.registry.get('routes')?.state === 'ended');
  await rig.close();
});
afterAll(async () => {
  await server.stop();
});

function get(path: string, headers: Record<string, string> = {}, method = 'GET', body?: string): Promise<{ status: number; text: string; type: string | undefined }> {
  return new Promise((resolve, reject) => {
    const req = request({ host: '127.0.0.1', port: server.port, path, method, headers }, (res) => {
      let text = '';
      res.setEncoding('utf8');
      res.on('data', (chunk) => (text += chunk));
      res.on('end', () => resolve({ status: res.statusCode ?? 0, text, type: res.headers['content-type'] }));
    });
    req.on('error', reject);
    req.end(body);
  });
}

const bearer = { authorization: `Bearer ${TOKEN}` };

describe('access', () => {
  it('answers /api without a token, or with a wrong one, with 401', async () => {
    expect((await get('/api/runs')).status).toBe(401);
    expect((await get('/api/runs?token=wrong')).status).toBe(401);
    expect((await get('/api/runs', { authorization: 'Bearer test-token-0124' })).status).toBe(401);
    expect((await get(`/api/runs?token=${TOKEN}`)).status).toBe(200);
    expect((await get('/api/runs', bearer)).status).toBe(200);
  });

  it('refuses a WebSocket upgrade without the token with 401, before any upgrade', async () => {
    await expect(collect(`${server.ws}/rig`)).rejects.toMatchObject({ status: 401 });
    await expect(collect(`${server.ws}/watch?token=nope`)).rejects.toMatchObject({ status: 401 });
  });

  it('refuses a browser Origin that does not match Host with 403', async () => {
    expect((await get('/api/runs', { ...bearer, origin: 'http://elsewhere.example' })).status).toBe(403);
    expect((await get('/api/runs', { ...bearer, origin: `http://127.0.0.1:${server.port}` })).status).toBe(200);
    await expect(collect(`${server.ws}/watch?token=${TOKEN}`, { origin: 'http://elsewhere.example' })).rejects.toMatchObject({ status: 403 });
  });

  it('serves the page without a token (placeholder while web/dist is absent)', async () => {
    const page = await get('/');
    expect(page.status).toBe(200);
    expect(page.type).toMatch(/text\/html/);
    expect(page.text).not.toContain(TOKEN);
  });

  it('refuses path tricks with 400 and unknown runs with 404', async () => {
    for (const path of ['/api/runs/../runs', '/api/runs/%2e%2e/report', '/api/runs/routes%2freport', '/api/runs/a%5cb/report', '/..%2f..%2fetc/passwd', '/web/../package.json']) {
      expect((await get(path, bearer)).status, path).toBe(400);
    }
    expect((await get('/api/runs/nobody/report', bearer)).status).toBe(404);
    expect((await get('/api/runs/nobody/frames.csv', bearer)).status).toBe(404);
    expect((await get('/api/runs/routes/secrets', bearer)).status).toBe(404);
  });

  it('keeps a generated token in the data folder with mode 0600', async () => {
    const other = await testServer({ token: undefined });
    try {
      const kept = readFileSync(join(other.data, 'token'), 'utf8').trim();
      expect(other.token).toBe(kept);
      expect(statSync(join(other.data, 'token')).mode & 0o777).toBe(0o600);
      expect(other.url).toBe(`http://127.0.0.1:${other.port}/?token=${encodeURIComponent(kept)}`);
    } finally {
      await other.stop();
    }
  });
});

describe('/api/runs', () => {
  it('lists runs as { id, label, state, started, frames, worst }', async () => {
    const runs = JSON.parse((await get('/api/runs', bearer)).text) as Record<string, unknown>[];
    const row = runs.find((r) => r.id === 'routes')!;
    expect(Object.keys(row).sort()).toEqual(['frames', 'id', 'label', 'started', 'state', 'worst']);
    expect(row).toMatchObject({ label: 'cell 3, "quoted"', state: 'ended', frames: 20 });
    expect(Number.isNaN(Date.parse(row.started as string))).toBe(false);
  });

  it('exports frames.csv and tags.csv in the CONTRACTS §2 formats, exactly', async () => {
    const csv = (await get('/api/runs/routes/frames.csv', bearer)).text;
    const lines = csv.trimEnd().split('\n');
    expect(lines[0]).toBe('frame,t,x,y,id');
    expect(lines).toHaveLength(1 + 20 * 10);
    const [index, t, x, y, id] = lines[1].split(',').map(Number);
    expect([index, t, x, y, id]).toEqual([frames[0].index, frames[0].t, frames[0].x[0], frames[0].y[0], frames[0].id![0]]);
    const tags = parseTags((await get('/api/runs/routes/tags.csv', bearer)).text);
    expect(tags.tags).toEqual([{ label: 'settled', start: 0.2, end: 0.8, note: 'stage, settled' }]);
  });

  it('adds a tag by POST and shows its segment in the report', async () => {
    const posted = await get('/api/runs/routes/tags', { ...bearer, 'content-type': 'application/json' }, 'POST', JSON.stringify({ label: 'late', start: 0.3, end: 0.9 }));
    expect(posted.status).toBe(201);
    expect((await get('/api/runs/routes/tags', bearer, 'POST', '{"label": 3}')).status).toBe(400);
    expect((await get('/api/runs/routes/tags', bearer, 'POST', 'not json')).status).toBe(400);
    const report = JSON.parse((await get('/api/runs/routes/report', bearer)).text);
    expect(report.segments.map((s: { label: string }) => s.label)).toEqual(['settled', 'late']);
  });
});

describe('resume', () => {
  it('a rig that reconnects with the same run id resumes it: frames already seen are dropped, not doubled', async () => {
    const first = await RigClient.connect(`${server.ws}/rig`, { token: TOKEN });
    expect(await first.open({ type: 'run', run: 'resumed', frameInterval: 0.05 })).toMatchObject({ lastIndex: null, resumed: false });
    for (const f of frames.slice(0, 100)) await first.frame(f);
    first.socket.terminate(); // the link drops without a goodbye
    await until(() => server.registry.get('resumed')!.lastIndex === 99 || server.registry.get('resumed')!.rigSocket === undefined);
    const second = await RigClient.connect(`${server.ws}/rig`, { token: TOKEN });
    const accepted = await second.open({ type: 'run', run: 'resumed', frameInterval: 0.05 });
    expect(accepted.resumed).toBe(true);
    const from = (accepted.lastIndex ?? -1) - 30; // resend an overlap, as a rig that is not sure would
    for (const f of frames.slice(Math.max(0, from + 1))) await second.frame(f);
    await second.end();
    await until(() => server.registry.get('resumed')?.state === 'ended');
    const run = server.registry.get('resumed')!;
    expect(run.pipeline.counts().frames).toBe(150);
    expect(run.pipeline.counts().duplicateFrames).toBe(0);
    expect(run.counters.resentFrames).toBe(30);
    expect(second.errors).toEqual([]);
    expect(server.registry.recorder.run('resumed')!.frames).toBe(150);
    await second.close();
  });
});
