// Benchmark: memory per live track, measured (array buffers and heap before and after a run
// holding 10,000 live tracks) and from the layout (bytes per track of each per-track array).
// Run: node --expose-gc --import tsx/esm tools/bench/trackMemory.ts   (a figure, not a test)
import { createDetectors } from '../../src/detectors/createDetectors.js';
import { msdLags } from '../../src/msd/msdLags.js';
import { Pipeline } from '../../src/pipeline/pipeline.js';
import { refreshContext } from '../../src/pipeline/refreshContext.js';
import { statsLayout } from '../../src/pipeline/statsLayout.js';
import { benchFrames } from './benchFrames.js';

/** Memory figures for `tracks` live tracks. */
export interface TrackMemory {
  tracks: number;
  /** Bytes per track from the layout: the position ring (2 × 8 B + 4 B slot per ring slot in 2-D) and the rest. */
  ringBytes: number;
  otherBytes: number;
  /** Measured growth of array buffers + heap per live track, bytes (the table's capacity doubles: up to 2× the layout). */
  measuredPipelineOnly: number;
  measuredWithDetectors: number;
}

// Array buffers freed by a collection leave `memoryUsage().arrayBuffers` only when their backing
// stores are released, which may come after `gc()` returns: without the pause below the previous
// measurement's pipeline was sometimes still counted at `before` and freed during the next run,
// so that run read as growing by under 1 kB per track.
async function used(): Promise<number> {
  const gc = (globalThis as { gc?: () => void }).gc;
  for (let i = 0; i < 3; i++) {
    gc?.();
    await new Promise((resolve) => setTimeout(resolve, 50));
  }
  const m = process.memoryUsage();
  return m.arrayBuffers + m.heapUsed;
}

async function measure(tracks: number, detectors: boolean): Promise<number> {
  const frames = benchFrames({ particles: tracks, frames: 30 });
  const before = await used();
  const pipeline = new Pipeline({ frameInterval: 0.001, radius: 0.5, temperature: 22 }, detectors ? createDetectors : undefined, refreshContext);
  for (const frame of frames) pipeline.push(frame);
  const after = await used();
  if (pipeline.counts().frames !== frames.length) throw new Error('frames refused');
  return (after - before) / tracks;
}

export async function trackMemory(tracks = 10_000): Promise<TrackMemory> {
  const lags = msdLags(16, 128, 10);
  const ringSize = lags[lags.length - 1] + 1;
  const layout = statsLayout(2, lags.length);
  const ringBytes = ringSize * (2 * 8 + 4); // x, y (z only in 3-D) and the slot
  // the track's part of a stats record (CVE sums, previous step: lagBase values; no lag sums per
  // track), lastSlot, runStart, mark, length, id (4 B each), firstT, lastT (8 B), group (2 B),
  // dense id table (4 B), the Map entry of the live table (~40 B, heap)
  const otherBytes = layout.lagBase * 8 + 5 * 4 + 2 * 8 + 2 + 4 + 40;
  return { tracks, ringBytes, otherBytes, measuredPipelineOnly: await measure(tracks, false), measuredWithDetectors: await measure(tracks, true) };
}

if (import.meta.url === `file://${process.argv[1]}`) {
  console.log(JSON.stringify(await trackMemory()));
}
