import type { AlertLevel, Condition } from '../../alerts/condition.js';
import type { Detector } from '../detector.js';
import type { DetectorContext } from '../detectorContext.js';
import type { FrameSteps } from '../frameSteps.js';
import { pooledCveRelativeVariance } from './cveRelativeVariance.js';

/** Options of {@link SparseDetector}. */
export interface SparseOptions {
  /** Requested relative SE of D (default 0.05). */
  targetPrecision: number;
  /** Analysis window the precision refers to, s (default 60). */
  analysisSeconds: number;
  /** Non-overlapping check window, s (default 10). */
  checkSeconds: number;
}

/** What {@link SparseDetector.summary} returns. */
export interface SparseSummary {
  /** Mean particles per frame, and steps per second, in the last check window. */
  particles: number | null;
  stepsPerSecond: number | null;
  /** Relative SE of D reachable in the analysis window at that rate and x. */
  reachablePrecision: number | null;
  /** Particles per frame needed for the target precision. */
  particlesNeeded: number | null;
  /** ε = x − 2R used (x from the context, 0 while unknown). */
  epsilon: number;
}

const DEFAULTS: SparseOptions = { targetPrecision: 0.05, analysisSeconds: 60, checkSeconds: 10 };

/**
 * Too few particles for the requested precision (kind `sparse`): at the end of every check window,
 * the relative SE of the pooled CVE D reachable over `analysisSeconds` at the current step rate,
 * track length and ε = x − 2R (Vestergaard, Blainey & Flyvbjerg 2014 variance, see
 * {@link pooledCveRelativeVariance}); `warn` when it exceeds `targetPrecision`. A deterministic
 * rule on measured rates, not a statistical test. O(N_t) per frame.
 *
 * @example
 * const sparse = new SparseDetector({ targetPrecision: 0.05 });
 * sparse.push(frameSteps, context);       // → [] with enough particles
 * sparse.summary().reachablePrecision;    // → 0.006
 */
export class SparseDetector implements Detector<SparseSummary> {
  readonly name = 'sparse';
  private readonly options: SparseOptions;
  private windowStart = Number.NaN;
  private windowSteps = 0;
  private windowParticles = 0;
  private windowFrames = 0;
  private lengthSum = 0;
  private lengthCount = 0;
  private level: AlertLevel | null = null;
  private last: Omit<SparseSummary, 'epsilon'> | undefined;
  private epsilon = 0;

  /** @throws RangeError naming the option when an option is out of range */
  constructor(options: Partial<SparseOptions> = {}) {
    const o = { ...DEFAULTS, ...options };
    for (const name of ['targetPrecision', 'analysisSeconds', 'checkSeconds'] as const) {
      if (!(o[name] > 0) || !Number.isFinite(o[name])) throw new RangeError(`sparse requires ${name} > 0`);
    }
    this.options = o;
  }

  /** Feed one frame; returns the condition when it changed. O(N_t). */
  push(steps: FrameSteps, context: DetectorContext): readonly Condition[] {
    const t = steps.t;
    if (Number.isNaN(this.windowStart)) this.windowStart = t;
    this.windowSteps += steps.stepCount;
    this.windowParticles += steps.count;
    this.windowFrames++;
    for (let i = 0; i < steps.endedCount; i++) {
      this.lengthSum += steps.endedLength[i];
      this.lengthCount++;
    }
    if (t - this.windowStart < this.options.checkSeconds) return [];
    const o = this.options;
    const seconds = t - this.windowStart;
    const rate = this.windowSteps / seconds;
    const particles = this.windowParticles / this.windowFrames;
    const dt = steps.frameInterval;
    let epsilon = 0;
    if (context.localizationError !== undefined && context.diffusion !== undefined && context.diffusion > 0 && dt > 0) {
      epsilon = (context.localizationError * context.localizationError) / (context.diffusion * dt) - 2 * context.blur;
    }
    this.epsilon = epsilon;
    // Mean steps per track: from ended tracks, else the analysis window's worth of frames.
    const stepsPerTrack = Math.max(1, this.lengthCount > 0 ? this.lengthSum / this.lengthCount - 1 : o.analysisSeconds / dt);
    const totalSteps = rate * o.analysisSeconds;
    const reachable = totalSteps > 0 ? Math.sqrt(pooledCveRelativeVariance(epsilon, stepsPerTrack, totalSteps)) : Infinity;
    const needed = Number.isFinite(reachable) ? particles * (reachable / o.targetPrecision) ** 2 : Infinity;
    this.last = { particles, stepsPerSecond: rate, reachablePrecision: reachable, particlesNeeded: needed };
    this.windowStart = t;
    this.windowSteps = this.windowParticles = this.windowFrames = 0;
    const level: AlertLevel | null = reachable > o.targetPrecision ? 'warn' : null;
    if (level === this.level) return [];
    this.level = level;
    return [{
      key: 'sparse:precision',
      kind: 'sparse',
      level,
      t,
      message: level
        ? `Too few particles: ${particles.toFixed(1)} per frame give D to about ${Number.isFinite(reachable) ? (100 * reachable).toFixed(1) : '∞'} % in ${o.analysisSeconds} s, short of the ${(100 * o.targetPrecision).toFixed(0)} % asked for; about ${Number.isFinite(needed) ? Math.ceil(needed) : 'many'} per frame are needed. Add particles, record longer or move to a fuller part of the sample`
        : `Cleared: ${particles.toFixed(1)} particles per frame reach the requested precision`,
      statistic: { name: 'reachable relative SE of D', value: reachable, threshold: o.targetPrecision },
      falseAlarm: { perHour: 0 },
      effect: { name: 'particles per frame needed', value: needed, ci95: null, unit: 'particles' },
      detail: { particles, stepsPerSecond: rate, stepsPerTrack, epsilon },
    }];
  }

  /** Rates and precision of the last check window. */
  summary(): SparseSummary {
    return {
      particles: this.last?.particles ?? null,
      stepsPerSecond: this.last?.stepsPerSecond ?? null,
      reachablePrecision: this.last && Number.isFinite(this.last.reachablePrecision) ? this.last.reachablePrecision : null,
      particlesNeeded: this.last && Number.isFinite(this.last.particlesNeeded ?? Infinity) ? this.last.particlesNeeded : null,
      epsilon: this.epsilon,
    };
  }
}
