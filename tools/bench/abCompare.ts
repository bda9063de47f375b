// A/B timing of two checkouts on the same input, interleaved (load on a shared machine varies;
// alternating the order each round keeps the comparison fair). Not a test.
// Run: node --import tsx/esm tools/bench/abCompare.ts <other checkout root> [particles=1000] [frames=1000] [detectors|none|analyze] [rounds=9]
// `analyze` times `analyzeFile` on a simulated CSV (400 particles, 1,500 frames, as
// analyzeThroughput.ts) instead of the pipeline on in-memory frames.
import { mkdtemp, rm } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join, resolve } from 'node:path';
import { pathToFileURL } from 'node:url';
import { scenarios } from '../../src/simulate/scenarios.js';
import { writeSimulation } from '../simulate/writeSimulation.js';
import { benchFrames } from './benchFrames.js';

const other = resolve(process.argv[2] ?? '.');
const particles = Number(process.argv[3] ?? 1000);
const frameCount = Number(process.argv[4] ?? 1000);
const mode = process.argv[5] ?? 'detectors';
const rounds = Number(process.argv[6] ?? 9);

type Work = () => Promise<number>;
let works: Record<'this' | 'other', Work>;
let folder: string | undefined;
if (mode === 'analyze') {
  const mine = await import('../cli/analyze.js');
  const theirs = (await import(pathToFileURL(`${other}/tools/cli/analyze.ts`).href)) as typeof mine;
  folder = await mkdtemp(join(tmpdir(), 'jostle-ab-'));
  const csv = join(folder, 'linked.csv');
  await writeSimulation({ ...scenarios.clean, particles: 400, field: { width: 400, height: 300 }, frames: 1500 }, { csvPath: csv, truthPath: join(folder, 't.json') });
  works = {
    this: async () => (await mine.analyzeFile(csv, { progress: false })).input.rows as number,
    other: async () => (await theirs.analyzeFile(csv, { progress: false })).input.rows as number,
  };
} else {
  const mine = await import('./pipelineThroughput.js');
  const theirs = (await import(pathToFileURL(`${other}/tools/bench/pipelineThroughput.ts`).href)) as typeof mine;
  const frames = benchFrames({ particles, frames: frameCount });
  const detectors = mode !== 'none';
  works = {
    this: async () => mine.runPipeline(frames, 16, detectors),
    other: async () => theirs.runPipeline(frames, 16, detectors),
  };
}
const rates: Record<string, number[]> = { this: [], other: [] };
try {
  for (let round = 0; round < rounds; round++) {
    const order = round % 2 === 0 ? (['other', 'this'] as const) : (['this', 'other'] as const);
    for (const name of order) {
      const start = performance.now();
      const n = await works[name]();
      rates[name].push(n / ((performance.now() - start) / 1000));
    }
  }
} finally {
  if (folder) await rm(folder, { recursive: true, force: true });
}
for (const [name, list] of Object.entries(rates)) {
  list.sort((a, b) => a - b);
  console.log(`${name}: median ${list[list.length >> 1].toExponential(2)} centroids/s, best ${list[list.length - 1].toExponential(2)} (range ${list[0].toExponential(2)}–${list[list.length - 1].toExponential(2)}, ${list.length} rounds)`);
}
console.log(`this / other: ${(rates.this[rates.this.length >> 1] / rates.other[rates.other.length >> 1]).toFixed(2)} (medians)`);
