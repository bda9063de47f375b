import { spawn } from 'node:child_process';
import { mkdtemp, rm } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { scenarioDescriptions, scenarios } from '../../src/simulate/scenarios.js';
import { main } from '../../tools/cli/main.js';
import { writeSimulation } from '../../tools/simulate/writeSimulation.js';

const bin = join(process.cwd(), 'tools', 'jostle.js');

describe('the jostle command', () => {
  it('simulate --list names every scenario with its length and what it shows', async () => {
    let out = '';
    const io = {
      stdout: { write: (s: string) => ((out += s), true) } as unknown as NodeJS.WritableStream,
      stderr: { write: () => true, isTTY: false } as unknown as NodeJS.WriteStream,
    };
    expect(await main(['node', 'jostle', 'simulate', '--list'], io)).toBe(0);
    const lines = out.trim().split('\n');
    expect(lines.map((line) => line.split('\t')[0])).toEqual(Object.keys(scenarios));
    for (const line of lines) expect(line.split('\t')[2]).toBe(scenarioDescriptions[line.split('\t')[0]]);
  });

  it('ends quietly with status 0 when its output pipe closes early (as with | head -1)', async () => {
    // a JSON report of the clean run is over 100 kB, more than a pipe holds, so the write must meet the closed pipe
    const folder = await mkdtemp(join(tmpdir(), 'jostle-pipe-'));
    await writeSimulation(scenarios.clean, { csvPath: join(folder, 'clean.csv'), truthPath: join(folder, 'clean.json') });
    const script = `node '${bin}' analyze '${join(folder, 'clean.csv')}' --json | head -c 10 > /dev/null; echo "status \${PIPESTATUS[0]}"`;
    const child = spawn('bash', ['-c', script], { stdio: ['ignore', 'pipe', 'pipe'] });
    let stdout = '';
    let stderr = '';
    child.stdout.on('data', (chunk) => (stdout += chunk));
    child.stderr.on('data', (chunk) => (stderr += chunk));
    await new Promise((resolve) => child.once('exit', resolve));
    const code = Number(/status (\d+)/.exec(stdout)?.[1]);
    expect(code).toBe(0);
    expect(stderr).not.toMatch(/EPIPE/);
    await rm(folder, { recursive: true, force: true });
  }, 30_000);
});
