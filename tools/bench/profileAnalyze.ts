// Profiling entry for `analyze` on a CSV (not a test):
//   node --import tsx/esm --cpu-prof --cpu-prof-dir=/tmp/prof tools/bench/profileAnalyze.ts
// then `node tools/bench/summariseProfile.mjs /tmp/prof`.
import { mkdtemp, rm } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { scenarios } from '../../src/simulate/scenarios.js';
import { analyzeFile } from '../cli/analyze.js';
import { writeSimulation } from '../simulate/writeSimulation.js';

const folder = await mkdtemp(join(tmpdir(), 'jostle-bench-'));
try {
  const csv = join(folder, 'linked.csv');
  await writeSimulation({ ...scenarios.clean, particles: 400, field: { width: 400, height: 300 }, frames: 1500 }, { csvPath: csv, truthPath: join(folder, 't.json') });
  for (let i = 0; i < 3; i++) await analyzeFile(csv, { progress: false });
} finally {
  await rm(folder, { recursive: true, force: true });
}
