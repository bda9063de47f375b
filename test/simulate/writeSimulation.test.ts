import { mkdtempSync, readFileSync, rmSync, existsSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { scenarios } from '../../src/simulate/scenarios.js';
import { simulate } from '../../src/simulate/simulate.js';
import type { SimulationOptions } from '../../src/simulate/simulationOptions.js';
import { writeSimulation } from '../../tools/simulate/writeSimulation.js';

const folder = mkdtempSync(join(tmpdir(), 'jostle-simulate-'));
afterAll(() => rmSync(folder, { recursive: true, force: true }));

/** A quick split-based reader of the centroid CSV (CONTRACTS §2): skips `#` and blank lines. */
function readCsv(text: string): { columns: string[]; rows: { line: number; fields: string[] }[] } {
  const lines = text.split('\n');
  let columns: string[] = [];
  const rows: { line: number; fields: string[] }[] = [];
  lines.forEach((line, i) => {
    if (line.trim() === '' || line.startsWith('#')) return;
    if (columns.length === 0) columns = line.split(',');
    else rows.push({ line: i + 1, fields: line.split(',') });
  });
  return { columns, rows };
}

describe('writeSimulation(options, files)', () => {
  it('writes a centroid CSV that parses back to the simulated frames, in pixels when positionUnit is set', async () => {
    const options: SimulationOptions = { ...scenarios.clean, frames: 120, positionUnit: 0.1 };
    const csvPath = join(folder, 'clean.csv');
    const truthPath = join(folder, 'clean.truth.json');
    const temperatureLogPath = join(folder, 'clean.temperature.csv');
    const summary = await writeSimulation(options, { csvPath, truthPath, temperatureLogPath });
    const { columns, rows } = readCsv(readFileSync(csvPath, 'utf8'));
    expect(columns).toEqual(['frame', 't', 'id', 'x', 'y', 'intensity']);
    expect(rows.length).toBe(summary.rows);
    // compare with the events themselves (same seed)
    const expected: number[][] = [];
    for (const event of simulate(options)) {
      if (event.type !== 'frame') continue;
      for (let i = 0; i < event.frame.count; i++) {
        expected.push([event.frame.index, event.frame.t, event.frame.id![i], event.frame.x[i], event.frame.y[i]]);
      }
    }
    expect(rows.length).toBe(expected.length);
    for (let r = 0; r < rows.length; r += 37) {
      const f = rows[r].fields.map(Number);
      expect(f[0]).toBe(expected[r][0]);
      expect(f[1]).toBeCloseTo(expected[r][1], 6);
      expect(f[2]).toBe(expected[r][2]);
      expect(f[3] * 0.1).toBeCloseTo(expected[r][3], 5); // pixels × pixel size = µm
      expect(f[4] * 0.1).toBeCloseTo(expected[r][4], 5);
    }
    const truth = JSON.parse(readFileSync(truthPath, 'utf8'));
    expect(truth.seed).toBe(1188);
    expect(truth.options.positionUnit).toBe(0.1);
    expect(truth.blur).toBeCloseTo(0.01 / (6 * 0.05), 12); // R = t_E/(6Δt), estimators.md §1
    const log = readFileSync(temperatureLogPath, 'utf8').trim().split('\n');
    expect(log[0]).toBe('t,celsius');
    expect(log.length - 1).toBe(summary.temperatureReadings);
    expect(log[1]).toBe('0.000000,21.0000');
  });

  it('injects malformed rows at the requested rate and records their line numbers', async () => {
    const csvPath = join(folder, 'bad.csv');
    const truthPath = join(folder, 'bad.truth.json');
    const summary = await writeSimulation({ ...scenarios['bad-rows'], frames: 200 }, { csvPath, truthPath, badRows: { probability: 0.02 } });
    const { columns, rows } = readCsv(readFileSync(csvPath, 'utf8'));
    const truth = JSON.parse(readFileSync(truthPath, 'utf8')) as { badRows: { line: number; kind: string }[] };
    const badLines = new Set(truth.badRows.map((b) => b.line));
    expect(truth.badRows.length).toBe(summary.badRows);
    // binomial rate check (common practice): 2 % of good rows within 4 SE
    const good = summary.rows - summary.badRows;
    expect(Math.abs(summary.badRows / good - 0.02)).toBeLessThan(4 * Math.sqrt((0.02 * 0.98) / good));
    let rejected = 0;
    for (const row of rows) {
      const numeric = row.fields.length === columns.length && row.fields.every((f) => f !== '' && Number.isFinite(Number(f)));
      if (!numeric) {
        rejected++;
        expect(badLines.has(row.line)).toBe(true);
      }
    }
    expect(rejected).toBe(summary.badRows);
    expect(new Set(truth.badRows.map((b) => b.kind)).size).toBe(4);
  });

  it('writes tags when the scenario has them, and no tags file otherwise', async () => {
    const tagsPath = join(folder, 'demo.tags.csv');
    await writeSimulation({ ...scenarios.demo, frames: 30 }, { csvPath: join(folder, 'demo.csv'), truthPath: join(folder, 'demo.json'), tagsPath });
    const lines = readFileSync(tagsPath, 'utf8').trim().split('\n');
    expect(lines[0]).toBe('label,start,end,note');
    expect(lines.length).toBe(1 + scenarios.demo.tags!.length);
    expect(lines[2].split(',')[2]).toBe(''); // a point mark has an empty end
    const none = join(folder, 'none.tags.csv');
    await writeSimulation({ ...scenarios.clean, frames: 5 }, { csvPath: join(folder, 'c.csv'), truthPath: join(folder, 'c.json'), tagsPath: none });
    expect(existsSync(none)).toBe(false);
  });
  it('writes a z column with a depth of field and reportZ, and no id column without ids', async () => {
    const csvPath = join(folder, 'z.csv');
    await writeSimulation({ seed: 5, frames: 20, diffusion: 0.4, depthOfField: 2, reportZ: true, ids: false }, { csvPath, truthPath: join(folder, 'z.json') });
    const { columns, rows } = readCsv(readFileSync(csvPath, 'utf8'));
    expect(columns).toEqual(['frame', 't', 'x', 'y', 'z', 'intensity']);
    expect(rows.length).toBeGreaterThan(100);
    for (const row of rows) expect(Math.abs(Number(row.fields[4]))).toBeLessThan(1.2); // |z| < depth/2 plus σ
  });
});
