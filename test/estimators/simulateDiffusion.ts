// Test helper (not a test file): seeded free-diffusion tracks of one axis with Gaussian
// localization noise and camera exposure blur made by sub-frame averaging.
import { Random } from '../../src/stats/random.js';
import type { CveSums } from '../../src/estimators/cveFromSums.js';

/** Settings of one simulated axis. */
export interface DiffusionSettings {
  /** D, µm²/s. */
  diffusion: number;
  /** Δt, s. */
  frameIntervalS: number;
  /** σ, static localization error per axis, µm. */
  sigma: number;
  /** t_E, s (0 ≤ t_E ≤ Δt). */
  exposureS: number;
  /** Sub-steps averaged over the exposure (default 20). */
  subSteps?: number;
}

/**
 * Fill `out` with one track of free diffusion: the true path is a Brownian motion; each frame
 * reports the average of the path at the midpoints of `subSteps` equal sub-intervals of the
 * exposure [kΔt, kΔt + t_E], plus N(0, σ²). With m sub-steps the effective blur coefficient is
 * R·(1 − 1/m²) (a 0.25 % shortfall for m = 20; exact for the discrete average).
 */
export function simulateAxis(random: Random, settings: DiffusionSettings, out: Float64Array): Float64Array {
  const { diffusion, frameIntervalS, sigma, exposureS } = settings;
  const subSteps = settings.subSteps ?? 20;
  let position = 0;
  if (exposureS <= 0) {
    const stepSd = Math.sqrt(2 * diffusion * frameIntervalS);
    for (let k = 0; k < out.length; k++) {
      if (k > 0) position += stepSd * random.normal();
      out[k] = position + sigma * random.normal();
    }
    return out;
  }
  const h = exposureS / subSteps;
  const halfSd = Math.sqrt(diffusion * h); // √(2D·h/2)
  const fullSd = Math.sqrt(2 * diffusion * h);
  const gapSd = Math.sqrt(2 * diffusion * (h / 2 + frameIntervalS - exposureS));
  for (let k = 0; k < out.length; k++) {
    if (k > 0) position += gapSd * random.normal();
    position += halfSd * random.normal();
    let sum = position;
    for (let j = 1; j < subSteps; j++) {
      position += fullSd * random.normal();
      sum += position;
    }
    out[k] = sum / subSteps + sigma * random.normal();
  }
  return out;
}

/** The CVE running sums of one track's positions (one axis). */
export function cveSumsOf(positions: ArrayLike<number>): CveSums {
  let sumSquares = 0;
  let sumProducts = 0;
  let previous = Number.NaN;
  for (let k = 1; k < positions.length; k++) {
    const step = positions[k] - positions[k - 1];
    sumSquares += step * step;
    if (k > 1) sumProducts += previous * step;
    previous = step;
  }
  return { steps: positions.length - 1, sumSquares, pairs: positions.length - 2, sumProducts };
}

/** Add `more` into `total` (pooling sums over tracks). */
export function addSums(total: CveSums, more: CveSums): CveSums {
  total.steps += more.steps;
  total.sumSquares += more.sumSquares;
  total.pairs += more.pairs;
  total.sumProducts += more.sumProducts;
  return total;
}

/** Sample mean and sample variance. */
export function meanAndVariance(values: ArrayLike<number>): { mean: number; variance: number } {
  let mean = 0;
  for (let i = 0; i < values.length; i++) mean += values[i];
  mean /= values.length;
  let sum = 0;
  for (let i = 0; i < values.length; i++) sum += (values[i] - mean) ** 2;
  return { mean, variance: sum / (values.length - 1) };
}

/**
 * Vitest options for Monte Carlo tests: a generous timeout because the machine's cores are shared
 * (speed is never asserted; each such test takes about 0.1-3 s alone).
 */
export const monteCarlo = { timeout: 60_000 };
