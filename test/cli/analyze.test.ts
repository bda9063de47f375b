import { execFile } from 'node:child_process';
import { mkdtemp, readFile, writeFile } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { promisify } from 'node:util';
import { beforeAll, describe, expect, it } from 'vitest';
import { Pipeline } from '../../src/pipeline/pipeline.js';
import { createDetectors } from '../../src/detectors/createDetectors.js';
import { refreshContext } from '../../src/pipeline/refreshContext.js';
import type { Report } from '../../src/report.js';
import { scenarios } from '../../src/simulate/scenarios.js';
import { analyzeFile } from '../../tools/cli/analyze.js';
import { main } from '../../tools/cli/main.js';
import { readCentroids } from '../../tools/io/readCentroids.js';
import { writeSimulation } from '../../tools/simulate/writeSimulation.js';

const run = promisify(execFile);
const bin = join(process.cwd(), 'tools', 'jostle.js');

function memoryIo() {
  let out = '';
  let err = '';
  return {
    io: {
      stdout: { write: (s: string) => ((out += s), true) } as unknown as NodeJS.WritableStream,
      stderr: { write: (s: string) => ((err += s), true), isTTY: false } as unknown as NodeJS.WriteStream,
    },
    out: () => out,
    err: () => err,
  };
}

let folder = '';
let truth: { diffusion: { ensemble: number }; localizationError: number; temperature: { reported: number } };

beforeAll(async () => {
  folder = await mkdtemp(join(tmpdir(), 'jostle-cli-'));
  // The `clean` scenario: beads of radius 0.5 µm in water; truth D from Stokes-Einstein.
  await writeSimulation(scenarios.clean, {
    csvPath: join(folder, 'clean.csv'),
    truthPath: join(folder, 'clean.truth.json'),
    temperatureLogPath: join(folder, 'clean.temperature.csv'),
  });
  truth = JSON.parse(await readFile(join(folder, 'clean.truth.json'), 'utf8'));
}, 60_000);

describe('jostle analyze', () => {
  it('recovers the simulated D, σ, α and temperature within their CIs (simulate → analyze --json)', async () => {
    const memory = memoryIo();
    const options = scenarios.clean;
    const code = await main(
      ['node', 'jostle', 'analyze', join(folder, 'clean.csv'), '--json', '--radius', '0.5',
        '--exposure', String(options.exposure ?? options.frameInterval),
        '--temperature-log', join(folder, 'clean.temperature.csv')],
      memory.io,
    );
    expect(code).toBe(0);
    const report = JSON.parse(memory.out()) as Report;
    const inside = (ci: [number, number], value: number) => ci[0] <= value && value <= ci[1];
    expect(inside(report.diffusion.coefficient!.ci95, truth.diffusion.ensemble)).toBe(true);
    expect(inside(report.diffusion.localizationError!.ci95, truth.localizationError)).toBe(true);
    expect(inside(report.diffusion.exponent!.ci95, 1)).toBe(true);
    expect(inside(report.temperature.implied!.ci95, truth.temperature.reported)).toBe(true);
    expect(report.temperature.reported).toBeCloseTo(truth.temperature.reported, 6);
    expect(report.provenance.options).toHaveProperty('lagCount', 16);
  }, 60_000);

  it('gives the same report whether frames are fed as a rig would (one at a time, reports between) or read from the file', async () => {
    const fromFile = await analyzeFile(join(folder, 'clean.csv'), { progress: false, frameInterval: String(scenarios.clean.frameInterval) });
    const pipeline = new Pipeline({ frameInterval: scenarios.clean.frameInterval as number }, createDetectors, refreshContext);
    let n = 0;
    await readCentroids(join(folder, 'clean.csv'), {}, (frame) => {
      pipeline.push(frame);
      if (++n % 100 === 0) pipeline.report();
    });
    pipeline.finish();
    const live = pipeline.report();
    expect(live.diffusion).toEqual(fromFile.diffusion);
    expect(live.msd).toEqual(fromFile.msd);
    expect(live.alerts).toEqual(fromFile.alerts);
  }, 60_000);

  it('counts and quotes rejected rows with their line numbers and keeps the rest', async () => {
    const path = join(folder, 'bad.csv');
    const rows = ['# a comment', 't,id,x,y'];
    for (let f = 0; f < 50; f++) for (let id = 1; id <= 4; id++) rows.push(`${(f * 0.1).toFixed(1)},${id},${id * 10 + f * 0.01},${f * 0.02}`);
    rows.splice(5, 0, '0.1,2,abc,3');
    rows.splice(9, 0, '0.2,3,NaN,1');
    await writeFile(path, rows.join('\n'));
    const memory = memoryIo();
    expect(await main(['node', 'jostle', 'analyze', path, '--json'], memory.io)).toBe(0);
    const report = JSON.parse(memory.out()) as Report;
    expect(report.input.rejectedRows).toBe(2);
    expect(report.input.rejected.map((r) => r.line)).toEqual([6, 10]);
    expect(report.input.rows).toBe(202);
    expect(report.input.frames).toBe(50);
  });

  it('prints a readable text report by default', async () => {
    const memory = memoryIo();
    expect(await main(['node', 'jostle', 'analyze', join(folder, 'clean.csv'), '--radius', '0.5', '--temperature', '21'], memory.io)).toBe(0);
    expect(memory.out()).toMatch(/µm²\/s/);
    expect(memory.out()).toMatch(/95 % CI/);
  }, 60_000);

  it('takes detector thresholds from --set (dotted keys, JSON values) over --config, and lists them in provenance', async () => {
    const config = join(folder, 'settings.json');
    await writeFile(config, JSON.stringify({ detectors: { drift: { tolerance: 0.2 } }, lagCount: 12 }));
    const memory = memoryIo();
    const args = ['node', 'jostle', 'analyze', join(folder, 'clean.csv'), '--json', '--config', config, '--set', 'detectors.drift.tolerance=0.1', '--set', 'detectors.vibration=false'];
    expect(await main(args, memory.io)).toBe(0);
    const report = JSON.parse(memory.out()) as Report & { detectors: Record<string, unknown> };
    const options = report.provenance.options as { lagCount: number; detectors: { drift: { tolerance: number }; vibration: boolean } };
    expect(options.lagCount).toBe(12);
    expect(options.detectors.drift.tolerance).toBe(0.1);
    expect(report.msd.length).toBeLessThanOrEqual(12);
    expect(report.detectors.vibration).toBeUndefined();
    expect(report.detectors.drift).toBeDefined();
  }, 60_000);

  it('fills alerts, drift and the report fields for a drifting run (analyze --json)', async () => {
    await writeSimulation(scenarios.drift, { csvPath: join(folder, 'drift.csv'), truthPath: join(folder, 'drift.truth.json') });
    const memory = memoryIo();
    expect(await main(['node', 'jostle', 'analyze', join(folder, 'drift.csv'), '--json', '--exposure', '0.01'], memory.io)).toBe(0);
    const report = JSON.parse(memory.out()) as Report;
    expect(report.alerts.some((a) => a.kind === 'drift' && a.level !== 'info')).toBe(true);
    const v = report.drift.velocity!;
    // over the whole run the mean velocity is (40/60)·(0.15, −0.05) µm/s: the creep starts at 20 s of 60 s
    expect(v.ci95[0][0]).toBeLessThan(0.1);
    expect(v.ci95[0][1]).toBeGreaterThan(0.1);
    expect(Array.isArray(report.vibration.peaks)).toBe(true);
  }, 60_000);

  describe('usage errors exit 2 with one line on stderr', () => {
    const cases: [string, string[], RegExp][] = [
      ['a missing file', ['analyze', '/nonexistent/file.csv'], /cannot|not found|no such/i],
      ['an unknown option', ['analyze', 'x.csv', '--bogus'], /unknown option/],
      ['a bad number', ['analyze', 'x.csv', '--radius', 'big'], /--radius/],
      ['a bad medium', ['analyze', 'x.csv', '--medium', 'honey'], /honey/],
      ['--radius-sd without --radius', ['analyze', 'x.csv', '--radius-sd', '0.01'], /--radius/],
      ['a --set without =', ['analyze', 'x.csv', '--set', 'lagCount'], /--set/],
      ['an unknown setting', ['analyze', 'x.csv', '--set', 'lagcount=3'], /unknown setting lagcount/],
    ];
    for (const [what, args, message] of cases) {
      it(`for ${what}`, async () => {
        const memory = memoryIo();
        expect(await main(['node', 'jostle', ...args], memory.io)).toBe(2);
        expect(memory.err().trim().split('\n')).toHaveLength(1);
        expect(memory.err()).toMatch(message);
        expect(memory.out()).toBe('');
      });
    }
    it('for an empty file and for a header without x/y', async () => {
      await writeFile(join(folder, 'empty.csv'), '');
      await writeFile(join(folder, 'noxy.csv'), 't,id,a,b\n0,1,2,3\n');
      for (const file of ['empty.csv', 'noxy.csv']) {
        const memory = memoryIo();
        expect(await main(['node', 'jostle', 'analyze', join(folder, file)], memory.io)).toBe(2);
        expect(memory.err()).toMatch(/^jostle: /);
      }
    });
  });

  it('works as an installed command: npx-style bin, exit status 2 for a usage error', async () => {
    const failure = await run('node', [bin, 'analyze', '/nonexistent.csv']).catch((error) => error);
    expect(failure.code).toBe(2);
    expect(String(failure.stderr)).toMatch(/^jostle: /);
    const ok = await run('node', [bin, 'analyze', join(folder, 'clean.csv'), '--json']);
    expect(JSON.parse(ok.stdout).input.frames).toBe(scenarios.clean.frames);
  }, 60_000);
});
