// Benchmark: cost per frame against particles (10²–10⁴) and lags (8–32), to show it grows
// linearly (per centroid·lag cost flat), not worse. Pipeline with ids given; the grid without
// detectors (the MSD part, which carries the lags), and one column with every detector on.
// Run: node --import tsx/esm tools/bench/scaling.ts   (a figure, not a test)
import { benchFrames } from './benchFrames.js';
import { machineLine } from './harness.js';
import { runPipeline } from './pipelineThroughput.js';

/** One cell of the scaling table: µs per frame (median of runs). */
export interface ScalingCell {
  particles: number;
  lags: number;
  detectors: boolean;
  microsecondsPerFrame: number;
}

function median(values: number[]): number {
  const sorted = [...values].sort((a, b) => a - b);
  return sorted[Math.floor(sorted.length / 2)];
}

export function scaling(runs = 3): ScalingCell[] {
  const cells: ScalingCell[] = [];
  for (const particles of [100, 1000, 10_000]) {
    const frameCount = Math.max(300, Math.round(600_000 / particles));
    const frames = benchFrames({ particles, frames: frameCount });
    const configurations: [number, boolean][] = [[8, false], [16, false], [32, false], [16, true]];
    for (const [lags, detectors] of configurations) {
      runPipeline(frames.slice(0, Math.min(frameCount, 200)), lags, detectors); // warm-up
      const times: number[] = [];
      for (let r = 0; r < runs; r++) {
        const start = performance.now();
        runPipeline(frames, lags, detectors);
        times.push(((performance.now() - start) * 1000) / frameCount);
      }
      cells.push({ particles, lags, detectors, microsecondsPerFrame: median(times) });
    }
  }
  return cells;
}

/** Markdown: µs per frame, and ns per centroid (per centroid·lag for the MSD columns). */
export function scalingTable(cells: ScalingCell[]): string {
  const lines = [
    '| particles | 8 lags, no detectors | 16 lags, no detectors | 32 lags, no detectors | 16 lags, every detector |',
    '| --- | --- | --- | --- | --- |',
  ];
  for (const particles of [...new Set(cells.map((c) => c.particles))]) {
    const row = cells.filter((c) => c.particles === particles).map((c) => {
      const perCentroid = (c.microsecondsPerFrame * 1000) / particles;
      const detail = c.detectors ? `${perCentroid.toFixed(0)} ns/centroid` : `${(perCentroid / c.lags).toFixed(1)} ns/(centroid·lag)`;
      return `${c.microsecondsPerFrame.toFixed(0)} µs/frame (${detail})`;
    });
    lines.push(`| ${particles} | ${row.join(' | ')} |`);
  }
  return lines.join('\n');
}

if (import.meta.url === `file://${process.argv[1]}`) {
  console.log(machineLine());
  console.log(scalingTable(scaling()));
}
