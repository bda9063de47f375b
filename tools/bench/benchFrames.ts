// Synthetic frames for the benchmarks: N particles doing free Brownian steps in an invented
// 200 µm field, ids given (or not), seeded so that every run sees the same data.
import type { Frame } from '../../src/frame.js';
import { Random } from '../../src/stats/random.js';

/** Settings of a synthetic frame set. */
export interface BenchFrameOptions {
  particles: number;
  frames: number;
  /** Frame interval, s (default 0.001: a 1,000 frames/s rig). */
  frameInterval?: number;
  /** Diffusion coefficient, µm²/s (default 0.4). */
  diffusion?: number;
  /** Field side, µm (default: sized for a density of 0.01 particles/µm² ... at least 100 µm). */
  field?: number;
  /** Give track ids (default true). */
  ids?: boolean;
  seed?: number;
}

/**
 * Pre-generated frames (all in memory, so that generation is not timed). Every particle is
 * present in every frame; ids are 0..N−1.
 */
export function benchFrames(options: BenchFrameOptions): Frame[] {
  const dt = options.frameInterval ?? 0.001;
  const diffusion = options.diffusion ?? 0.4;
  const n = options.particles;
  const field = options.field ?? Math.max(100, Math.sqrt(n / 0.01));
  const random = new Random(options.seed ?? 20261201);
  const sd = Math.sqrt(2 * diffusion * dt);
  const x = new Float64Array(n);
  const y = new Float64Array(n);
  for (let p = 0; p < n; p++) {
    x[p] = random.uniform() * field;
    y[p] = random.uniform() * field;
  }
  const id = new Uint32Array(n);
  for (let p = 0; p < n; p++) id[p] = p;
  const frames: Frame[] = [];
  for (let f = 0; f < options.frames; f++) {
    for (let p = 0; p < n; p++) {
      x[p] += sd * random.normal();
      y[p] += sd * random.normal();
    }
    const frame: Frame = { index: f, t: f * dt, count: n, x: Float64Array.from(x), y: Float64Array.from(y) };
    if (options.ids !== false) frame.id = id;
    frames.push(frame);
  }
  return frames;
}
