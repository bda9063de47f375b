import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { Writable } from 'node:stream';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { scenarios } from '../../src/simulate/scenarios.js';
import { analyzeFile } from '../../tools/cli/analyze.js';
import { runReplay } from '../../tools/cli/replay.js';
import { writeSimulation } from '../../tools/simulate/writeSimulation.js';
import { testServer } from './serverHarness.js';

// STYLE.md habit 15 (incremental equals batch): the live server drives the very same src/
// pipeline as `jostle analyze`, so one file gives the same report both ways.

let server: Awaited<ReturnType<typeof testServer>>;
let folder: string;
beforeAll(async () => {
  server = await testServer();
  folder = mkdtempSync(join(tmpdir(), 'jostle-live-offline-'));
});
afterAll(async () => {
  await server.stop();
  rmSync(folder, { recursive: true, force: true });
});

function sink(): Writable & { text: string } {
  const out = new Writable({
    write(chunk, _encoding, done) {
      out.text += String(chunk);
      done();
    },
  }) as Writable & { text: string };
  out.text = '';
  return out;
}

describe('live run', () => {
  it('gives the same report as analyze for the same file (D to 1e-9 relative; provenance.generated differs)', async () => {
    const csv = join(folder, 'drift.csv');
    const temperatureLog = join(folder, 'drift.temperature.csv');
    await writeSimulation({ ...scenarios.drift, frames: 500 }, { csvPath: csv, truthPath: join(folder, 'drift.truth.json'), temperatureLogPath: temperatureLog });
    const flags = { frameInterval: '0.05', exposure: '0.01', radius: '0.5', temperature: '21', medium: 'water', temperatureLog, progress: false };
    const offline = await analyzeFile(csv, flags, sink() as unknown as NodeJS.WriteStream);
    const out = sink();
    await runReplay(csv, { url: `${server.ws}/rig`, token: server.token, fast: true, as: 'same-file', ...flags, json: true }, out);
    expect(JSON.parse(out.text)).toMatchObject({ run: 'same-file', frames: 500, errors: 0 });
    const live = server.registry.get('same-file')!;
    expect(live.state).toBe('ended');
    const report = live.report();
    const d = offline.diffusion.coefficient!;
    expect(report.diffusion.coefficient!.value).toBeCloseTo(d.value, 12);
    expect(Math.abs(report.diffusion.coefficient!.value / d.value - 1)).toBeLessThan(1e-9);
    expect(report.diffusion.coefficient!.ci95[0] / d.ci95[0]).toBeCloseTo(1, 9);
    expect(report.msd).toEqual(offline.msd);
    expect(report.drift.velocity).toEqual(offline.drift.velocity);
    expect(report.temperature.implied).toEqual(offline.temperature.implied);
    expect(report.alerts.map((a) => [a.kind, a.level, a.start])).toEqual(offline.alerts.map((a) => [a.kind, a.level, a.start]));
    expect(report.input.frames).toBe(offline.input.frames);
    expect(report.provenance.generated).not.toBe(offline.provenance.generated);
  });
});
