// Time per frame of each detector inside the pipeline (not a test): the pipeline runs with every
// detector, each detector's push wrapped in a timer; the MSD/CVE core is the rest. Also the
// slowest single push of each detector (one-off calibrations show there).
// Run: node --import tsx/esm tools/bench/detectorCosts.ts [particles=1000] [frames=3000] [frameInterval=0.001] [detector settings as JSON]
import { createDetectors } from '../../src/detectors/createDetectors.js';
import type { Detector } from '../../src/detectors/detector.js';
import { Pipeline } from '../../src/pipeline/pipeline.js';
import type { ResolvedPipelineOptions } from '../../src/pipeline/pipelineOptions.js';
import { refreshContext } from '../../src/pipeline/refreshContext.js';
import { benchFrames } from './benchFrames.js';

const particles = Number(process.argv[2] ?? 1000);
const frameCount = Number(process.argv[3] ?? 3000);
const frameInterval = Number(process.argv[4] ?? 0.001);
const frames = benchFrames({ particles, frames: frameCount, frameInterval });
const spent = new Map<string, { total: number; max: number }>();
const timed = (options: ResolvedPipelineOptions): Detector[] =>
  createDetectors(options).map((detector) => {
    const push = detector.push.bind(detector);
    const entry = { total: 0, max: 0 };
    spent.set(detector.name, entry);
    detector.push = (steps, context) => {
      const a = performance.now();
      const out = push(steps, context);
      const ms = performance.now() - a;
      entry.total += ms;
      if (ms > entry.max) entry.max = ms;
      return out;
    };
    return detector;
  });
for (let round = 0; round < 2; round++) {
  spent.clear();
  const detectorSettings = process.argv[5] ? (JSON.parse(process.argv[5]) as Record<string, Record<string, unknown>>) : undefined;
  const pipeline = new Pipeline({ frameInterval, exposure: 0.0008 * Math.min(1, frameInterval / 0.001), radius: 0.5, temperature: 22, detectors: detectorSettings }, timed, refreshContext);
  const a = performance.now();
  for (const frame of frames) pipeline.push(frame);
  const total = performance.now() - a;
  if (round === 0) continue; // warm-up
  let detectors = 0;
  const rows: string[] = [];
  for (const [name, e] of [...spent].sort((p, q) => q[1].total - p[1].total)) {
    detectors += e.total;
    rows.push(`${name.padEnd(12)} ${(e.total / frameCount).toFixed(3)} ms/frame (slowest push ${e.max.toFixed(1)} ms)`);
  }
  console.log(`${particles} particles, ${frameCount} frames at Δt = ${frameInterval} s: ${(total / frameCount).toFixed(3)} ms/frame in all, core ${((total - detectors) / frameCount).toFixed(3)}, detectors ${(detectors / frameCount).toFixed(3)}`);
  console.log(rows.join('\n'));
}
