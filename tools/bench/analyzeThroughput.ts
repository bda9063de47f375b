// Benchmark: `analyze` throughput in centroids/s for linked (ids given) and unlinked input, on
// a CSV written by the simulator, against the bare CSV read of the same file as the baseline.
// Run: node --import tsx/esm tools/bench/analyzeThroughput.ts   (a figure, not a test)
import { mkdtemp, rm } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { scenarios } from '../../src/simulate/scenarios.js';
import { analyzeFile } from '../cli/analyze.js';
import { readCentroids } from '../io/readCentroids.js';
import { writeSimulation } from '../simulate/writeSimulation.js';
import { machineLine, measureInterleaved, table, type BenchFigure } from './harness.js';

export async function analyzeThroughput(runs = 3): Promise<BenchFigure[]> {
  const folder = await mkdtemp(join(tmpdir(), 'jostle-bench-'));
  try {
    const base = { ...scenarios.clean, particles: 400, field: { width: 400, height: 300 }, frames: 1500 };
    const linked = join(folder, 'linked.csv');
    const unlinked = join(folder, 'unlinked.csv');
    const linkedSummary = await writeSimulation(base, { csvPath: linked, truthPath: join(folder, 'l.json') });
    await writeSimulation({ ...base, ids: false }, { csvPath: unlinked, truthPath: join(folder, 'u.json') });
    const rows = linkedSummary.rows;
    // interleaved rounds, so that the ratios to the bare read see the same machine
    const [read, withIds, withoutIds] = await measureInterleaved(
      [
        { name: 'CSV read only (baseline)', unit: 'rows/s', work: async () => (await readCentroids(linked, {}, () => undefined)).rows },
        { name: 'analyze, ids given', unit: 'centroids/s', work: async () => (await analyzeFile(linked, { progress: false })).input.rows as number },
        { name: 'analyze, unlinked (linking on)', unit: 'centroids/s', work: async () => (await analyzeFile(unlinked, { progress: false })).input.rows as number },
      ],
      runs,
    );
    void rows;
    return [read, withIds, withoutIds];
  } finally {
    await rm(folder, { recursive: true, force: true });
  }
}

if (import.meta.url === `file://${process.argv[1]}`) {
  const figures = await analyzeThroughput();
  console.log(machineLine());
  console.log(table(figures, figures[0]));
}
