// A small seeded generator of FrameSteps for the clumping detector's tests and calibration
// script: Brownian particles in a periodic box with a field of view inside it (tracks begin and
// end at the edge of the field), track ids, Gaussian localization error, per-particle intensity
// with per-frame noise, optional hard-core exclusion, and injected aggregation (dimers at
// 0.718·D with twice the intensity, optionally unresolved: one centroid at the midpoint).
// Our own code, for an invented lab (the "Harbour Street colloid bench").
import type { DetectorContext } from '../../../src/detectors/detectorContext.js';
import type { FrameSteps } from '../../../src/detectors/frameSteps.js';
import { DIMER_DIFFUSION_RATIO } from '../../../src/physics/clusterDiffusionRatios.js';
import { Random } from '../../../src/stats/random.js';

export interface ClumpingStepsOptions {
  seed: number;
  /** Particles in the periodic box. */
  particles: number;
  /** Side of the square box, µm. */
  box: number;
  /** Side of the square field of view centred in the box, µm. */
  field: number;
  /** D, µm²/s. */
  diffusion: number;
  /** Coefficient of variation of per-particle D (log-normal, mean preserved). Default 0. */
  diffusionCv?: number;
  frameInterval: number;
  /** Localization error σ per axis, µm, possibly changing with time (s). Default 0.02. */
  sigma?: number | ((t: number) => number);
  /** Hard-core diameter, µm (moves closer than this are rejected). Default 0. */
  hardCore?: number;
  /** Per-frame CV of the intensity (multiplicative noise). Default 0.05; null: no intensities. */
  intensityNoise?: number | null;
  /** Slots simulated before the first frame (equilibration of a crowded sample), not emitted. Default 0. */
  burnIn?: number;
  /** Probability that a frame is dropped (not delivered). Default 0. */
  dropProbability?: number;
  /**
   * Injected aggregation at `onset` s: a `fraction` of the particles is paired into dimers at
   * centre distance `contact` µm (the partner is placed beside its leader as a newly arriving
   * track); dimers diffuse at 0.718·D.
   */
  injected?: { onset: number; fraction: number; contact: number };
  /**
   * Natural sticking from `onset` s: free particles within `contact` µm stick with `probability`
   * per frame. With `unresolved`, the pair is then one centroid (the follower's track ends, the
   * leader's centroid moves to the midpoint with the summed intensity).
   */
  sticking?: { onset: number; probability: number; contact: number; unresolved?: boolean };
}

function logNormal(random: Random, mean: number, cv: number): number {
  if (cv === 0) return mean;
  const s2 = Math.log(1 + cv * cv);
  return mean * Math.exp(-0.5 * s2 + Math.sqrt(s2) * random.normal());
}

/** The context the pipeline would hand over (D known, blur 0). */
export function makeContext(diffusion: number, sigma: number, radius?: number): DetectorContext {
  return {
    diffusion, diffusionSe: diffusion * 0.01, localizationError: sigma, blur: 0, longestLag: 1,
    reportedTemperature: undefined, expectedDiffusion: undefined, expectedDiffusionSd: undefined, radius,
  };
}

/** Seeded stream of FrameSteps; `next()` returns the next delivered frame. */
export class ClumpingSteps {
  readonly steps: FrameSteps;
  /** True number of dimers now, and the true fraction of objects that are dimers. */
  dimers = 0;
  /** Slot at which the first dimer formed (−1: none yet). */
  firstDimerSlot = -1;
  private readonly o: ClumpingStepsOptions;
  private readonly random: Random;
  private readonly n: number;
  private readonly px: Float64Array;
  private readonly py: Float64Array;
  private readonly pd: Float64Array;
  private readonly pi: Float64Array;
  private readonly id: Uint32Array;
  private readonly length: Uint32Array;
  private readonly inView: Uint8Array;
  private readonly obsX: Float64Array;
  private readonly obsY: Float64Array;
  private readonly lastSeenSlot: Float64Array;
  /** Partner index (−1 none); leader < 0 means free; follower keeps an offset from the leader. */
  private readonly partner: Int32Array;
  private readonly isFollower: Uint8Array;
  private readonly offX: Float64Array;
  private readonly offY: Float64Array;
  private nextId = 1;
  private slot = -1;
  private lastDelivered = -10;
  private injectedDone = false;
  private readonly lo: number;
  private readonly hi: number;

  constructor(options: ClumpingStepsOptions) {
    this.o = options;
    this.random = new Random(options.seed);
    const n = options.particles;
    this.n = n;
    this.px = new Float64Array(n); this.py = new Float64Array(n); this.pd = new Float64Array(n); this.pi = new Float64Array(n);
    this.id = new Uint32Array(n); this.length = new Uint32Array(n); this.inView = new Uint8Array(n);
    this.obsX = new Float64Array(n); this.obsY = new Float64Array(n); this.lastSeenSlot = new Float64Array(n).fill(-10);
    this.partner = new Int32Array(n).fill(-1); this.isFollower = new Uint8Array(n);
    this.offX = new Float64Array(n); this.offY = new Float64Array(n);
    this.lo = (options.box - options.field) / 2;
    this.hi = this.lo + options.field;
    const hard = options.hardCore ?? 0;
    for (let i = 0; i < n; i++) {
      // random sequential placement (respecting the hard core)
      for (let attempt = 0; attempt < 10000; attempt++) {
        this.px[i] = this.random.uniform() * options.box;
        this.py[i] = this.random.uniform() * options.box;
        if (hard === 0 || this.clearOf(i, this.px[i], this.py[i], hard)) break;
      }
      this.pd[i] = logNormal(this.random, options.diffusion, options.diffusionCv ?? 0);
      this.pi[i] = logNormal(this.random, 1000, 0.2);
    }
    this.steps = {
      t: 0, frameIndex: 0, slot: 0, slotGap: 1, frameInterval: options.frameInterval, exposure: 0, count: 0,
      trackId: new Uint32Array(n), trackRow: new Int32Array(n), x: new Float64Array(n), y: new Float64Array(n),
      intensity: options.intensityNoise === null ? undefined : new Float64Array(n),
      trackLength: new Uint32Array(n), stepCount: 0, stepParticle: new Int32Array(n),
      dx: new Float64Array(n), dy: new Float64Array(n), endedCount: 0, endedTrackId: new Uint32Array(2 * n),
      endedLength: new Uint32Array(2 * n), endedX: new Float64Array(2 * n), endedY: new Float64Array(2 * n),
      field: { xMin: this.lo, xMax: this.hi, yMin: this.lo, yMax: this.hi },
    };
    const burnIn = options.burnIn ?? 0;
    for (let k = 0; k < burnIn; k++) this.advance();
    this.slot = -1;
  }

  /** Track-id pairs [smaller, larger] of the dimers whose two members are both in view as separate tracks. */
  dimerPairIds(): [number, number][] {
    const out: [number, number][] = [];
    for (let i = 0; i < this.n; i++) {
      const f = this.partner[i];
      if (f < 0 || this.isFollower[i] || !this.inView[i] || !this.inView[f]) continue;
      out.push([Math.min(this.id[i], this.id[f]), Math.max(this.id[i], this.id[f])]);
    }
    return out;
  }

  /** Track ids of the in-view dimer leaders (with `unresolved`, the brightened centroids). */
  dimerLeaderIds(): number[] {
    const out: number[] = [];
    for (let i = 0; i < this.n; i++) if (this.partner[i] >= 0 && !this.isFollower[i] && this.inView[i]) out.push(this.id[i]);
    return out;
  }

  /** Fraction of objects in the box that are dimers. */
  get dimerFraction(): number {
    return this.dimers / (this.n - this.dimers);
  }

  private periodicDelta(a: number): number {
    const L = this.o.box;
    return a - L * Math.round(a / L);
  }

  private clearOf(i: number, x: number, y: number, d: number): boolean {
    const d2 = d * d;
    for (let j = 0; j < this.n; j++) {
      if (j === i || j === this.partner[i]) continue;
      const ddx = this.periodicDelta(this.px[j] - x);
      const ddy = this.periodicDelta(this.py[j] - y);
      if (ddx * ddx + ddy * ddy < d2) return false;
    }
    return true;
  }

  private wrap(v: number): number {
    const L = this.o.box;
    const u = v % L;
    return u < 0 ? u + L : u;
  }

  private bond(leader: number, follower: number, contact: number, place: boolean): void {
    this.partner[leader] = follower;
    this.partner[follower] = leader;
    this.isFollower[follower] = 1;
    let ox = this.periodicDelta(this.px[follower] - this.px[leader]);
    let oy = this.periodicDelta(this.py[follower] - this.py[leader]);
    if (place) {
      const angle = 2 * Math.PI * this.random.uniform();
      ox = contact * Math.cos(angle);
      oy = contact * Math.sin(angle);
      // the partner arrives as a new track beside its leader
      this.inView[follower] = 0;
    }
    this.offX[follower] = ox;
    this.offY[follower] = oy;
    this.pd[leader] = (DIMER_DIFFUSION_RATIO * (this.pd[leader] + this.pd[follower])) / 2;
    this.dimers++;
    if (this.firstDimerSlot < 0) this.firstDimerSlot = this.slot;
  }

  /** Advance one slot; returns the steps of the next delivered frame (skipping dropped slots). */
  next(): FrameSteps {
    for (;;) {
      this.advance();
      if ((this.o.dropProbability ?? 0) > 0 && this.random.uniform() < (this.o.dropProbability ?? 0)) continue;
      this.emit();
      return this.steps;
    }
  }

  private advance(): void {
    this.slot++;
    const o = this.o;
    const t = this.slot * o.frameInterval;
    const n = this.n;
    if (o.injected && !this.injectedDone && t >= o.injected.onset) {
      this.injectedDone = true;
      const pairs = Math.round((o.injected.fraction * n) / 2);
      let made = 0;
      for (let i = 0; i + 1 < n && made < pairs; i += 2) {
        if (this.partner[i] >= 0 || this.partner[i + 1] >= 0) continue;
        this.bond(i, i + 1, o.injected.contact, true);
        made++;
      }
    }
    // Brownian moves of free particles and dimer leaders; followers ride along.
    const hard = o.hardCore ?? 0;
    for (let i = 0; i < n; i++) {
      if (this.isFollower[i]) continue;
      const s = Math.sqrt(2 * this.pd[i] * o.frameInterval);
      const nx = this.wrap(this.px[i] + s * this.random.normal());
      const ny = this.wrap(this.py[i] + s * this.random.normal());
      if (hard > 0 && !this.clearOf(i, nx, ny, hard)) continue; // rejected move (hard-core Monte Carlo)
      this.px[i] = nx;
      this.py[i] = ny;
      const f = this.partner[i];
      if (f >= 0) {
        this.px[f] = this.wrap(nx + this.offX[f]);
        this.py[f] = this.wrap(ny + this.offY[f]);
      }
    }
    if (o.sticking && t >= o.sticking.onset) {
      const c2 = o.sticking.contact * o.sticking.contact;
      for (let i = 0; i < n; i++) {
        if (this.partner[i] >= 0) continue;
        for (let j = i + 1; j < n; j++) {
          if (this.partner[j] >= 0 || this.partner[i] >= 0) continue;
          const ddx = this.periodicDelta(this.px[j] - this.px[i]);
          const ddy = this.periodicDelta(this.py[j] - this.py[i]);
          if (ddx * ddx + ddy * ddy > c2) continue;
          if (this.random.uniform() >= o.sticking.probability) continue;
          this.bond(i, j, o.sticking.contact, false);
        }
      }
    }
  }

  private emit(): void {
    const o = this.o;
    const st = this.steps;
    const t = this.slot * o.frameInterval;
    const sigma = typeof o.sigma === 'function' ? o.sigma(t) : (o.sigma ?? 0.02);
    const noise = o.intensityNoise === null ? 0 : (o.intensityNoise ?? 0.05);
    const unresolved = o.sticking?.unresolved === true;
    st.slotGap = this.slot - this.lastDelivered;
    this.lastDelivered = this.slot;
    st.t = t; st.slot = this.slot; st.frameIndex++;
    let count = 0, stepCount = 0, ended = 0;
    for (let i = 0; i < this.n; i++) {
      const hidden = unresolved && this.isFollower[i] === 1;
      let x = this.px[i], y = this.py[i];
      let intensity = this.pi[i];
      const f = this.partner[i];
      if (unresolved && f >= 0 && !this.isFollower[i]) {
        x = this.wrap(x + this.offX[f] / 2);
        y = this.wrap(y + this.offY[f] / 2);
        intensity += this.pi[f];
      }
      const visible = !hidden && x >= this.lo && x <= this.hi && y >= this.lo && y <= this.hi;
      if (!visible) {
        if (this.inView[i]) {
          st.endedTrackId[ended] = this.id[i]; st.endedLength[ended] = this.length[i];
          st.endedX[ended] = this.obsX[i]; st.endedY[ended] = this.obsY[i];
          ended++;
          this.inView[i] = 0;
        }
        continue;
      }
      if (!this.inView[i]) {
        this.inView[i] = 1;
        this.id[i] = this.nextId++;
        this.length[i] = 0;
        this.lastSeenSlot[i] = -10;
      }
      const ox = x + sigma * this.random.normal();
      const oy = y + sigma * this.random.normal();
      st.trackId[count] = this.id[i];
      st.trackRow[count] = i;
      st.x[count] = ox; st.y[count] = oy;
      if (st.intensity) st.intensity[count] = intensity * (noise > 0 ? Math.exp(noise * this.random.normal()) : 1);
      this.length[i]++;
      st.trackLength[count] = this.length[i];
      if (this.lastSeenSlot[i] === this.slot - 1 && st.slotGap === 1) {
        st.stepParticle[stepCount] = count;
        st.dx[stepCount] = ox - this.obsX[i];
        st.dy[stepCount] = oy - this.obsY[i];
        stepCount++;
      }
      this.obsX[i] = ox; this.obsY[i] = oy;
      this.lastSeenSlot[i] = this.slot;
      count++;
    }
    st.count = count; st.stepCount = stepCount; st.endedCount = ended;
  }
}
