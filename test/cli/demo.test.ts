import { spawn } from 'node:child_process';
import { mkdtemp, rm } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { createInterface } from 'node:readline';
import { afterAll, describe, expect, it } from 'vitest';

const bin = join(process.cwd(), 'tools', 'jostle.js');
const children: ReturnType<typeof spawn>[] = [];
afterAll(() => {
  for (const child of children) child.kill('SIGKILL');
});

describe('jostle demo (npm start)', () => {
  it('prints the dashboard URL with its token and the demo run, and the run fills with frames', async () => {
    const data = await mkdtemp(join(tmpdir(), 'jostle-demo-'));
    const child = spawn('node', [bin, 'demo', '--port', '0', '--data', data, '--speed', '20'], { stdio: ['ignore', 'pipe', 'pipe'] });
    children.push(child);
    const firstLine = await new Promise<string>((resolve, reject) => {
      const lines = createInterface({ input: child.stdout! });
      lines.once('line', resolve);
      child.once('exit', (code) => reject(new Error(`demo exited with ${code}`)));
    });
    const url = new URL(firstLine);
    expect(url.hostname).toBe('127.0.0.1');
    const token = url.searchParams.get('token')!;
    const run = url.searchParams.get('run')!;
    expect(token.length).toBeGreaterThan(10);
    expect(run).toMatch(/^demo-/);
    let frames = 0;
    for (let i = 0; i < 100 && frames < 50; i++) {
      await new Promise((r) => setTimeout(r, 200));
      const response = await fetch(`${url.origin}/api/runs`, { headers: { authorization: `Bearer ${token}` } });
      const runs = (await response.json()) as { id: string; state: string; frames: number }[];
      const demo = runs.find((r) => r.id === run);
      if (demo) {
        expect(demo.state).toBe('live');
        frames = demo.frames;
      }
    }
    expect(frames).toBeGreaterThanOrEqual(50);
    child.kill('SIGTERM');
    await new Promise((r) => child.once('exit', r));
    await rm(data, { recursive: true, force: true });
  }, 60_000);
});
