import { afterEach, describe, expect, it } from 'vitest';
import { WebSocket } from 'ws';
import { stopRecording } from '../../server/stopRecording.js';
import { RigClient } from '../../tools/rig/rigClient.js';
import { brownianFrames } from '../helpers/brownianFrames.js';
import { collect, testServer, until, type Collector } from '../server/serverHarness.js';

// Faults of the monitored run, with the server in this process and every client on a real
// loopback socket: the disk fills (SQLite max_page_count, as SQLITE_FULL on a full disk), a
// dashboard never reads, 200 dashboards at once, a dashboard that reconnects every second, the
// rig's clock jumps backwards or stalls. What must hold: nothing crashes, the run goes on being
// analysed, and the operator is told (a `recording` alert at `stop`; a `timing` alert).

const TOKEN = 'test-token-0123';
const auth = { authorization: `Bearer ${TOKEN}` };
let stops: (() => Promise<void>)[] = [];
afterEach(async () => {
  for (const stop of stops) await stop();
  stops = [];
});

async function server(options: Parameters<typeof testServer>[0] = {}) {
  const s = await testServer(options);
  stops.push(() => s.stop());
  return s;
}

function updates(c: Collector): Record<string, unknown>[] {
  return c.messages.filter((m) => m.type === 'update');
}

describe('a full disk', () => {
  it('stops the recording with a recording alert at stop to rig and dashboard; monitoring, reports and new runs go on', async () => {
    const log: string[] = [];
    const s = await server({ flushMs: 20, log: (line) => log.push(line) });
    const frames = brownianFrames({ seed: 3, particles: 30, frames: 300, frameInterval: 0.05, diffusion: 0.4, sigma: 0.02, field: 80 });
    const rig = await RigClient.connect(`${s.ws}/rig`, { token: TOKEN });
    await rig.open({ type: 'run', run: 'disk', frameInterval: 0.05 });
    const dashboard = await collect(`${s.ws}/watch?run=disk`, auth);
    for (const f of frames.slice(0, 100)) await rig.frame(f);
    await until(() => s.registry.recorder.run('disk')?.frames === 100);
    s.registry.recorder.limitPages(0); // the disk is full from now on
    for (const f of frames.slice(100)) await rig.frame(f);
    const run = s.registry.get('disk')!;
    await until(() => run.pipeline.counts().frames === 300);
    await until(() => rig.alerts.some((a) => a.kind === 'recording' && a.level === 'stop'));
    const alert = rig.alerts.find((a) => a.kind === 'recording')!;
    expect(alert.message).toMatch(/recording stopped.*SQLITE_FULL/);
    await dashboard.next((m) => m.type === 'alert' && m.kind === 'recording' && m.level === 'stop');
    await dashboard.next((m) => m.type === 'update' && (m.counters as { recording: boolean }).recording === false);
    expect(s.registry.recorder.failure?.code).toBe('SQLITE_FULL');
    expect(log.some((l) => /recording stopped: SQLITE_FULL/.test(l))).toBe(true);
    // frames recorded before the disk filled are all still there
    const csv = await (await fetch(`${s.http}/api/runs/disk/frames.csv`, { headers: auth })).text();
    const rows = csv.trimEnd().split('\n').length - 1;
    expect(rows).toBeGreaterThanOrEqual(100 * 30);
    expect(rows).toBeLessThan(300 * 30);
    // a new run on the full disk is monitored in memory and told at once
    const second = await RigClient.connect(`${s.ws}/rig`, { token: TOKEN });
    await second.open({ type: 'run', run: 'disk-2', frameInterval: 0.05 });
    await until(() => second.alerts.some((a) => a.kind === 'recording' && a.level === 'stop'));
    for (const f of frames.slice(0, 50)) await second.frame(f);
    await second.end();
    await rig.end();
    await until(() => run.state === 'ended' && s.registry.get('disk-2')?.state === 'ended');
    const report = (await (await fetch(`${s.http}/api/runs/disk-2/report`, { headers: auth })).json()) as { input: { frames: number }; alerts: { kind: string; level: string }[] };
    expect(report.input.frames).toBe(50);
    expect(report.alerts.some((a) => a.kind === 'recording' && a.level === 'stop')).toBe(true);
    const first = (await (await fetch(`${s.http}/api/runs/disk/report`, { headers: auth })).json()) as { input: { frames: number } };
    expect(first.input.frames).toBe(300);
    expect(rig.errors).toEqual([]);
    await Promise.all([rig.close(), second.close(), dashboard.close()]);
  }, 30_000);
});

describe('a full disk found after the last frame', () => {
  it('still shows the dashboard the recording off at once (the recording thread may report the failure after the last frame)', async () => {
    const s = await server({ flushMs: 20 });
    const frames = brownianFrames({ seed: 4, particles: 20, frames: 60, frameInterval: 0.05, diffusion: 0.4, sigma: 0.02, field: 80 });
    const rig = await RigClient.connect(`${s.ws}/rig`, { token: TOKEN });
    await rig.open({ type: 'run', run: 'late-disk', frameInterval: 0.05 });
    const dashboard = await collect(`${s.ws}/watch?run=late-disk`, auth);
    for (const f of frames) await rig.frame(f);
    const run = s.registry.get('late-disk')!;
    await until(() => run.pipeline.counts().frames === 60);
    await new Promise((r) => setTimeout(r, 300)); // the last frame's updates are out
    const before = dashboard.messages.length;
    stopRecording(run, 'SQLITE_FULL'); // as the registry does when the failure arrives; no frame follows
    await dashboard.next((m) => m.type === 'alert' && m.kind === 'recording' && m.level === 'stop');
    const update = await dashboard.next((m) => m.type === 'update' && (m.counters as { recording: boolean }).recording === false);
    expect(dashboard.messages.indexOf(update)).toBeGreaterThanOrEqual(before);
    await Promise.all([rig.close(), dashboard.close()]);
  }, 30_000);
});

describe('dashboards', () => {
  const crowded = brownianFrames({ seed: 9, particles: 400, frames: 300, frameInterval: 0.05, diffusion: 0.4, sigma: 0.02, field: 400 });

  it('one that never reads is held at its high-water mark with coalesced updates; the rig and another dashboard are not slowed', async () => {
    const s = await server({ dashboardHighWaterBytes: 32 * 1024 });
    const rig = await RigClient.connect(`${s.ws}/rig`, { token: TOKEN });
    await rig.open({ type: 'run', run: 'deaf', frameInterval: 0.05 });
    const deaf = new WebSocket(`${s.ws}/watch?run=deaf&token=${TOKEN}`, { perMessageDeflate: false });
    await new Promise<void>((resolve) => deaf.once('open', () => {
      (deaf as unknown as { _socket: { pause(): void } })._socket.pause(); // from now on it reads nothing
      resolve();
    }));
    const reader = await collect(`${s.ws}/watch?run=deaf`, auth);
    const run = s.registry.get('deaf')!;
    await until(() => run.dashboards.size === 2);
    const channels = [...run.dashboards];
    const held = () => channels.some((c) => c.slow && c.coalesced >= 5);
    // stream until the deaf one's socket is past its high-water mark and 5 updates were coalesced
    // (the kernel's buffers fill first), at most 300 frames
    let sent = 0;
    while (sent < crowded.length && (sent < 60 || !held())) {
      await rig.frame(crowded[sent++]);
      await new Promise((r) => setTimeout(r, 20));
    }
    expect(held()).toBe(true);
    await until(() => run.pipeline.counts().frames === sent);
    await until(() => updates(reader).some((m) => (m.counters as { frames: number }).frames === sent), 10_000);
    expect(rig.errors).toEqual([]);
    deaf.terminate();
    await until(() => run.dashboards.size === 1);
    await Promise.all([reader.close(), rig.close()]);
  }, 30_000);

  it('200 at once each get a snapshot and updates, the 201st is closed with 1013, and all leave cleanly', async () => {
    const s = await server({ maxDashboardsPerRun: 200 });
    const rig = await RigClient.connect(`${s.ws}/rig`, { token: TOKEN });
    await rig.open({ type: 'run', run: 'crowd', frameInterval: 0.05 });
    const frames = brownianFrames({ seed: 10, particles: 20, frames: 40, frameInterval: 0.05, diffusion: 0.4 });
    for (const f of frames.slice(0, 5)) await rig.frame(f);
    const dashboards = await Promise.all(Array.from({ length: 200 }, () => collect(`${s.ws}/watch?run=crowd`, auth)));
    const run = s.registry.get('crowd')!;
    await until(() => run.dashboards.size === 200);
    const extra = await collect(`${s.ws}/watch?run=crowd`, auth);
    expect(await new Promise<number>((r) => extra.socket.once('close', (code) => r(code)))).toBe(1013);
    await Promise.all(dashboards.map((d) => d.next((m) => m.type === 'snapshot')));
    for (const f of frames.slice(5)) {
      await rig.frame(f);
      await new Promise((r) => setTimeout(r, 20));
    }
    await Promise.all(dashboards.map((d) => d.next((m) => m.type === 'update' && (m.counters as { frames: number }).frames === 40, 15_000)));
    await Promise.all(dashboards.map((d) => d.close()));
    await until(() => run.dashboards.size === 0 && run.watchers$.value === 0);
    expect(run.pipeline.counts().frames).toBe(40);
    await rig.close();
  }, 60_000);

  it('one that reconnects every second gets a fresh snapshot and updates each time and leaves nothing behind', async () => {
    const s = await server();
    const rig = await RigClient.connect(`${s.ws}/rig`, { token: TOKEN });
    await rig.open({ type: 'run', run: 'flaky', frameInterval: 0.05 });
    const frames = brownianFrames({ seed: 12, particles: 10, frames: 120, frameInterval: 0.05, diffusion: 0.4 });
    const run = s.registry.get('flaky')!;
    let next = 0;
    const feeding = (async () => {
      while (next < frames.length) {
        await rig.frame(frames[next++]);
        await new Promise((r) => setTimeout(r, 40));
      }
    })();
    for (let k = 0; k < 4; k++) {
      const d = await collect(`${s.ws}/watch?run=flaky`, auth);
      const snapshot = await d.next((m) => m.type === 'snapshot');
      const seen = (snapshot.counters as { frames: number }).frames;
      await d.next((m) => m.type === 'update' && (m.counters as { frames: number }).frames > seen, 3000);
      await new Promise((r) => setTimeout(r, 1000 - 100));
      if (k % 2) d.socket.terminate(); // the link drops
      else await d.close();
      await until(() => run.dashboards.size === 0);
    }
    await feeding;
    expect(run.watchers$.value).toBe(0);
    expect(run.pipeline.counts().frames).toBe(120);
    await rig.close();
  }, 30_000);
});

describe("the rig's clock", () => {
  it('jumping backwards or stalling raises a timing alert, is counted, and neither errors the rig nor stops the run', async () => {
    const s = await server();
    const rig = await RigClient.connect(`${s.ws}/rig`, { token: TOKEN });
    await rig.open({ type: 'run', run: 'clock', frameInterval: 0.05 });
    const frames = brownianFrames({ seed: 13, particles: 12, frames: 60, frameInterval: 0.05, diffusion: 0.4 });
    const t = (k: number) => (k < 30 ? k * 0.05 : k < 40 ? (k - 20) * 0.05 : k < 45 ? 1.5 : 1.5 + (k - 44) * 0.05); // back 1 s at 30, stalled 41–44
    for (const [k, f] of frames.entries()) await rig.frame({ ...f, t: t(k) });
    await rig.end();
    const run = s.registry.get('clock')!;
    await until(() => run.state === 'ended');
    const counts = run.pipeline.counts();
    expect(counts.backwardsFrames).toBe(10);
    expect(counts.duplicateFrames).toBe(4);
    expect(counts.frames).toBe(60 - 10 - 4);
    expect(rig.errors).toEqual([]);
    await until(() => rig.alerts.some((a) => a.kind === 'timing' && a.level === 'warn')); // sent to the rig as it happened
    expect(s.registry.recorder.run('clock')!.frames).toBe(60); // the recording keeps what the rig sent
    await rig.close();
  }, 20_000);
});

describe('idle and surplus sockets', () => {
  it('closes a rig socket that never sends run, with 1008, after rigOpenTimeoutMs', async () => {
    const s = await server({ rigOpenTimeoutMs: 200 });
    const idle = new WebSocket(`${s.ws}/rig`, { headers: auth });
    await new Promise((r) => idle.once('open', r));
    const started = Date.now();
    const code = await new Promise<number>((r) => idle.once('close', (c) => r(c)));
    expect(code).toBe(1008);
    expect(Date.now() - started).toBeGreaterThanOrEqual(150);
  });

  it('keeps a rig socket that opened a run past rigOpenTimeoutMs', async () => {
    const s = await server({ rigOpenTimeoutMs: 200 });
    const rig = await RigClient.connect(`${s.ws}/rig`, { token: TOKEN });
    await rig.open({ type: 'run', run: 'kept', frameInterval: 0.05 });
    await new Promise((r) => setTimeout(r, 400));
    const [frame] = brownianFrames({ seed: 4, particles: 3, frames: 1, frameInterval: 0.05, diffusion: 0.4 });
    await rig.frame(frame);
    await until(() => s.registry.get('kept')?.listEntry().frames === 1);
    await rig.close();
  });

  it('closes run-list watchers beyond maxRunListWatchers with 1013', async () => {
    const s = await server({ maxRunListWatchers: 2 });
    const first = await collect(`${s.ws}/watch`, auth);
    const second = await collect(`${s.ws}/watch`, auth);
    const third = await collect(`${s.ws}/watch`, auth);
    expect(await new Promise<number>((r) => third.socket.once('close', (c) => r(c)))).toBe(1013);
    expect(first.socket.readyState).toBe(WebSocket.OPEN);
    expect(second.socket.readyState).toBe(WebSocket.OPEN);
    first.socket.close();
    second.socket.close();
  });
});
