import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { RigClient } from '../../tools/rig/rigClient.js';
import { brownianFrames } from '../helpers/brownianFrames.js';
import { collect, testServer, until, type Collector } from './serverHarness.js';

// Dashboards of CONTRACTS §4: snapshot then updates (≤ 10 a second), alerts, the run list, tags
// and acknowledgements from a dashboard; two rigs at once.

const TOKEN = 'test-token-0123';
const auth = { authorization: `Bearer ${TOKEN}` };
let server: Awaited<ReturnType<typeof testServer>>;
beforeAll(async () => {
  server = await testServer({ quotaBytes: 40_000 });
});
afterAll(async () => {
  await server.stop();
});

const framesA = brownianFrames({ seed: 21, particles: 20, frames: 120, frameInterval: 0.05, diffusion: 0.4, sigma: 0.02 });
const framesB = brownianFrames({ seed: 22, particles: 20, frames: 120, frameInterval: 0.05, diffusion: 0.8, sigma: 0.02 });

describe('/watch', () => {
  it('serves two rigs at once, each to its own dashboards, with snapshot first and updates at most 10 a second', async () => {
    const list = await collect(`${server.ws}/watch?token=${TOKEN}`);
    expect((await list.next((m) => m.type === 'runs')).runs).toEqual([]);
    const rigA = await RigClient.connect(`${server.ws}/rig`, { token: TOKEN });
    const rigB = await RigClient.connect(`${server.ws}/rig`, { token: TOKEN, encoding: 'json' });
    await rigA.open({ type: 'run', run: 'bench-a', frameInterval: 0.05 });
    await rigB.open({ type: 'run', run: 'bench-b', frameInterval: 0.05 });
    const watchers: { run: string; c: Collector }[] = [];
    for (let i = 0; i < 6; i++) {
      const run = i % 2 === 0 ? 'bench-a' : 'bench-b';
      watchers.push({ run, c: await collect(`${server.ws}/watch?run=${run}&token=${TOKEN}${i === 0 ? '&encoding=msgpack' : ''}`) });
    }
    const started = Date.now();
    for (let k = 0; k < 120; k++) {
      await rigA.frame(framesA[k]);
      await rigB.frame(framesB[k]);
      if (k % 10 === 9) await new Promise((r) => setTimeout(r, 25));
    }
    await until(() => watchers.every(({ c }) => c.messages.filter((m) => m.type === 'update').length >= 2));
    await new Promise((r) => setTimeout(r, 250));
    const elapsedSeconds = (Date.now() - started) / 1000;
    for (const { run, c } of watchers) {
      expect(c.messages[0].type).toBe('snapshot');
      expect(c.messages[0].run).toBe(run);
      const updates = c.messages.filter((m) => m.type === 'update');
      expect(updates.every((u) => u.run === run)).toBe(true);
      // sampled at 10 Hz: never more than one update per 100 ms (+1 for the edges)
      expect(updates.length).toBeLessThanOrEqual(Math.ceil(elapsedSeconds * 10) + 1);
    }
    // the msgpack dashboard got binary messages with the same content
    expect(watchers[0].c.messages[0].report).toBeDefined();
    const latest = watchers[1].c.messages.filter((m) => m.type === 'update').at(-1) as Record<string, any>;
    expect(latest.counters.particles).toBe(20);
    expect(latest.positions.frames[0].x).toHaveLength(20);
    expect(latest.report.input.frames).toBeGreaterThan(0);
    expect(Array.isArray(latest.history.t)).toBe(true);
    // updates of a live run leave the per-track table out; a snapshot and the report over HTTP carry it
    expect(latest.tracksOmitted).toBe(true);
    expect(latest.report.tracks).toEqual([]);
    expect(latest.report.input.tracks).toBe(20);
    const late = await collect(`${server.ws}/watch?run=bench-b&token=${TOKEN}`);
    const snapshot = (await late.next((m) => m.type === 'snapshot')) as Record<string, any>;
    expect(snapshot.tracksOmitted).toBeUndefined();
    expect(snapshot.report.tracks).toHaveLength(20);
    expect(snapshot.report.tracks.map((row: { id: number }) => row.id).sort((a: number, b: number) => a - b)).toEqual(Array.from(framesB[0].id as Uint32Array).sort((a, b) => a - b));
    const overHttp = await (await fetch(`${server.http}/api/runs/bench-b/report`, { headers: auth })).json();
    expect(overHttp.tracks).toHaveLength(20);
    await late.close();
    const runs = await list.next((m) => m.type === 'runs' && (m.runs as unknown[]).length === 2);
    expect((runs.runs as { id: string }[]).map((r) => r.id).sort()).toEqual(['bench-a', 'bench-b']);
    await rigA.end();
    await rigB.end();
    await until(() => server.registry.get('bench-a')?.state === 'ended' && server.registry.get('bench-b')?.state === 'ended');
    // D of the two runs differs as their particles do (0.4 vs 0.8 µm²/s)
    const dA = server.registry.get('bench-a')!.report().diffusion.coefficient!.value;
    const dB = server.registry.get('bench-b')!.report().diffusion.coefficient!.value;
    expect(dB / dA).toBeGreaterThan(1.5);
    await Promise.all([...watchers.map(({ c }) => c.close()), list.close(), rigA.close(), rigB.close()]);
  });

  it('takes tags and acknowledgements from a dashboard, and raises recording alerts near and at the quota', async () => {
    const rig = await RigClient.connect(`${server.ws}/rig`, { token: TOKEN });
    await rig.open({ type: 'run', run: 'quota-run', frameInterval: 0.05 });
    const dash = await collect(`${server.ws}/watch?run=quota-run`, auth);
    await dash.next((m) => m.type === 'snapshot');
    // 20 particles × (x, y, id, 8 + 8 + 4 bytes) = 400 B per frame; quota 40 000 B → warn at 90 frames, stop after 100
    for (let k = 0; k < 110; k++) await rig.frame({ ...framesA[k], intensity: undefined });
    const warn = await dash.next((m) => m.type === 'alert' && m.kind === 'recording' && m.level === 'warn');
    const stop = await dash.next((m) => m.type === 'alert' && m.kind === 'recording' && m.level === 'stop');
    expect(warn.id).toBe(stop.id);
    await until(() => rig.alerts.some((a) => a.kind === 'recording' && a.level === 'stop'));
    dash.socket.send(JSON.stringify({ type: 'ack', alert: warn.id }));
    dash.socket.send(JSON.stringify({ type: 'tag', label: 'after-stop', start: 1, end: 4, note: 'from the dashboard' }));
    dash.socket.send(JSON.stringify({ type: 'tag', label: '' }));
    const error = await dash.next((m) => m.type === 'error');
    expect(error).toMatchObject({ code: 'JOSTLE_E_TAG', seq: 3 });
    await rig.end();
    await until(() => server.registry.get('quota-run')?.state === 'ended');
    // the end of the run closes its open alerts, and the rig is told (same id, end set)
    await until(() => rig.alerts.some((a) => a.id === warn.id && a.change === 'close'));
    const closed = rig.alerts.find((a) => a.id === warn.id && a.change === 'close')!;
    expect(closed.end).not.toBeNull();
    expect(rig.alerts.filter((a) => a.id === warn.id).map((a) => a.change)).toEqual(['open', 'level', 'close']);
    const report = server.registry.get('quota-run')!.report();
    expect(report.segments.map((s) => s.label)).toEqual(['after-stop']);
    expect(report.segments[0].diffusion).not.toBeNull();
    const recording = report.alerts.find((a) => a.kind === 'recording')!;
    expect(recording.detail.acknowledged).toBe(true);
    expect(server.registry.recorder.run('quota-run')!.frames).toBe(100);
    expect(server.registry.get('quota-run')!.pipeline.counts().frames).toBe(110);
    await Promise.all([dash.close(), rig.close()]);
  });

  it('keeps trail frames at least trailSpacingMs apart in data time (default 50 ms), every frame at 20 frames/s, and sends them to a JSON dashboard as built', async () => {
    // 1 kHz: 8 frames 50 ms apart span 0.35 s of motion instead of 7 ms
    const fast = brownianFrames({ seed: 23, particles: 5, frames: 600, frameInterval: 0.001, diffusion: 0.4, sigma: 0.02 });
    const rig = await RigClient.connect(`${server.ws}/rig`, { token: TOKEN });
    await rig.open({ type: 'run', run: 'trail-fast', frameInterval: 0.001 });
    const watcher = await collect(`${server.ws}/watch?run=trail-fast&token=${TOKEN}`);
    for (const frame of fast) await rig.frame(frame);
    await until(() => server.registry.get('trail-fast')?.pipeline.counts().frames === 600);
    const positions = server.registry.get('trail-fast')!.runState().positions;
    const times = positions.frames.map((f) => f.t);
    expect(times).toHaveLength(8);
    expect(positions.t).toBe(times[0]);
    for (let i = 1; i < times.length; i++) expect(times[i - 1] - times[i]).toBeGreaterThanOrEqual(0.05 - 1e-9);
    expect(fast[599].t - times[0]).toBeLessThan(0.05); // the newest kept frame is at most 50 ms old
    // each kept frame holds that frame's positions
    const kept = fast.find((f) => f.t === times[3])!;
    expect(positions.frames[3].x).toEqual(Array.from(kept.x.subarray(0, kept.count)));
    expect(positions.frames[3].id).toEqual(Array.from(kept.id!.subarray(0, kept.count)));
    // the JSON dashboard's updates carry trails of the same spacing (from the per-frame text cache)
    await until(() => watcher.messages.some((m) => m.type === 'update'));
    const update = watcher.messages.filter((m) => m.type === 'update').at(-1) as Record<string, any>;
    const sent: number[] = update.positions.frames.map((f: { t: number }) => f.t);
    for (let i = 1; i < sent.length; i++) expect(sent[i - 1] - sent[i]).toBeGreaterThanOrEqual(0.05 - 1e-9);
    expect(update.positions.t).toBe(sent[0]);
    await rig.end();
    await Promise.all([watcher.close(), rig.close()]);
    // at 20 frames/s (50 ms apart) every frame is a trail frame
    const slow = await RigClient.connect(`${server.ws}/rig`, { token: TOKEN });
    await slow.open({ type: 'run', run: 'trail-slow', frameInterval: 0.05 });
    for (const frame of framesA.slice(0, 30)) await slow.frame(frame);
    await until(() => server.registry.get('trail-slow')?.pipeline.counts().frames === 30);
    expect(server.registry.get('trail-slow')!.runState().positions.frames.map((f) => f.t)).toEqual(framesA.slice(22, 30).map((f) => f.t).reverse());
    await slow.end();
    await slow.close();
  });

  it('refuses a dashboard for an unknown run with 404', async () => {
    await expect(collect(`${server.ws}/watch?run=nobody&token=${TOKEN}`)).rejects.toMatchObject({ status: 404 });
  });
});
