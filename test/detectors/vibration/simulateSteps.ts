import type { DetectorContext } from '../../../src/detectors/detectorContext.js';
import type { FrameSteps } from '../../../src/detectors/frameSteps.js';
import { Random } from '../../../src/stats/random.js';

/** Settings of the seeded test stream (µm, s, µm²/s, Hz). */
export interface StreamSettings {
  seed: number;
  particles: number;
  /** Mean D, µm²/s; each particle draws D·U(1 − spread, 1 + spread). */
  diffusion: number;
  diffusionSpread: number;
  frameInterval: number;
  /** Exposure τ_e, s (the camera averages positions over [t, t + τ_e]). */
  exposure: number;
  /** Localization error σ per axis, µm. */
  sigma: number;
  /** Constant stage drift, µm/s. */
  driftVelocity: [number, number];
  /** Slow wander: stage velocity an AR(1) with this SD (µm/s) and correlation time (s); 0: none. */
  wanderSpeed: number;
  wanderTime: number;
  /** Common-mode vibration: amplitude (µm, 0-to-peak), frequency (Hz), direction angle (rad), onset time (s). */
  vibrationAmplitude: number;
  vibrationFrequency: number;
  vibrationAngle: number;
  vibrationOnset: number;
  /** Time the vibration stops, s. */
  vibrationEnd: number;
  /** From this time (s) on, the vibration has amplitude `vibrationAmplitudeLater` (µm) instead. */
  vibrationChange: number;
  vibrationAmplitudeLater: number;
  /** One particle (the first) oscillating alone along x: amplitude µm, frequency Hz. */
  loneAmplitude: number;
  loneFrequency: number;
  /** Probability that a frame is dropped. */
  dropProbability: number;
}

export const STREAM_DEFAULTS: StreamSettings = {
  seed: 1,
  particles: 40,
  diffusion: 0.5,
  diffusionSpread: 0,
  frameInterval: 0.01,
  exposure: 0.01,
  sigma: 0.03,
  driftVelocity: [0, 0],
  wanderSpeed: 0,
  wanderTime: 5,
  vibrationAmplitude: 0,
  vibrationFrequency: 13.7,
  vibrationAngle: 0,
  vibrationOnset: 0,
  vibrationEnd: Number.POSITIVE_INFINITY,
  vibrationChange: Number.POSITIVE_INFINITY,
  vibrationAmplitudeLater: 0,
  loneAmplitude: 0,
  loneFrequency: 13.7,
  dropProbability: 0,
};

/** A context as the pipeline would hand it over (true values stand in for the estimates). */
export function contextFor(s: StreamSettings): DetectorContext {
  return {
    diffusion: s.diffusion,
    diffusionSe: undefined,
    localizationError: s.sigma,
    blur: s.exposure / (6 * s.frameInterval),
    longestLag: 10 * s.frameInterval,
    reportedTemperature: undefined,
    expectedDiffusion: undefined,
    expectedDiffusionSd: undefined,
    radius: undefined,
  };
}

/**
 * Seeded stream of FrameSteps: Brownian particles with motion blur (the exposure average of
 * Brownian motion drawn exactly: endpoint E ~ N(0, 2Dτ_e), mean M | E ~ N(E/2, 2Dτ_e/12)), a
 * Gaussian localization error, and stage motion (drift, wander, vibration) averaged over the
 * exposure exactly. Arrays are reused, as the pipeline does.
 */
export class SimulatedStream {
  readonly settings: StreamSettings;
  private readonly random: Random;
  private readonly n: number;
  private readonly d: Float64Array;
  private readonly x: Float64Array;
  private readonly y: Float64Array;
  private readonly prevX: Float64Array;
  private readonly prevY: Float64Array;
  private readonly frame: FrameSteps;
  private slot: number;
  private lastDeliveredSlot: number;
  private stageX: number;
  private stageY: number;
  private wanderVX: number;
  private wanderVY: number;

  constructor(settings: Partial<StreamSettings>) {
    const s = { ...STREAM_DEFAULTS, ...settings };
    this.settings = s;
    this.random = new Random(s.seed);
    const n = s.particles;
    this.n = n;
    this.d = new Float64Array(n);
    for (let i = 0; i < n; i++) this.d[i] = s.diffusion * (1 - s.diffusionSpread + 2 * s.diffusionSpread * this.random.uniform());
    this.x = new Float64Array(n);
    this.y = new Float64Array(n);
    for (let i = 0; i < n; i++) {
      this.x[i] = 100 * this.random.uniform();
      this.y[i] = 100 * this.random.uniform();
    }
    this.prevX = new Float64Array(n);
    this.prevY = new Float64Array(n);
    const trackId = new Uint32Array(n);
    for (let i = 0; i < n; i++) trackId[i] = i + 1;
    const stepParticle = new Int32Array(n);
    for (let i = 0; i < n; i++) stepParticle[i] = i;
    this.frame = {
      t: 0,
      frameIndex: 0,
      slot: 0,
      slotGap: 1,
      frameInterval: s.frameInterval,
      exposure: s.exposure,
      count: n,
      trackId,
      trackRow: Int32Array.from({ length: n }, (_, i) => i),
      x: new Float64Array(n),
      y: new Float64Array(n),
      intensity: undefined,
      trackLength: new Uint32Array(n),
      stepCount: 0,
      stepParticle,
      dx: new Float64Array(n),
      dy: new Float64Array(n),
      endedCount: 0,
      endedTrackId: new Uint32Array(0),
      endedLength: new Uint32Array(0),
      endedX: new Float64Array(0),
      endedY: new Float64Array(0),
      field: { xMin: 0, xMax: 100, yMin: 0, yMax: 100 },
    };
    this.slot = -1;
    this.lastDeliveredSlot = Number.NaN;
    this.stageX = 0;
    this.stageY = 0;
    this.wanderVX = 0;
    this.wanderVY = 0;
  }

  /** The next delivered frame (dropped frames are skipped over). */
  next(): FrameSteps {
    for (;;) {
      this.slot++;
      const delivered = this.simulateSlot();
      if (delivered) return this.frame;
    }
  }

  private simulateSlot(): boolean {
    const s = this.settings;
    const r = this.random;
    const dt = s.frameInterval;
    const te = s.exposure;
    const t = this.slot * dt;
    // Stage position averaged over the exposure [t, t + τ_e].
    let stageMeanX = this.stageX + s.driftVelocity[0] * (t + te / 2);
    let stageMeanY = this.stageY + s.driftVelocity[1] * (t + te / 2);
    if (s.vibrationAmplitude > 0 && t >= s.vibrationOnset && t < s.vibrationEnd) {
      const w = 2 * Math.PI * s.vibrationFrequency;
      const half = (w * te) / 2;
      const sinc = half === 0 ? 1 : Math.sin(half) / half;
      const amplitude = t >= s.vibrationChange ? s.vibrationAmplitudeLater : s.vibrationAmplitude;
      const v = amplitude * sinc * Math.cos(w * (t + te / 2));
      stageMeanX += v * Math.cos(s.vibrationAngle);
      stageMeanY += v * Math.sin(s.vibrationAngle);
    }
    let loneMean = 0;
    if (s.loneAmplitude > 0) {
      const w = 2 * Math.PI * s.loneFrequency;
      const half = (w * te) / 2;
      loneMean = s.loneAmplitude * (half === 0 ? 1 : Math.sin(half) / half) * Math.cos(w * (t + te / 2));
    }
    const dropped = r.uniform() < s.dropProbability;
    const f = this.frame;
    const n = this.n;
    for (let i = 0; i < n; i++) {
      const D = this.d[i];
      const e = Math.sqrt(2 * D * te);
      const ex = e * r.normal();
      const ey = e * r.normal();
      const mx = ex / 2 + Math.sqrt((2 * D * te) / 12) * r.normal();
      const my = ey / 2 + Math.sqrt((2 * D * te) / 12) * r.normal();
      if (!dropped) {
        f.x[i] = this.x[i] + mx + stageMeanX + s.sigma * r.normal() + (i === 0 ? loneMean : 0);
        f.y[i] = this.y[i] + my + stageMeanY + s.sigma * r.normal();
      }
      const rest = dt - te;
      const g = rest > 0 ? Math.sqrt(2 * D * rest) : 0;
      this.x[i] += ex + (g > 0 ? g * r.normal() : 0);
      this.y[i] += ey + (g > 0 ? g * r.normal() : 0);
    }
    if (s.wanderSpeed > 0) {
      const a = Math.exp(-dt / s.wanderTime);
      const b = s.wanderSpeed * Math.sqrt(1 - a * a);
      this.wanderVX = a * this.wanderVX + b * r.normal();
      this.wanderVY = a * this.wanderVY + b * r.normal();
      this.stageX += this.wanderVX * dt;
      this.stageY += this.wanderVY * dt;
    }
    if (dropped) return false;
    const gap = Number.isNaN(this.lastDeliveredSlot) ? 1 : this.slot - this.lastDeliveredSlot;
    f.t = t;
    f.frameIndex = this.slot;
    f.slot = this.slot;
    f.slotGap = gap;
    const stepping = gap === 1 && !Number.isNaN(this.lastDeliveredSlot);
    f.stepCount = stepping ? n : 0;
    for (let i = 0; i < n; i++) {
      if (stepping) {
        f.dx[i] = f.x[i] - this.prevX[i];
        f.dy[i] = f.y[i] - this.prevY[i];
      }
      this.prevX[i] = f.x[i];
      this.prevY[i] = f.y[i];
      f.trackLength[i]++;
    }
    this.lastDeliveredSlot = this.slot;
    return true;
  }
}
