// A small seeded generator of FrameSteps for the temperature detector's tests and calibration:
// free Brownian particles in 2-D with track ids, per-particle D, Gaussian localization error σ
// and instantaneous exposure (blur R = 0), optional faults. Our own code, for an invented lab.
import type { DetectorContext } from '../../../src/detectors/detectorContext.js';
import type { FrameSteps } from '../../../src/detectors/frameSteps.js';
import { Random } from '../../../src/stats/random.js';

export interface BrownianStepsOptions {
  seed: number;
  /** Particles in view. */
  particles: number;
  /** Baseline D, µm²/s. */
  diffusion: number;
  /** Frame interval, s. */
  frameInterval: number;
  /** Localization error σ per axis, µm, as a function of time (s). */
  sigma?: (t: number) => number;
  /** Multiplier of every particle's D as a function of time (heating, viscosity). */
  diffusionFactor?: (t: number) => number;
  /** Coefficient of variation of per-particle D (log-normal). Default 0. */
  diffusionCv?: number;
  /** Probability per frame that a track ends and a new particle (new id, new D) replaces it. Default 0. */
  turnover?: number;
  /** Probability that a frame is dropped (not delivered). Default 0. */
  dropProbability?: number;
  /** Aggregation: from `onset` s, the first `fraction` of particles diffuse at `ratio`·D (dimers 0.72). */
  aggregation?: { onset: number; fraction: number; ratio: number };
  /** Reported temperature, °C (undefined: none). */
  reportedTemperature?: number;
  /** Radius given to the context, µm. */
  radius?: number;
}

/** Generates frames; `next()` returns the next delivered frame with a context. */
export class BrownianSteps {
  readonly steps: FrameSteps;
  readonly context: DetectorContext;
  private readonly random: Random;
  private readonly options: BrownianStepsOptions;
  private readonly trueX: Float64Array;
  private readonly trueY: Float64Array;
  private readonly lastObsX: Float64Array;
  private readonly lastObsY: Float64Array;
  private readonly lastSlot: Float64Array;
  private readonly ids: Uint32Array;
  private readonly lengths: Uint32Array;
  private readonly particleD: Float64Array;
  private nextId: number;
  private slot: number;
  private lastDeliveredSlot: number;
  // pooled MSD-based D estimate with known σ, for context.diffusion (the test's own stand-in pipeline)
  private sumSquares: number;
  private axisSteps: number;

  constructor(options: BrownianStepsOptions) {
    this.options = options;
    this.random = new Random(options.seed);
    const n = options.particles;
    this.trueX = new Float64Array(n);
    this.trueY = new Float64Array(n);
    this.lastObsX = new Float64Array(n);
    this.lastObsY = new Float64Array(n);
    this.lastSlot = new Float64Array(n).fill(-10);
    this.ids = new Uint32Array(n);
    this.lengths = new Uint32Array(n);
    this.particleD = new Float64Array(n);
    this.nextId = 1;
    for (let i = 0; i < n; i++) this.newParticle(i);
    this.slot = -1;
    this.lastDeliveredSlot = -10;
    this.sumSquares = 0;
    this.axisSteps = 0;
    this.steps = {
      t: 0, frameIndex: 0, slot: 0, slotGap: 1, frameInterval: options.frameInterval, exposure: 0, count: n,
      trackId: new Uint32Array(n), trackRow: Int32Array.from({ length: n }, (_, i) => i), x: new Float64Array(n), y: new Float64Array(n), intensity: undefined,
      trackLength: new Uint32Array(n), stepCount: 0, stepParticle: new Int32Array(n),
      dx: new Float64Array(n), dy: new Float64Array(n), endedCount: 0, endedTrackId: new Uint32Array(n),
      endedLength: new Uint32Array(n), endedX: new Float64Array(n), endedY: new Float64Array(n),
      field: { xMin: 0, xMax: 100, yMin: 0, yMax: 100 },
    };
    this.context = {
      diffusion: undefined, diffusionSe: undefined, localizationError: undefined, blur: 0, longestLag: options.frameInterval,
      reportedTemperature: options.reportedTemperature, expectedDiffusion: undefined, expectedDiffusionSd: undefined,
      radius: options.radius,
    };
  }

  private newParticle(i: number): void {
    const cv = this.options.diffusionCv ?? 0;
    const s2 = Math.log(1 + cv * cv);
    this.particleD[i] = this.options.diffusion * Math.exp(Math.sqrt(s2) * this.random.normal() - s2 / 2);
    this.ids[i] = this.nextId++;
    this.lengths[i] = 0;
    this.lastSlot[i] = -10;
    this.trueX[i] = 100 * this.random.uniform();
    this.trueY[i] = 100 * this.random.uniform();
  }

  /** Advance to the next delivered frame. */
  next(): { steps: FrameSteps; context: DetectorContext } {
    const o = this.options;
    const dt = o.frameInterval;
    const s = this.steps;
    let endedCount = 0;
    let dropped = true;
    while (dropped) {
      this.slot++;
      const t = this.slot * dt;
      const factor = o.diffusionFactor ? o.diffusionFactor(t) : 1;
      const agg = o.aggregation;
      const aggregated = agg !== undefined && t >= agg.onset ? Math.floor(agg.fraction * o.particles) : 0;
      for (let i = 0; i < o.particles; i++) {
        const d = this.particleD[i] * factor * (i < aggregated ? agg!.ratio : 1);
        const sd = Math.sqrt(2 * d * dt);
        this.trueX[i] += sd * this.random.normal();
        this.trueY[i] += sd * this.random.normal();
      }
      dropped = (o.dropProbability ?? 0) > 0 && this.random.uniform() < o.dropProbability!;
    }
    const t = this.slot * dt;
    const sigma = o.sigma ? o.sigma(t) : 0.02;
    // turnover: ended tracks are reported, and replaced by new particles (no step this frame)
    if ((o.turnover ?? 0) > 0) {
      for (let i = 0; i < o.particles; i++) {
        if (this.random.uniform() < o.turnover!) {
          s.endedTrackId[endedCount] = this.ids[i];
          s.endedLength[endedCount] = this.lengths[i];
          s.endedX[endedCount] = this.lastObsX[i];
          s.endedY[endedCount] = this.lastObsY[i];
          endedCount++;
          this.newParticle(i);
        }
      }
    }
    const slotGap = this.slot - this.lastDeliveredSlot;
    let stepCount = 0;
    for (let i = 0; i < o.particles; i++) {
      const x = this.trueX[i] + sigma * this.random.normal();
      const y = this.trueY[i] + sigma * this.random.normal();
      s.trackId[i] = this.ids[i];
      s.x[i] = x;
      s.y[i] = y;
      this.lengths[i]++;
      s.trackLength[i] = this.lengths[i];
      if (slotGap === 1 && this.lastSlot[i] === this.slot - 1) {
        const dx = x - this.lastObsX[i];
        const dy = y - this.lastObsY[i];
        s.stepParticle[stepCount] = i;
        s.dx[stepCount] = dx;
        s.dy[stepCount] = dy;
        stepCount++;
        this.sumSquares += dx * dx + dy * dy - 4 * sigma * sigma;
        this.axisSteps += 2;
      }
      this.lastObsX[i] = x;
      this.lastObsY[i] = y;
      this.lastSlot[i] = this.slot;
    }
    this.lastDeliveredSlot = this.slot;
    s.t = t;
    s.frameIndex = this.slot;
    s.slot = this.slot;
    s.slotGap = slotGap;
    s.stepCount = stepCount;
    s.endedCount = endedCount;
    if (this.axisSteps > 1000) {
      // pooled D with known σ: mean(Δx² − 2σ²)/(2Δt); SE ≈ √(2/n)·(2DΔt + 2σ²)/(2Δt) (independent steps)
      const d = this.sumSquares / this.axisSteps / (2 * dt);
      this.context.diffusion = d;
      this.context.diffusionSe = (Math.sqrt(2 / this.axisSteps) * (2 * d * dt + 2 * sigma * sigma)) / (2 * dt);
      this.context.localizationError = sigma;
    }
    return { steps: s, context: this.context };
  }
}

/** Median and 95th percentile (nearest rank) of a sample. */
export function quantilesOf(values: number[]): { median: number; p95: number } {
  const sorted = values.slice().sort((a, b) => a - b);
  const at = (p: number): number => sorted[Math.min(sorted.length - 1, Math.max(0, Math.ceil(p * sorted.length) - 1))];
  return { median: at(0.5), p95: at(0.95) };
}

/**
 * Gamma(shape, 1) deviate by Marsaglia & Tsang (2000), "A simple method for generating gamma
 * variables", ACM TOMS 26:363 (shape ≥ 1).
 */
export function gammaDraw(random: Random, shape: number): number {
  const d = shape - 1 / 3;
  const c = 1 / Math.sqrt(9 * d);
  for (;;) {
    let x = 0;
    let v = 0;
    do {
      x = random.normal();
      v = 1 + c * x;
    } while (v <= 0);
    v = v * v * v;
    const u = random.uniform();
    if (u < 1 - 0.0331 * x * x * x * x) return d * v;
    if (Math.log(u) < 0.5 * x * x + d * (1 - v + Math.log(v))) return d * v;
  }
}
