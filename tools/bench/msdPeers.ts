// Peers for the pipeline benchmark, measured in the same run: a bare incremental MSD kernel
// (the ceiling: ring of positions, 16 lag sums per particle, nothing else) and a naive MSD that
// recomputes the time-averaged MSD from all stored positions every frame (the floor).
import type { Frame } from '../../src/frame.js';
import { msdLags } from '../../src/msd/msdLags.js';

/**
 * Bare incremental MSD kernel: per particle (row = id, one frame per row of the ring), store the
 * position in a ring of maxLag + 1 slots and add Δ² for each lag into a per-lag sum. Returns the
 * centroids processed. This is the ceiling the pipeline is compared with.
 */
export function bareMsdKernel(frames: Frame[], lagCount = 16, maxLag = 128): number {
  const lags = msdLags(lagCount, maxLag, Math.min(10, lagCount));
  const ringSize = lags[lags.length - 1] + 1;
  const n = frames[0].count;
  const ring = new Float64Array(n * ringSize * 2);
  const sums = new Float64Array(lags.length * 2);
  let centroids = 0;
  for (let f = 0; f < frames.length; f++) {
    const frame = frames[f];
    const id = frame.id as Uint32Array;
    const here = f % ringSize;
    for (let p = 0; p < frame.count; p++) {
      const row = id[p] * ringSize;
      const x = frame.x[p];
      const y = frame.y[p];
      for (let l = 0; l < lags.length; l++) {
        const from = f - lags[l];
        if (from < 0) break;
        let fromIndex = here - lags[l];
        if (fromIndex < 0) fromIndex += ringSize;
        const at = (row + fromIndex) * 2;
        const dx = x - ring[at];
        const dy = y - ring[at + 1];
        sums[2 * l] += 1;
        sums[2 * l + 1] += dx * dx + dy * dy;
      }
      ring[(row + here) * 2] = x;
      ring[(row + here) * 2 + 1] = y;
    }
    centroids += frame.count;
  }
  if (!(sums[1] >= 0)) throw new Error('bare kernel produced no sums');
  return centroids;
}

/**
 * Naive MSD: keeps every position and, every frame, recomputes the time-averaged MSD at the 16
 * lags from all stored positions (O(frames) per particle per frame). Run on a short frame set.
 */
export function naiveMsd(frames: Frame[], lagCount = 16, maxLag = 128): number {
  const lags = msdLags(lagCount, maxLag, Math.min(10, lagCount));
  const n = frames[0].count;
  const xs: number[][] = Array.from({ length: n }, () => []);
  const ys: number[][] = Array.from({ length: n }, () => []);
  let centroids = 0;
  let check = 0;
  for (const frame of frames) {
    const id = frame.id as Uint32Array;
    for (let p = 0; p < frame.count; p++) {
      xs[id[p]].push(frame.x[p]);
      ys[id[p]].push(frame.y[p]);
    }
    for (let k = 0; k < n; k++) {
      const x = xs[k];
      const y = ys[k];
      for (const lag of lags) {
        let sum = 0;
        let count = 0;
        for (let i = lag; i < x.length; i++) {
          const dx = x[i] - x[i - lag];
          const dy = y[i] - y[i - lag];
          sum += dx * dx + dy * dy;
          count++;
        }
        if (count > 0) check += sum / count;
      }
    }
    centroids += frame.count;
  }
  if (!(check >= 0)) throw new Error('naive MSD produced no sums');
  return centroids;
}
