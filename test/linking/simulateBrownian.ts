// Seeded ground-truth simulator for the linking tests (test-only helper).
// Free 2-D Brownian motion: Gaussian steps of per-axis variance 2DΔt (Einstein 1905), plus a
// constant drift, Gaussian localization noise σ per axis, and independent misses with p_miss.
// Particles start uniformly in a square of side `box` µm and move freely (no wrapping), so the
// linker never sees periodic jumps; scores use only an interior window to avoid edge effects.
import { Random } from '../../src/stats/random.js';

export interface SimulationOptions {
  seed: number;
  particles: number;
  box: number; // µm
  frames: number;
  diffusion: number; // µm²/s
  frameInterval: number; // s
  sigma: number; // µm, per-axis localization error
  missProbability: number;
  driftVelocity?: [number, number]; // µm/s
}

export interface SimulatedFrame {
  count: number;
  x: Float64Array; // observed, µm
  y: Float64Array;
  particle: Int32Array; // ground-truth particle index of each detection
  trueX: Float64Array; // true position of that particle, µm
  trueY: Float64Array;
}

export function simulateBrownian(options: SimulationOptions): SimulatedFrame[] {
  const random = new Random(options.seed);
  const n = options.particles;
  const px = new Float64Array(n);
  const py = new Float64Array(n);
  for (let k = 0; k < n; k++) {
    px[k] = random.uniform() * options.box;
    py[k] = random.uniform() * options.box;
  }
  const stepSd = Math.sqrt(2 * options.diffusion * options.frameInterval);
  const driftX = (options.driftVelocity?.[0] ?? 0) * options.frameInterval;
  const driftY = (options.driftVelocity?.[1] ?? 0) * options.frameInterval;
  const order = new Int32Array(n);
  const frames: SimulatedFrame[] = [];
  for (let t = 0; t < options.frames; t++) {
    if (t > 0) {
      for (let k = 0; k < n; k++) {
        px[k] += driftX + stepSd * random.normal();
        py[k] += driftY + stepSd * random.normal();
      }
    }
    // Shuffle the detection order (Fisher–Yates) so that array order carries no identity.
    for (let k = 0; k < n; k++) order[k] = k;
    for (let k = n - 1; k > 0; k--) {
      const other = random.integer(k + 1);
      const swap = order[k];
      order[k] = order[other];
      order[other] = swap;
    }
    const frame: SimulatedFrame = {
      count: 0,
      x: new Float64Array(n),
      y: new Float64Array(n),
      particle: new Int32Array(n),
      trueX: new Float64Array(n),
      trueY: new Float64Array(n),
    };
    for (let index = 0; index < n; index++) {
      const k = order[index];
      if (options.missProbability > 0 && random.uniform() < options.missProbability) continue;
      const j = frame.count++;
      frame.x[j] = px[k] + options.sigma * random.normal();
      frame.y[j] = py[k] + options.sigma * random.normal();
      frame.particle[j] = k;
      frame.trueX[j] = px[k];
      frame.trueY[j] = py[k];
    }
    frames.push(frame);
  }
  return frames;
}
