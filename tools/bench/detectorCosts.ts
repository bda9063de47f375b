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

/** One detector's cost inside the pipeline. */
export interface DetectorCost {
  name: string;
  /** Mean time per frame, ms. */
  msPerFrame: number;
  /** Slowest single push, ms. */
  slowestMs: number;
}

/** Per-frame cost of each detector and of the core, from the second of two runs (the first warms up). */
export function detectorCosts(
  particles = 1000,
  frameCount = 3000,
  frameInterval = 0.001,
  detectorSettings?: Record<string, Record<string, unknown>>,
): { totalMsPerFrame: number; coreMsPerFrame: number; detectors: DetectorCost[] } {
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
  let result = { totalMsPerFrame: 0, coreMsPerFrame: 0, detectors: [] as DetectorCost[] };
  for (let round = 0; round < 2; round++) {
    spent.clear();
    const pipeline = new Pipeline({ frameInterval, exposure: 0.0008 * Math.min(1, frameInterval / 0.001), radius: 0.5, temperature: 22, detectors: detectorSettings }, timed, refreshContext);
    const a = performance.now();
    for (const frame of frames) pipeline.push(frame);
    const total = performance.now() - a;
    let inDetectors = 0;
    const detectors: DetectorCost[] = [];
    for (const [name, e] of [...spent].sort((p, q) => q[1].total - p[1].total)) {
      inDetectors += e.total;
      detectors.push({ name, msPerFrame: e.total / frameCount, slowestMs: e.max });
    }
    result = { totalMsPerFrame: total / frameCount, coreMsPerFrame: (total - inDetectors) / frameCount, detectors };
  }
  return result;
}

if (import.meta.url === `file://${process.argv[1]}`) {
  const particles = Number(process.argv[2] ?? 1000);
  const frameCount = Number(process.argv[3] ?? 3000);
  const frameInterval = Number(process.argv[4] ?? 0.001);
  const settings = process.argv[5] ? (JSON.parse(process.argv[5]) as Record<string, Record<string, unknown>>) : undefined;
  const costs = detectorCosts(particles, frameCount, frameInterval, settings);
  const inDetectors = costs.totalMsPerFrame - costs.coreMsPerFrame;
  console.log(`${particles} particles, ${frameCount} frames at Δt = ${frameInterval} s: ${costs.totalMsPerFrame.toFixed(3)} ms/frame in all, core ${costs.coreMsPerFrame.toFixed(3)}, detectors ${inDetectors.toFixed(3)}`);
  for (const d of costs.detectors) console.log(`${d.name.padEnd(12)} ${d.msPerFrame.toFixed(3)} ms/frame (slowest push ${d.slowestMs.toFixed(1)} ms)`);
}
