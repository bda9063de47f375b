import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import Database from 'better-sqlite3';
import { afterAll, describe, expect, it } from 'vitest';
import type { Frame } from '../../src/frame.js';
import { parseCsvChunks } from '../../tools/soak/fuzzCases.js';
import { RigClient } from '../../tools/rig/rigClient.js';
import { brownianFrames } from '../helpers/brownianFrames.js';
import { folderText, killChildren, serveChild, type ChildServer } from './childServer.js';

// Faults with real `jostle serve` processes on loopback: a rig link that drops mid-run, and
// SIGKILL under load with restarts. What is promised (server/PROMISES.md): no frame doubled, none
// the rig re-sent lost; after a hard kill the recording opens intact (SQLite integrity_check) and
// holds a gap-free prefix of the run with every frame sent more than 1 s before the kill; the
// run can then be resumed and closed; the token is never written to a log or the data folder.

const TOKEN = 'fault-token-7f3a9c';
const headers = { authorization: `Bearer ${TOKEN}` };
const folders: string[] = [];
const outputs: (() => string)[] = [];

function dataFolder(): string {
  const folder = mkdtempSync(join(tmpdir(), 'jostle-faults-'));
  folders.push(folder);
  return folder;
}

async function start(data: string): Promise<ChildServer> {
  const server = await serveChild(data, TOKEN);
  outputs.push(server.output);
  return server;
}

afterAll(async () => {
  await killChildren();
  for (const folder of folders) rmSync(folder, { recursive: true, force: true });
});

async function framesCsv(port: number, run: string): Promise<Frame[]> {
  const text = await (await fetch(`http://127.0.0.1:${port}/api/runs/${run}/frames.csv`, { headers })).text();
  const frames: Frame[] = [];
  const read = parseCsvChunks(Buffer.from(text), [], 1);
  expect(read.summary?.rejectedRows).toBe(0);
  // parse again keeping the frames (parseCsvChunks counts only)
  const { CentroidCsvParser } = await import('../../tools/io/centroidCsvParser.js');
  const parser = new CentroidCsvParser({}, (f) => frames.push(f));
  parser.push(Buffer.from(text));
  parser.finish();
  return frames;
}

function sameFrame(a: Frame, b: Frame): boolean {
  if (a.index !== b.index || a.count !== b.count) return false;
  for (let i = 0; i < a.count; i++) if (a.x[i] !== b.x[i] || a.y[i] !== b.y[i]) return false;
  return true;
}

async function waitFor<T>(read: () => Promise<T | undefined>, timeoutMs = 10_000): Promise<T> {
  const started = Date.now();
  for (;;) {
    const value = await read();
    if (value !== undefined) return value;
    if (Date.now() - started > timeoutMs) throw new Error('timed out');
    await new Promise((r) => setTimeout(r, 50));
  }
}

const sent = brownianFrames({ seed: 71, particles: 30, frames: 600, frameInterval: 0.02, diffusion: 0.4, sigma: 0.02, field: 60 });

describe('a rig link that drops mid-run', () => {
  it('resumes with the same run id: every frame once, none lost, exactly as sent (frames.csv)', async () => {
    const server = await start(dataFolder());
    const url = `ws://127.0.0.1:${server.port}/rig`;
    let rig = await RigClient.connect(url, { token: TOKEN });
    await rig.open({ type: 'run', run: 'link-drop', frameInterval: 0.02 });
    let next = 0;
    for (const cut of [150, 330, 480]) {
      // send without waiting, and pull the cable in the middle of the burst
      while (next < cut) void rig.frame(sent[next++]).catch(() => undefined);
      rig.socket.terminate();
      await new Promise((r) => setTimeout(r, 100));
      rig = await RigClient.connect(url, { token: TOKEN });
      const accepted = await rig.open({ type: 'run', run: 'link-drop', frameInterval: 0.02 });
      expect(accepted.resumed).toBe(true);
      expect(accepted.lastIndex).toBeLessThan(cut);
      // a rig that is not sure resends an overlap of 25 frames before where the server is
      next = Math.max(0, (accepted.lastIndex ?? -1) + 1 - 25);
    }
    while (next < sent.length) await rig.frame(sent[next++]);
    await rig.end();
    expect(rig.errors).toEqual([]);
    const list = await waitFor(async () => {
      const runs = (await (await fetch(`http://127.0.0.1:${server.port}/api/runs`, { headers })).json()) as { id: string; state: string; frames: number }[];
      const run = runs.find((r) => r.id === 'link-drop');
      return run?.state === 'ended' ? run : undefined;
    });
    expect(list.frames).toBe(600);
    const recorded = await framesCsv(server.port, 'link-drop');
    expect(recorded.map((f) => f.index)).toEqual(sent.map((f) => f.index));
    expect(recorded.every((f, k) => sameFrame(f, { ...sent[k], x: sent[k].x.subarray(0, sent[k].count), y: sent[k].y.subarray(0, sent[k].count) }))).toBe(true);
    const report = (await (await fetch(`http://127.0.0.1:${server.port}/api/runs/link-drop/report`, { headers })).json()) as { input: { frames: number } };
    expect(report.input.frames).toBe(600);
    await rig.close();
    server.child.kill('SIGTERM');
    await server.exited();
    expect(server.child.exitCode).toBe(0);
  }, 60_000);
});

describe('SIGKILL under load', () => {
  it('twice: the recording opens intact, holds a gap-free prefix with every frame sent > 1 s before the kill, and the run is resumed and closed', async () => {
    const data = dataFolder();
    let next = 0;
    for (let cycle = 0; cycle < 2; cycle++) {
      const server = await start(data);
      const rig = await RigClient.connect(`ws://127.0.0.1:${server.port}/rig`, { token: TOKEN });
      const accepted = await rig.open({ type: 'run', run: 'hard-kill', frameInterval: 0.02 });
      // the second start resumes right after the recorded prefix of the first
      expect(accepted).toMatchObject(cycle === 0 ? { resumed: false, lastIndex: null } : { resumed: true, lastIndex: next - 1 });
      const sentAt = new Map<number, number>();
      const stopAt = next + 280;
      // ~200 frames/s of 30 centroids for ~1.4 s, then a kill without warning
      while (next < stopAt) {
        await rig.frame(sent[next]);
        sentAt.set(next, Date.now());
        next++;
        if (next % 10 === 0) await new Promise((r) => setTimeout(r, 50));
      }
      const killedAt = Date.now();
      server.child.kill('SIGKILL');
      await server.exited();
      rig.socket.terminate();
      // the file itself: intact, gap-free, every frame sent more than a second before the kill
      const db = new Database(join(data, 'jostle.sqlite'), { readonly: true });
      expect(db.pragma('integrity_check', { simple: true })).toBe('ok');
      const indexes = (db.prepare('SELECT idx FROM frames WHERE run = ? ORDER BY idx').all('hard-kill') as { idx: number }[]).map((r) => r.idx);
      db.close();
      expect(indexes).toEqual(indexes.map((_, k) => k));
      const mustHave = [...sentAt].filter(([, at]) => at < killedAt - 1000).map(([index]) => index);
      expect(mustHave.length).toBeGreaterThan(50);
      expect(indexes.length).toBeGreaterThan(Math.max(...mustHave));
      next = indexes.length; // what the server will report as lastIndex + 1
    }
    const server = await start(data);
    const rig = await RigClient.connect(`ws://127.0.0.1:${server.port}/rig`, { token: TOKEN });
    const accepted = await rig.open({ type: 'run', run: 'hard-kill', frameInterval: 0.02 });
    expect(accepted).toMatchObject({ resumed: true, lastIndex: next - 1 });
    await rig.end();
    const run = await waitFor(async () => {
      const runs = (await (await fetch(`http://127.0.0.1:${server.port}/api/runs`, { headers })).json()) as { id: string; state: string; frames: number }[];
      return runs.find((r) => r.id === 'hard-kill' && r.state === 'ended');
    });
    expect(run.frames).toBe(next);
    const recorded = await framesCsv(server.port, 'hard-kill');
    expect(recorded.every((f, k) => sameFrame(f, { ...sent[k], x: sent[k].x.subarray(0, sent[k].count), y: sent[k].y.subarray(0, sent[k].count) }))).toBe(true);
    await rig.close();
    server.child.kill('SIGTERM');
    await server.exited();
    expect(server.output()).toMatch(/interrupted/);
  }, 90_000);
});

describe('a stop right after start', () => {
  it('SIGTERM as soon as the URL line is out closes cleanly (exit 0), as a service manager would stop it', async () => {
    for (let k = 0; k < 3; k++) {
      const server = await start(dataFolder());
      server.child.kill('SIGTERM');
      await server.exited();
      expect([server.child.exitCode, server.child.signalCode]).toEqual([0, null]);
    }
  }, 30_000);
});

describe('a port already taken', () => {
  it('makes jostle serve exit 2 with one line on stderr, instead of hanging with a heartbeat running (CONTRACTS §1 usage errors)', async () => {
    const { createServer } = await import('node:net');
    const { spawn } = await import('node:child_process');
    const blocker = createServer();
    await new Promise<void>((r) => blocker.listen(0, '127.0.0.1', () => r()));
    const port = (blocker.address() as { port: number }).port;
    const child = spawn(process.execPath, ['tools/jostle.js', 'serve', '--port', String(port), '--data', dataFolder()], {
      cwd: join(import.meta.dirname, '..', '..'), env: { ...process.env, JOSTLE_TOKEN: TOKEN }, stdio: ['ignore', 'pipe', 'pipe'],
    });
    let stderr = '';
    child.stderr.on('data', (chunk) => (stderr += String(chunk)));
    const timer = setTimeout(() => child.kill('SIGKILL'), 20_000); // a hang shows as a signal, not 2
    const code = await new Promise<number | null>((r) => child.once('exit', (c) => r(c)));
    clearTimeout(timer);
    await new Promise<void>((r) => blocker.close(() => r()));
    expect(code).toBe(2);
    expect(stderr.trim().split('\n')).toHaveLength(1);
    expect(stderr).toMatch(/EADDRINUSE/);
  }, 30_000);
});

describe('secrets', () => {
  it('the token appears in no output but the first stdout line, and in no file of the data folder but token-free ones', () => {
    expect(outputs.length).toBeGreaterThanOrEqual(4);
    for (const output of outputs) expect(output()).not.toContain(TOKEN);
    for (const folder of folders) expect(folderText(folder)).not.toContain(TOKEN); // JOSTLE_TOKEN given: no token file either
  });
});
