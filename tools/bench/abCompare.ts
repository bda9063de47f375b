// A/B timing of two checkouts' pipelines on the same frames, interleaved (load on a shared
// machine varies; interleaving keeps the comparison fair). Not a test.
// Run: npx tsx tools/bench/abCompare.ts <other checkout root> [particles] [frames] [detectors|none]
import { resolve } from 'node:path';
import { pathToFileURL } from 'node:url';
import { benchFrames } from './benchFrames.js';

const other = resolve(process.argv[2] ?? '.');
const particles = Number(process.argv[3] ?? 1000);
const frameCount = Number(process.argv[4] ?? 1000);
const detectors = process.argv[5] !== 'none';
const mine = await import('./pipelineThroughput.js');
const theirs = (await import(pathToFileURL(`${other}/tools/bench/pipelineThroughput.ts`).href)) as typeof mine;
const frames = benchFrames({ particles, frames: frameCount });
const rates: Record<string, number[]> = { this: [], other: [] };
for (let round = 0; round < 5; round++) {
  for (const [name, run] of [['this', mine.runPipeline], ['other', theirs.runPipeline]] as const) {
    const start = performance.now();
    const n = run(frames, 16, detectors);
    rates[name].push(n / ((performance.now() - start) / 1000));
  }
}
for (const [name, list] of Object.entries(rates)) {
  list.sort((a, b) => a - b);
  console.log(`${name}: median ${list[2].toExponential(2)} centroids/s (range ${list[0].toExponential(2)}–${list[4].toExponential(2)})`);
}
