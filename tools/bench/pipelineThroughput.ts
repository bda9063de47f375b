// Benchmark: the pipeline alone (frames already in typed arrays, ids given, every detector on)
// against the bare MSD kernel and the naive MSD, measured in the same run.
// Run: node --import tsx/esm tools/bench/pipelineThroughput.ts   (a figure, not a test)
import { createDetectors } from '../../src/detectors/createDetectors.js';
import type { Frame } from '../../src/frame.js';
import { Pipeline } from '../../src/pipeline/pipeline.js';
import { refreshContext } from '../../src/pipeline/refreshContext.js';
import { benchFrames } from './benchFrames.js';
import { machineLine, measureInterleaved, measureRate, table, type BenchFigure } from './harness.js';
import { bareMsdKernel, naiveMsd } from './msdPeers.js';

/** Runs one pipeline (every detector on) over `frames`; returns the centroids fed. */
export function runPipeline(frames: Frame[], lagCount = 16, detectors = true): number {
  const pipeline = new Pipeline(
    { frameInterval: 0.001, exposure: 0.0008, radius: 0.5, temperature: 22, lagCount },
    detectors ? createDetectors : undefined,
    refreshContext,
  );
  let centroids = 0;
  for (const frame of frames) {
    pipeline.push(frame);
    centroids += frame.count;
  }
  pipeline.finish();
  return centroids;
}

export async function pipelineThroughput(runs = 5, particles = 1000, frameCount = 2000): Promise<BenchFigure[]> {
  const frames = benchFrames({ particles, frames: frameCount });
  // interleaved rounds, so that the ratios to the bare kernel see the same machine
  const [bare, pipeline, noDetectors] = await measureInterleaved(
    [
      { name: `bare MSD kernel, ${particles} particles, 16 lags (baseline)`, unit: 'centroids/s', work: () => bareMsdKernel(frames) },
      { name: `pipeline, ids given, ${particles} particles, 16 lags, every detector`, unit: 'centroids/s', work: () => runPipeline(frames) },
      { name: `pipeline, ids given, no detectors`, unit: 'centroids/s', work: () => runPipeline(frames, 16, false) },
    ],
    runs,
  );
  const short = frames.slice(0, 200);
  const naive = measureRate(`naive MSD (recompute every frame, 200 frames)`, 'centroids/s', () => naiveMsd(short), 3);
  return [bare, pipeline, noDetectors, naive];
}

/**
 * The same pipeline over 10 s of data per run (10,000 frames) against the kernel on the same
 * frames, interleaved: the steady state, where the detectors' start-up work (burn-in designs,
 * calibrations, the table's first growth) weighs less than in the 2-s runs above.
 */
export async function sustainedPipeline(runs = 3, particles = 1000, frameCount = 10_000): Promise<BenchFigure[]> {
  const frames = benchFrames({ particles, frames: frameCount });
  return measureInterleaved(
    [
      { name: `bare MSD kernel, ${particles} particles, ${frameCount} frames (baseline)`, unit: 'centroids/s', work: () => bareMsdKernel(frames) },
      { name: `pipeline, ids given, every detector, ${frameCount} frames per run`, unit: 'centroids/s', work: () => runPipeline(frames) },
    ],
    runs,
  );
}

if (import.meta.url === `file://${process.argv[1]}`) {
  const figures = await pipelineThroughput(Number(process.argv[2] ?? 5));
  console.log(machineLine());
  console.log(table(figures, figures[0]));
}
