import type { FrameSteps } from '../../../src/detectors/frameSteps.js';
import type { DetectorContext } from '../../../src/detectors/detectorContext.js';
import { Random } from '../../../src/stats/random.js';

/**
 * A small seeded generator of FrameSteps for the drift and data-quality tests: Brownian
 * particles in a square field (µm), per-axis Gaussian localization error σ (µm), optional
 * heterogeneous D, finite track lifetimes, and faults: drift v(t), one-frame jumps, rigid
 * rotation, a moving subpopulation, dropped and duplicated frames, timestamp jitter, σ(t).
 * No motion blur (R = 0). Arrays are reused from frame to frame, as the pipeline does.
 */
export interface SyntheticOptions {
  seed: number;
  particles: number;
  /** µm²/s, or one value per particle slot. */
  diffusion: number | ((slot: number) => number);
  /** Localization error per axis, µm, possibly time dependent (t in s). */
  sigma: number | ((t: number) => number);
  frameInterval: number;
  /** Side of the square field, µm. */
  field: number;
  /** Mean track length, frames (geometric lifetimes); Infinity for tracks that never end. */
  meanTrackLength: number;
  /** Stage velocity at time t, µm/s. */
  drift?: (t: number) => [number, number];
  /** Frames (by slot) at which the stage jumps, and by how much, µm. */
  jumps?: Map<number, [number, number]>;
  /** Rigid rotation about the field centre, rad/s. */
  rotation?: number;
  /** Fraction of particle slots that move together at `subpopulationVelocity` µm/s. */
  subpopulationFraction?: number;
  subpopulationVelocity?: [number, number];
  /** Slots that are never delivered (dropped frames). */
  dropped?: Set<number>;
  /** Slots delivered twice (duplicated frames, same index and time). */
  duplicated?: Set<number>;
  /** Timestamp jitter SD, s. */
  jitter?: number;
  /** Slot slots whose particle slots are fiducial beads (D = 0): ids 1..fiducials. */
  fiducials?: number;
}

export class SyntheticSteps {
  readonly options: SyntheticOptions;
  readonly random: Random;
  readonly frame: FrameSteps;
  private readonly trueX: Float64Array;
  private readonly trueY: Float64Array;
  private readonly measX: Float64Array;
  private readonly measY: Float64Array;
  private readonly prevX: Float64Array;
  private readonly prevY: Float64Array;
  private readonly ids: Uint32Array;
  private readonly lengths: Uint32Array;
  private readonly sd: Float64Array;
  private readonly moving: Uint8Array;
  private nextId: number;
  slot = -1;
  private lastDelivered = -1;
  private stageX = 0;
  private stageY = 0;
  private pendingDuplicate = false;
  /** Ground truth: slots dropped so far, duplicates delivered so far. */
  droppedSoFar = 0;
  duplicatesSoFar = 0;

  constructor(options: SyntheticOptions) {
    this.options = options;
    this.random = new Random(options.seed);
    const n = options.particles;
    this.trueX = new Float64Array(n);
    this.trueY = new Float64Array(n);
    this.measX = new Float64Array(n);
    this.measY = new Float64Array(n);
    this.prevX = new Float64Array(n);
    this.prevY = new Float64Array(n);
    this.ids = new Uint32Array(n);
    this.lengths = new Uint32Array(n);
    this.sd = new Float64Array(n);
    this.moving = new Uint8Array(n);
    this.nextId = 1;
    const fiducials = options.fiducials ?? 0;
    for (let i = 0; i < n; i++) {
      const d = i < fiducials ? 0 : typeof options.diffusion === 'number' ? options.diffusion : options.diffusion(i);
      this.sd[i] = Math.sqrt(2 * d * options.frameInterval);
      this.moving[i] = i >= fiducials && i < fiducials + Math.round((options.subpopulationFraction ?? 0) * (n - fiducials)) ? 1 : 0;
      this.spawn(i);
    }
    const bigger = (k: number) => new Float64Array(k);
    this.frame = {
      t: 0, frameIndex: 0, slot: 0, slotGap: 1,
      frameInterval: options.frameInterval, exposure: options.frameInterval,
      count: 0, trackId: new Uint32Array(n), trackRow: Int32Array.from({ length: n }, (_, i) => i), x: bigger(n), y: bigger(n), intensity: undefined,
      trackLength: new Uint32Array(n), stepCount: 0, stepParticle: new Int32Array(n),
      dx: bigger(n), dy: bigger(n), endedCount: 0, endedTrackId: new Uint32Array(n),
      endedLength: new Uint32Array(n), endedX: bigger(n), endedY: bigger(n),
      field: { xMin: 0, xMax: options.field, yMin: 0, yMax: options.field },
    };
  }

  private spawn(i: number): void {
    this.trueX[i] = this.random.uniform() * this.options.field;
    this.trueY[i] = this.random.uniform() * this.options.field;
    this.ids[i] = this.nextId++;
    this.lengths[i] = 0;
  }

  private sigmaAt(t: number): number {
    const s = this.options.sigma;
    return typeof s === 'number' ? s : s(t);
  }

  /** The next delivered frame (skipping dropped slots), or the same frame again for a duplicate. */
  next(): FrameSteps {
    const o = this.options;
    const f = this.frame;
    if (this.pendingDuplicate) {
      // Same index and time, identical centroids: zero steps are not reported (slotGap 0).
      this.pendingDuplicate = false;
      this.duplicatesSoFar++;
      f.slotGap = 0;
      f.stepCount = 0;
      f.endedCount = 0;
      return f;
    }
    f.endedCount = 0;
    for (;;) {
      this.slot++;
      this.advance();
      if (o.dropped?.has(this.slot)) {
        this.droppedSoFar++;
        continue;
      }
      break;
    }
    const slot = this.slot;
    const gap = this.lastDelivered < 0 ? 1 : slot - this.lastDelivered;
    this.lastDelivered = slot;
    const t = slot * o.frameInterval + (o.jitter ? o.jitter * this.random.normal() : 0);
    const sigma = this.sigmaAt(t);
    const n = o.particles;
    f.t = t;
    f.frameIndex = slot;
    f.slot = slot;
    f.slotGap = gap;
    f.count = n;
    f.stepCount = 0;
    for (let i = 0; i < n; i++) {
      const mx = this.trueX[i] + this.stageX + sigma * this.random.normal();
      const my = this.trueY[i] + this.stageY + sigma * this.random.normal();
      f.trackId[i] = this.ids[i];
      f.x[i] = mx;
      f.y[i] = my;
      f.trackLength[i] = this.lengths[i] + 1;
      if (gap === 1 && this.lengths[i] > 0) {
        const k = f.stepCount++;
        f.stepParticle[k] = i;
        f.dx[k] = mx - this.measX[i];
        f.dy[k] = my - this.measY[i];
      }
      this.measX[i] = mx;
      this.measY[i] = my;
      this.lengths[i]++;
    }
    if (o.duplicated?.has(slot)) this.pendingDuplicate = true;
    return f;
  }

  /** Move the truth by one slot: Brownian steps, flow, drift, jumps, track ends and births. */
  private advance(): void {
    const o = this.options;
    if (this.slot === 0) return;
    const dt = o.frameInterval;
    const t = this.slot * dt;
    const n = o.particles;
    const centre = o.field / 2;
    const omega = o.rotation ?? 0;
    const sub = o.subpopulationVelocity ?? [0, 0];
    const f = this.frame;
    for (let i = 0; i < n; i++) {
      let x = this.trueX[i] + this.sd[i] * this.random.normal();
      let y = this.trueY[i] + this.sd[i] * this.random.normal();
      if (omega !== 0) {
        const rx = this.trueX[i] - centre;
        const ry = this.trueY[i] - centre;
        x += -omega * ry * dt;
        y += omega * rx * dt;
      }
      if (this.moving[i]) {
        x += sub[0] * dt;
        y += sub[1] * dt;
      }
      this.trueX[i] = x;
      this.trueY[i] = y;
      const outside = x < 0 || x > o.field || y < 0 || y > o.field;
      const fiducial = i < (o.fiducials ?? 0);
      const ends = !fiducial && (outside || (Number.isFinite(o.meanTrackLength) && this.random.uniform() < 1 / o.meanTrackLength));
      if (ends && this.lengths[i] > 0 && f.endedCount < n) {
        const k = f.endedCount++;
        f.endedTrackId[k] = this.ids[i];
        f.endedLength[k] = this.lengths[i];
        f.endedX[k] = this.measX[i];
        f.endedY[k] = this.measY[i];
      }
      if (ends) this.spawn(i);
    }
    if (o.drift) {
      const [vx, vy] = o.drift(t);
      this.stageX += vx * dt;
      this.stageY += vy * dt;
    }
    const jump = o.jumps?.get(this.slot);
    if (jump) {
      this.stageX += jump[0];
      this.stageY += jump[1];
    }
  }
}

/** A context with a given D and longest lag (the rest unknown). */
export function makeContext(diffusion: number | undefined, longestLag: number, sigma?: number): DetectorContext {
  return {
    diffusion,
    diffusionSe: undefined,
    localizationError: sigma,
    blur: 0,
    longestLag,
    reportedTemperature: undefined,
    expectedDiffusion: undefined,
    expectedDiffusionSd: undefined,
    radius: undefined,
  };
}
