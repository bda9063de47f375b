/**
 * Time-averaged MSD of one axis of one track, a plain reference implementation:
 * MSD_n = (1/(N − n))·Σ_{i=0}^{N−n−1} (x_{i+n} − x_i)², n = 1..maxLag, over overlapping
 * displacements (the usual definition, e.g. Qian, Sheetz & Elson, Biophys. J. 60, 910, 1991).
 * O(N·maxLag); the pipeline keeps its own incremental accumulators.
 *
 * @param positions x_0..x_{N−1}, µm (one axis, equally spaced frames, no gaps).
 * @param maxLag largest lag in frames (1 ≤ maxLag ≤ N − 1).
 * @returns Float64Array of length maxLag; index n − 1 holds MSD_n, µm².
 * @throws RangeError when maxLag is not an integer in [1, N − 1].
 *
 * @example
 * timeAveragedMsd([0, 1, 3, 6], 3) // → Float64Array [4.6667, 17, 36]
 */
export function timeAveragedMsd(positions: ArrayLike<number>, maxLag: number): Float64Array {
  const frames = positions.length;
  if (!Number.isInteger(maxLag) || maxLag < 1 || maxLag > frames - 1) {
    throw new RangeError('timeAveragedMsd requires an integer maxLag in [1, frames - 1]');
  }
  const msd = new Float64Array(maxLag);
  for (let lag = 1; lag <= maxLag; lag++) {
    let sum = 0;
    for (let i = 0; i + lag < frames; i++) {
      const d = positions[i + lag] - positions[i];
      sum += d * d;
    }
    msd[lag - 1] = sum / (frames - lag);
  }
  return msd;
}
