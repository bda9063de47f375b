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

/**
 * A live synthetic field for the paced and streaming benchmarks (benchRig.ts, stallProbe.ts):
 * N particles at seeded uniform positions (density 0.01 µm⁻², ids 0…N−1) that `advance()` moves by
 * one Brownian step (D = 0.4 µm²/s) drawn from 2¹⁶ precomputed normal steps, cycled, so that making
 * frames costs almost nothing beside the work being measured. The arrays are reused in place.
 */
export class CycledField {
  readonly x: Float64Array;
  readonly y: Float64Array;
  readonly id: Uint32Array;
  private readonly steps = new Float64Array(1 << 16);
  private cursor = 0;

  constructor(readonly particles: number, frameInterval: number, seed = 42) {
    const random = new Random(seed);
    const field = Math.max(100, Math.sqrt(particles / 0.01));
    this.x = new Float64Array(particles);
    this.y = new Float64Array(particles);
    this.id = new Uint32Array(particles);
    for (let p = 0; p < particles; p++) {
      this.x[p] = random.uniform() * field;
      this.y[p] = random.uniform() * field;
      this.id[p] = p;
    }
    const sd = Math.sqrt(2 * 0.4 * frameInterval);
    for (let i = 0; i < this.steps.length; i++) this.steps[i] = sd * random.normal();
  }

  /** Moves every particle by one step. O(N). */
  advance(): void {
    const mask = this.steps.length - 1;
    for (let p = 0; p < this.particles; p++) {
      this.x[p] += this.steps[this.cursor];
      this.y[p] += this.steps[(this.cursor + 7919) & mask];
      this.cursor = (this.cursor + 1) & mask;
    }
  }
}
