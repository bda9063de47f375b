import { spawn, type ChildProcess } from 'node:child_process';
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { createInterface } from 'node:readline';
import { afterAll, describe, expect, it } from 'vitest';
import { RigClient } from '../../tools/rig/rigClient.js';
import { brownianFrames } from '../helpers/brownianFrames.js';

// A real `jostle serve` child process, killed with SIGKILL mid-run: at most the last second of
// frames may be lost (recording batches are committed every 250 ms in WAL mode), and a rig can
// resume the run afterwards.

const root = join(import.meta.dirname, '..', '..');
const TOKEN = 'kill-test-token-42';
const children: ChildProcess[] = [];
const logs: (() => string)[] = [];
const data = mkdtempSync(join(tmpdir(), 'jostle-kill-'));

afterAll(async () => {
  for (const child of children) if (child.exitCode === null && child.signalCode === null) child.kill('SIGKILL');
  rmSync(data, { recursive: true, force: true });
});

/** Starts `node tools/jostle.js serve --port 0 --data <data>` and reads the URL from its first stdout line. */
async function serve(): Promise<{ child: ChildProcess; port: number; url: string }> {
  const child = spawn(process.execPath, ['tools/jostle.js', 'serve', '--port', '0', '--data', data], {
    cwd: root,
    env: { ...process.env, JOSTLE_TOKEN: TOKEN },
    stdio: ['ignore', 'pipe', 'pipe'],
  });
  children.push(child);
  let stderr = '';
  child.stderr!.on('data', (chunk) => (stderr += String(chunk)));
  logs.push(() => stderr);
  const line = await new Promise<string>((resolve, reject) => {
    const lines = createInterface({ input: child.stdout! });
    lines.once('line', resolve);
    child.once('exit', (code) => reject(new Error(`serve exited with ${code}: ${stderr}`)));
  });
  const url = new URL(line);
  expect(url.searchParams.get('token')).toBe(TOKEN);
  return { child, port: Number(url.port), url: line };
}

function exited(child: ChildProcess): Promise<void> {
  if (child.exitCode !== null || child.signalCode !== null) return Promise.resolve();
  return new Promise((resolve) => child.once('exit', () => resolve()));
}

const frames = brownianFrames({ seed: 41, particles: 15, frames: 400, frameInterval: 0.02, diffusion: 0.4, sigma: 0.02 });

describe('jostle serve after kill -9', () => {
  it('loses at most the last second of frames, and the rig can resume the run', async () => {
    const first = await serve();
    const rig = await RigClient.connect(`ws://127.0.0.1:${first.port}/rig`, { token: TOKEN });
    await rig.open({ type: 'run', run: 'crash', frameInterval: 0.02 });
    const sentAt: number[] = [];
    // stream 250 frames over ~2.5 s (100 frames/s), then kill without warning
    for (let k = 0; k < 250; k++) {
      await rig.frame(frames[k]);
      sentAt.push(Date.now());
      if (k % 10 === 9) await new Promise((r) => setTimeout(r, 100));
    }
    const killedAt = Date.now();
    first.child.kill('SIGKILL');
    await exited(first.child);
    rig.socket.terminate();

    const second = await serve();
    const headers = { authorization: `Bearer ${TOKEN}` };
    const runs = (await (await fetch(`http://127.0.0.1:${second.port}/api/runs`, { headers })).json()) as { id: string; frames: number; state: string }[];
    const crash = runs.find((r) => r.id === 'crash')!;
    const mustHave = sentAt.filter((t) => t < killedAt - 1000).length;
    expect(mustHave).toBeGreaterThan(100);
    expect(crash.frames).toBeGreaterThanOrEqual(mustHave);
    expect(crash.state).toBe('ended'); // interrupted: listed as ended until a rig resumes it

    const again = await RigClient.connect(`ws://127.0.0.1:${second.port}/rig`, { token: TOKEN });
    const accepted = await again.open({ type: 'run', run: 'crash', frameInterval: 0.02 });
    expect(accepted.resumed).toBe(true);
    expect(accepted.lastIndex).toBe(crash.frames - 1); // no gap: frames 0 … lastIndex are all there
    for (const f of frames.slice(accepted.lastIndex! + 1)) await again.frame(f);
    await again.end();
    await again.close();
    let report: { input: { frames: number }; diffusion: { coefficient: { value: number } | null } } | undefined;
    for (let attempt = 0; attempt < 50; attempt++) {
      const list = (await (await fetch(`http://127.0.0.1:${second.port}/api/runs`, { headers })).json()) as { id: string; frames: number; state: string }[];
      if (list.find((r) => r.id === 'crash' && r.state === 'ended' && r.frames === 400)) {
        report = await (await fetch(`http://127.0.0.1:${second.port}/api/runs/crash/report`, { headers })).json();
        break;
      }
      await new Promise((r) => setTimeout(r, 100));
    }
    expect(report?.input.frames).toBe(400);
    expect(report?.diffusion.coefficient?.value).toBeGreaterThan(0.3);
    second.child.kill('SIGTERM');
    await exited(second.child);
    expect(second.child.exitCode).toBe(0);
    // the token is printed once on stdout, never written to a log
    for (const log of logs) expect(log()).not.toContain(TOKEN);
    expect(logs[1]()).toMatch(/interrupted/);
  }, 40_000);
});
