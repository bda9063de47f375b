import type { Condition, AlertLevel } from '../../alerts/condition.js';
import type { Detector } from '../detector.js';
import type { DetectorContext } from '../detectorContext.js';
import type { FrameSteps } from '../frameSteps.js';
import { normalQuantile, normalUpperTail } from '../../stats/quantiles.js';
import { AffineFlowTest, type AffineFlowResult } from './affineFlowTest.js';
import { grownArray } from '../../stats/grownArray.js';
import { medianInPlace } from './medianInPlace.js';
import { PageCusum } from './pageCusum.js';
import { siegmundArl } from './siegmundArl.js';
import { siegmundThreshold } from './siegmundThreshold.js';

/** Options of {@link DriftDetector}; every field has a default. */
export interface DriftOptions {
  /** Share of the false-warn budget, warns per hour of data (default 0.25). 90 % goes to the CUSUM, 10 % to the jump check. */
  falseWarnsPerHour: number;
  /** Smallest drift worth catching, µm/s; default: the speed that biases the MSD at the longest lag by `tolerance`, √(4D·tol/τ_max). */
  minimumVelocity: number | undefined;
  /** Relative MSD bias at the longest lag that matters, |v|²τ/(4D) (default 0.05). */
  tolerance: number;
  /** A drift whose bias exceeds stopFactor × tolerance is `stop` (default 5). */
  stopFactor: number;
  /** Field displacement over a drift episode that matters, µm (default 2). */
  maxDisplacement: number;
  /** One-frame jump threshold on |z| (default: max(5, the budget-derived two-sided normal quantile)). */
  jumpThreshold: number | undefined;
  /** Length of the non-overlapping windows for the recent velocity and the flow diagnosis, s (default 10). */
  windowSeconds: number;
  /** Frames with steps before the CUSUM is armed (default 100). */
  warmupFrames: number;
  /** Memory of the pooled per-particle step variance, frames (EWMA; default 2000). */
  varianceMemoryFrames: number;
  /** Per-window significance for the flow diagnosis (affine F-test, mean-vs-median test) (default 1e-3). */
  flowAlpha: number;
  /** Track ids of immobile fiducial beads: when given, drift is measured from them alone. */
  fiducialIds: readonly number[] | undefined;
  /** Most points kept in the decimated cumulative path (default 2000). */
  pathPoints: number;
  /**
   * Most looks per second for the median step and the affine flow test, Hz (default 200). Above
   * 2·flowLookHz − 1 frames/s they are taken on the frames of slot 0, k, 2k, … (k = ⌊rate/flowLookHz⌋)
   * from each track's displacement since the previous such frame, as a camera sampling every k·Δt
   * would see it; the robust velocity and the mean-versus-median test use the same displacements.
   * The one-frame mean step, its CUSUM and the jump check still see every frame. Not applied with
   * `fiducialIds` (a median of a few beads).
   */
  flowLookHz: number;
}

/** Velocity with per-axis 95 % CIs, µm/s. */
export interface VelocityEstimate {
  value: [number, number];
  ci95: [[number, number], [number, number]];
}

/** What {@link DriftDetector.summary} returns. */
export interface DriftSummary {
  /** Whole-run common-mode velocity (net displacement / duration), µm/s, or null before any step. */
  velocity: VelocityEstimate | null;
  /** Velocity over the last complete window, µm/s. */
  recentVelocity: VelocityEstimate | null;
  /** Whole-run velocity from the per-frame coordinate-wise median step, µm/s. */
  robustVelocity: VelocityEstimate | null;
  /** Cumulative common-mode displacement X(t), Y(t), µm, decimated to ≤ pathPoints points. */
  path: { t: number[]; x: number[]; y: number[] };
  /** Flow diagnosis of the last complete window. */
  flow: {
    fTest: { pValue: number; f: number; df2: number } | null;
    rotation: number | null;
    divergence: number | null;
    shear: number | null;
    pattern: string | null;
    subpopulation: { pValue: number; meanMinusMedian: [number, number] } | null;
  };
  /** One-frame jumps found, µm. */
  jumps: { t: number; dx: number; dy: number }[];
  /** How the common mode was measured. */
  method: string;
  /** CUSUM design and signal counts (null until armed). */
  cusum: { k: number; h: number; arl0PerChart: number; minimumVelocity: number; signals: number } | null;
  /** Frames with steps used; frames skipped for too few steps. */
  frames: number;
  skippedFrames: number;
  /** k: the median step and the flow test are taken on one frame in k (1 up to 2·flowLookHz − 1 frames/s). */
  flowLookFrames: number;
}

const DEFAULTS: DriftOptions = {
  falseWarnsPerHour: 0.25,
  minimumVelocity: undefined,
  tolerance: 0.05,
  stopFactor: 5,
  maxDisplacement: 2,
  jumpThreshold: undefined,
  windowSeconds: 10,
  warmupFrames: 100,
  varianceMemoryFrames: 2000,
  flowAlpha: 1e-3,
  fiducialIds: undefined,
  pathPoints: 2000,
  flowLookHz: 200,
};

/** Track rows above this are left out of the looks at k > 1 (the pipeline's rows stay far below). */
const MAX_LOOK_ROWS = 1 << 20;
const MEDIAN_VARIANCE_FACTOR = Math.PI / 2; // Var(median)/Var(mean) for normal steps, large N
const Z975 = 1.959963984540054;
const CHART_NAMES = ['x+', 'x-', 'y+', 'y-'] as const;

/** Running sums of increments, from which a velocity and its CI follow. */
class IncrementSums {
  sumX = 0;
  sumY = 0;
  varX = 0;
  varY = 0;
  frames = 0;
  /**
   * The looks (every frame at k = 1): Σ of their median and mean displacements and of the mean's
   * variance per axis, µm and µm², and the frames they span (Σ k).
   */
  medX = 0;
  medY = 0;
  lookSumX = 0;
  lookSumY = 0;
  lookVarX = 0;
  lookVarY = 0;
  lookSpan = 0;
  reset(): void {
    this.sumX = this.sumY = this.varX = this.varY = this.medX = this.medY = 0;
    this.lookSumX = this.lookSumY = this.lookVarX = this.lookVarY = 0;
    this.frames = 0;
    this.lookSpan = 0;
  }
  /** One frame's mean step and the variance of that mean per axis. */
  add(mx: number, my: number, vx: number, vy: number): void {
    this.sumX += mx;
    this.sumY += my;
    this.varX += vx;
    this.varY += vy;
    this.frames++;
  }
  /** One look: the mean displacement over `span` frames, its variance, and the median displacement. */
  addLook(mx: number, my: number, vx: number, vy: number, medX: number, medY: number, span: number): void {
    this.medX += medX;
    this.medY += medY;
    this.lookSumX += mx;
    this.lookSumY += my;
    this.lookVarX += vx;
    this.lookVarY += vy;
    this.lookSpan += span;
  }
  copyFrom(other: IncrementSums): void {
    this.sumX = other.sumX; this.sumY = other.sumY;
    this.varX = other.varX; this.varY = other.varY;
    this.medX = other.medX; this.medY = other.medY;
    this.lookSumX = other.lookSumX; this.lookSumY = other.lookSumY;
    this.lookVarX = other.lookVarX; this.lookVarY = other.lookVarY;
    this.frames = other.frames;
    this.lookSpan = other.lookSpan;
  }
  /**
   * v̂ = Σm/(WΔt), SE = √(Σ s_t²/N_t)/(WΔt) (detectors.md §1); robust: Σmed/(span·Δt) over the
   * looks, with π/2 the variance (the mean's estimate when there was no look).
   */
  velocity(frameInterval: number, robust: boolean): VelocityEstimate | null {
    if (this.frames === 0) return null;
    const useMedian = robust && this.lookSpan > 0;
    const duration = (useMedian ? this.lookSpan : this.frames) * frameInterval;
    const factor = useMedian ? Math.sqrt(MEDIAN_VARIANCE_FACTOR) : 1;
    const vx = (useMedian ? this.medX : this.sumX) / duration;
    const vy = (useMedian ? this.medY : this.sumY) / duration;
    const sex = (factor * Math.sqrt(useMedian ? this.lookVarX : this.varX)) / duration;
    const sey = (factor * Math.sqrt(useMedian ? this.lookVarY : this.varY)) / duration;
    return { value: [vx, vy], ci95: [[vx - Z975 * sex, vx + Z975 * sex], [vy - Z975 * sey, vy + Z975 * sey]] };
  }
}

/**
 * Stage-drift detector (kind `drift`), detectors.md §1.
 *
 * Per frame: the common-mode step m(t) (mean of the one-frame steps, or of the fiducial beads'
 * steps when `fiducialIds` is set) and its coordinate-wise median; the cumulative path
 * X(t) = Σ m; velocities with CIs from the increments (never from a line fit of X(t)). Alarms:
 * four one-sided Page CUSUMs (Page 1954) on z_t = m/(ŝ/√N_t), k = δ* / 2, h from Siegmund's
 * approximation for ARL0 = 4 × (frames per hour)/(0.9 × budget) per chart; a one-frame Shewhart
 * check on |z_t| for stage bumps. ŝ² is the pooled per-particle step variance of past frames
 * (an EWMA of the per-frame s_t²), so z_t is close to normal even at small N_t (a per-frame
 * s_t would give t-tails with N_t − 1 degrees of freedom and break the jump check's false-alarm
 * rate); it still needs neither D nor σ. Over non-overlapping windows: the affine flow F-test
 * and a mean-versus-median test, so that rotation, shear, convection or a moving
 * subpopulation is named as such and not called stage drift.
 *
 * Severity (detectors.md §0 rule 2): a significant drift is `info`; `warn` when the bias of the
 * 2-D MSD at the longest lag, |v|²τ/(4D), exceeds `tolerance` or the episode moved the field by
 * more than `maxDisplacement`; `stop` beyond `stopFactor` × tolerance. Both are judged on the lower
 * 95 % bound of the speed from the frames after the first signal (≥ 10 of them), which is free of
 * the selection bias of the excursion that made the chart signal.
 *
 * Cost: O(N_t) per frame (one quickselect per axis), O(1) memory apart from the bounded path.
 *
 * @example
 * const drift = new DriftDetector({ windowSeconds: 5 });
 * const conditions = drift.push(frameSteps, context); // → [] while nothing is wrong
 * drift.summary().velocity;                           // → { value: [0.002, -0.001], ci95: [...] }
 */
export class DriftDetector implements Detector<DriftSummary> {
  readonly name = 'drift';
  private readonly options: DriftOptions;
  private readonly fiducials: Set<number> | undefined;
  // Scratch buffers (grown on demand, never shrunk).
  private bufDx = new Float64Array(64);
  private bufDy = new Float64Array(64);
  private bufX0 = new Float64Array(64);
  private bufY0 = new Float64Array(64);
  private bufMed = new Float64Array(64);
  private frameInterval = 0;
  // Pooled per-particle step variance per axis (EWMA after warm-up), µm².
  private poolX = 0;
  private poolY = 0;
  private poolFrames = 0;
  private meanCount = 0;
  // Increment sums: whole run, current window, last complete window, per chart since last zero, episode.
  private readonly run = new IncrementSums();
  private readonly window = new IncrementSums();
  private readonly lastWindow = new IncrementSums();
  private readonly sinceZero = [new IncrementSums(), new IncrementSums(), new IncrementSums(), new IncrementSums()];
  private readonly episode = new IncrementSums();
  // Frames after the first signal only: free of the selection bias of the since-zero sums.
  private readonly post = new IncrementSums();
  private readonly flowTest = new AffineFlowTest();
  private windowFrames = 0;
  private lastFlow: AffineFlowResult | undefined;
  private lastSubpopulation: { pValue: number; meanMinusMedian: [number, number] } | undefined;
  private flowLevel: AlertLevel | null = null;
  // CUSUM state.
  private charts: PageCusum[] | undefined;
  private minimumVelocity = 0;
  private arl0PerChart = 0;
  private holdFrames = 0;
  private framesSinceSignal = 0;
  private driftLevel: AlertLevel | null = null;
  private jumpThreshold = 5;
  private jumpOpen = false;
  private readonly jumps: { t: number; dx: number; dy: number }[] = [];
  // Path, decimated by doubling the stride whenever it fills.
  private pathX = 0;
  private pathY = 0;
  private pathStride = 1;
  private pathCounter = 0;
  private readonly pathT: number[] = [];
  private readonly pathXs: number[] = [];
  private readonly pathYs: number[] = [];
  private frames = 0;
  private skipped = 0;
  // k, frames per median and flow-test look; at k > 1 each row's position at its last look
  // (slot, track id, x, y; by FrameSteps.trackRow), and the look's displacements and start positions.
  private lookFrames = 1;
  private lookSlot: Float64Array = new Float64Array(0);
  private lookId: Float64Array = new Float64Array(0);
  private lookX: Float64Array = new Float64Array(0);
  private lookY: Float64Array = new Float64Array(0);
  private lookDx = new Float64Array(64);
  private lookDy = new Float64Array(64);
  private lookX0 = new Float64Array(64);
  private lookY0 = new Float64Array(64);

  /** @throws RangeError naming the option when an option is out of range */
  constructor(options: Partial<DriftOptions> = {}) {
    const o: DriftOptions = { ...DEFAULTS, ...options };
    positive(o.falseWarnsPerHour, 'falseWarnsPerHour');
    if (o.minimumVelocity !== undefined) positive(o.minimumVelocity, 'minimumVelocity');
    positive(o.tolerance, 'tolerance');
    if (!(o.stopFactor > 1) || !Number.isFinite(o.stopFactor)) throw new RangeError('drift requires stopFactor > 1');
    positive(o.maxDisplacement, 'maxDisplacement');
    if (o.jumpThreshold !== undefined) positive(o.jumpThreshold, 'jumpThreshold');
    positive(o.windowSeconds, 'windowSeconds');
    if (!Number.isInteger(o.warmupFrames) || o.warmupFrames < 2) throw new RangeError('drift requires warmupFrames to be an integer >= 2');
    if (!(o.varianceMemoryFrames >= 10) || !Number.isFinite(o.varianceMemoryFrames)) throw new RangeError('drift requires varianceMemoryFrames >= 10');
    if (!(o.flowAlpha > 0 && o.flowAlpha < 1)) throw new RangeError('drift requires flowAlpha in (0, 1)');
    if (!Number.isInteger(o.pathPoints) || o.pathPoints < 10) throw new RangeError('drift requires pathPoints to be an integer >= 10');
    if (o.fiducialIds !== undefined && (!Array.isArray(o.fiducialIds) || o.fiducialIds.some((id) => !Number.isInteger(id) || id < 0))) {
      throw new RangeError('drift requires fiducialIds to be non-negative integer track ids');
    }
    this.options = o;
    this.fiducials = o.fiducialIds && o.fiducialIds.length > 0 ? new Set(o.fiducialIds) : undefined;
    positive(o.flowLookHz, 'flowLookHz');
  }

  /** Feed one frame; returns the conditions that changed on it. O(N_t). */
  push(steps: FrameSteps, context: DetectorContext): readonly Condition[] {
    const out: Condition[] = [];
    if (!(steps.frameInterval > 0)) return out;
    if (this.frameInterval === 0) this.configureTiming(steps.frameInterval);
    // Close a jump condition opened on the previous frame (it lasts one frame).
    if (this.jumpOpen) {
      this.jumpOpen = false;
      out.push(this.clearCondition('drift:jump', steps.t, 'stage jump over', 'jump |z|', this.jumpThreshold));
    }
    const k = this.lookFrames;
    // At k > 1 this frame's steps serve only through their mean and spread (the look takes its
    // own displacements): when the pipeline's sums cover every step (all finite, no fiducial
    // list), their count is all that is needed, and the steps are not copied.
    const whole = steps.sums;
    const n =
      k > 1 && !this.fiducials && whole !== undefined && whole.steps === steps.stepCount && Number.isFinite(whole.squares)
        ? steps.stepCount
        : this.gather(steps, k === 1);
    // at k > 1, on slots 0, k, 2k, …: the displacements since the previous look (kept even on a
    // frame with too few one-frame steps, so the next look has its start positions)
    const lookSlot = k > 1 && steps.slot % k === 0;
    const lookCount = lookSlot ? this.lookDisplacements(steps) : 0;
    if (n < 2) {
      this.skipped++;
      return out;
    }
    this.frames++;
    const dx = this.bufDx, dy = this.bufDy;
    let mx = 0, my = 0;
    let ssx = 0, ssy = 0;
    const sums = steps.sums;
    if (sums && n === sums.steps) {
      // every step was gathered (finite, no fiducial list): the pipeline's sums are these
      mx = sums.sumX / n;
      my = sums.sumY / n;
      ssx = sums.residualSquaresX;
      ssy = sums.residualSquaresY;
    } else {
      for (let i = 0; i < n; i++) { mx += dx[i]; my += dy[i]; }
      mx /= n; my /= n;
      for (let i = 0; i < n; i++) {
        ssx += (dx[i] - mx) * (dx[i] - mx);
        ssy += (dy[i] - my) * (dy[i] - my);
      }
    }
    const s2x = ssx / (n - 1);
    const s2y = ssy / (n - 1);
    const vx = s2x / n, vy = s2y / n;
    // The look: this frame's steps at k = 1; at k > 1, on slots 0, k, 2k, …, the displacements
    // since the previous look. Its mean, the mean's variance and the coordinate-wise median (looked
    // for first within 4 standard errors of the mean; exact either way).
    let looked = false;
    let lookN = n, lmx = mx, lmy = my, lvx = vx, lvy = vy;
    let lookDx = dx, lookDy = dy, lookX0 = this.bufX0, lookY0 = this.bufY0;
    if (k === 1) {
      looked = true;
    } else if (lookSlot) {
      lookN = lookCount;
      if (lookN >= 2) {
        looked = true;
        lookDx = this.lookDx; lookDy = this.lookDy; lookX0 = this.lookX0; lookY0 = this.lookY0;
        lmx = 0; lmy = 0;
        for (let i = 0; i < lookN; i++) { lmx += lookDx[i]; lmy += lookDy[i]; }
        lmx /= lookN; lmy /= lookN;
        let sx = 0, sy = 0;
        for (let i = 0; i < lookN; i++) {
          sx += (lookDx[i] - lmx) * (lookDx[i] - lmx);
          sy += (lookDy[i] - lmy) * (lookDy[i] - lmy);
        }
        lvx = sx / (lookN - 1) / lookN;
        lvy = sy / (lookN - 1) / lookN;
      }
    }
    let medX = 0, medY = 0;
    if (looked) {
      this.bufMed.set(lookDx.subarray(0, lookN));
      medX = medianInPlace(this.bufMed, lookN, lmx, 4 * Math.sqrt(lvx));
      this.bufMed.set(lookDy.subarray(0, lookN));
      medY = medianInPlace(this.bufMed, lookN, lmy, 4 * Math.sqrt(lvy));
    }

    // Path and whole-run sums (jumps included: they are real common-mode motion).
    this.pathX += mx;
    this.pathY += my;
    this.recordPath(steps.t);
    this.run.add(mx, my, vx, vy);
    if (looked) this.run.addLook(lmx, lmy, lvx, lvy, medX, medY, k);

    // Standardise against the pooled variance of past frames, then update the pool.
    const pooled = this.poolFrames > 0;
    const zx = pooled ? mx / Math.sqrt(this.poolX / n) : 0;
    const zy = pooled ? my / Math.sqrt(this.poolY / n) : 0;
    this.updatePool(s2x, s2y, n);

    const jump = pooled && this.poolFrames > this.options.warmupFrames && Math.max(Math.abs(zx), Math.abs(zy)) > this.jumpThreshold;
    if (jump) {
      this.jumps.push({ t: steps.t, dx: mx, dy: my });
      out.push(this.jumpCondition(steps.t, mx, my, Math.max(Math.abs(zx), Math.abs(zy)), context));
      this.jumpOpen = true;
    }

    // Window: recent velocity and flow diagnosis on non-overlapping windows.
    this.window.add(mx, my, vx, vy);
    if (looked) {
      this.window.addLook(lmx, lmy, lvx, lvy, medX, medY, k);
      if (!this.fiducials) this.flowTest.addFrame(lookN, lookX0, lookY0, lookDx, lookDy);
    }
    this.windowFrames++;
    if (this.windowFrames >= Math.max(10, Math.round(this.options.windowSeconds / this.frameInterval))) {
      const flowCondition = this.closeWindow(steps.t);
      if (flowCondition) out.push(flowCondition);
    }

    // CUSUM (not fed with jump frames, which the Shewhart check reports).
    if (!this.charts && this.poolFrames >= this.options.warmupFrames) this.arm(context);
    if (this.charts && !jump) {
      let signalled = -1;
      const wasActive = this.driftLevel !== null;
      const zs = [zx, -zx, zy, -zy];
      for (let c = 0; c < 4; c++) {
        const chart = this.charts[c];
        // Sums since the chart last left zero: the post-change estimate at a signal.
        if (chart.value === 0) this.sinceZero[c].reset();
        const fired = chart.push(zs[c]);
        this.sinceZero[c].add(mx, my, vx, vy);
        if (looked) this.sinceZero[c].addLook(lmx, lmy, lvx, lvy, medX, medY, k);
        if (fired && signalled < 0) signalled = c;
      }
      if (wasActive) {
        this.episode.add(mx, my, vx, vy);
        this.post.add(mx, my, vx, vy);
        if (looked) {
          this.episode.addLook(lmx, lmy, lvx, lvy, medX, medY, k);
          this.post.addLook(lmx, lmy, lvx, lvy, medX, medY, k);
        }
      } else if (signalled >= 0) {
        this.episode.copyFrom(this.sinceZero[signalled]);
        this.post.reset();
      }
      if (signalled >= 0) this.framesSinceSignal = 0;
      else this.framesSinceSignal++;
      const condition = this.driftCondition(steps.t, context, signalled);
      if (condition) out.push(condition);
    }
    return out;
  }

  /** The report fragment: velocities, path, flow diagnosis, jumps, method. O(path points). */
  summary(): DriftSummary {
    const dt = this.frameInterval || 1;
    const flow = this.lastFlow;
    return {
      velocity: this.run.velocity(dt, false),
      recentVelocity: this.lastWindow.velocity(dt, false),
      robustVelocity: this.run.velocity(dt, true),
      path: { t: this.pathT.slice(), x: this.pathXs.slice(), y: this.pathYs.slice() },
      flow: {
        fTest: flow ? { pValue: flow.pValue, f: flow.f, df2: flow.df2 } : null,
        rotation: flow ? flow.rotation : null,
        divergence: flow ? flow.divergence : null,
        shear: flow ? flow.shear : null,
        pattern: flow && flow.pValue < this.options.flowAlpha ? flow.pattern : null,
        subpopulation: this.lastSubpopulation ?? null,
      },
      jumps: this.jumps.slice(),
      method: this.fiducials
        ? `mean one-frame step of fiducial tracks ${[...this.fiducials].join(', ')}; CUSUM and jump check on it`
        : 'mean one-frame step over all linked particles (self-calibrating SE); median step as robust check; affine F-test and mean-vs-median test for flow',
      cusum: this.charts
        ? {
            k: this.charts[0].k,
            h: this.charts[0].h,
            arl0PerChart: this.arl0PerChart,
            minimumVelocity: this.minimumVelocity,
            signals: this.charts.reduce((sum, chart) => sum + chart.signals, 0),
          }
        : null,
      frames: this.frames,
      skippedFrames: this.skipped,
      flowLookFrames: this.lookFrames,
    };
  }

  // ---- internals ----

  private configureTiming(frameInterval: number): void {
    this.frameInterval = frameInterval;
    const framesPerHour = 3600 / frameInterval;
    const jumpAlpha = (0.1 * this.options.falseWarnsPerHour) / framesPerHour; // per frame, both axes, both signs
    this.jumpThreshold = this.options.jumpThreshold ?? Math.max(5, normalQuantile(1 - jumpAlpha / 4));
    // frames per median and flow-test look (1e-9: a rate of exactly k·flowLookHz gives k, not k − 1)
    this.lookFrames = this.fiducials ? 1 : Math.max(1, Math.floor(1 / (frameInterval * this.options.flowLookHz) + 1e-9));
  }

  /**
   * Copy the usable steps (fiducial or all, finite) into the scratch buffers, with their start
   * positions when `withStarts` (for the flow test at k = 1); returns their count.
   */
  private gather(steps: FrameSteps, withStarts: boolean): number {
    const count = steps.stepCount;
    if (this.bufDx.length < count) {
      const size = Math.max(count, 2 * this.bufDx.length);
      this.bufDx = new Float64Array(size);
      this.bufDy = new Float64Array(size);
      this.bufX0 = new Float64Array(size);
      this.bufY0 = new Float64Array(size);
      this.bufMed = new Float64Array(size);
    }
    let n = 0;
    const { dx, dy, x, y, stepParticle, trackId } = steps;
    const bufDx = this.bufDx, bufDy = this.bufDy, bufX0 = this.bufX0, bufY0 = this.bufY0;
    const fiducials = this.fiducials;
    for (let i = 0; i < count; i++) {
      const a = dx[i];
      const b = dy[i];
      if (!Number.isFinite(a) || !Number.isFinite(b)) continue;
      const p = stepParticle[i];
      if (fiducials && !fiducials.has(trackId[p])) continue;
      bufDx[n] = a;
      bufDy[n] = b;
      if (withStarts) {
        // Start position of the step: independent of the step's own noise.
        bufX0[n] = x[p] - a;
        bufY0[n] = y[p] - b;
      }
      n++;
    }
    return n;
  }

  /**
   * At a look (k > 1, slot a multiple of k): each present track's displacement since the previous
   * look, k slots back, for the tracks seen there (same row and id, finite), with its start
   * position; then every present track's position is kept for the next look. Returns the count.
   * O(N_t) per look, nothing on the other frames.
   */
  private lookDisplacements(steps: FrameSteps): number {
    const count = steps.count;
    if (this.lookDx.length < count) {
      const size = Math.max(count, 2 * this.lookDx.length);
      this.lookDx = new Float64Array(size);
      this.lookDy = new Float64Array(size);
      this.lookX0 = new Float64Array(size);
      this.lookY0 = new Float64Array(size);
    }
    // the look's medians are taken in bufMed: up to `count` displacements, which may be more than
    // the frame's one-frame steps that `gather` sized it for (tracks back after a gap)
    if (this.bufMed.length < count) this.bufMed = new Float64Array(Math.max(count, 2 * this.bufMed.length));
    const previous = steps.slot - this.lookFrames;
    const { x, y, trackRow, trackId } = steps;
    let n = 0;
    for (let p = 0; p < count; p++) {
      const row = trackRow[p];
      if (!(row >= 0 && row < MAX_LOOK_ROWS)) continue;
      if (row >= this.lookSlot.length) this.growLookRows(row);
      const px = x[p];
      const py = y[p];
      if (!Number.isFinite(px) || !Number.isFinite(py)) continue;
      const id = trackId[p];
      if (this.lookSlot[row] === previous && this.lookId[row] === id) {
        this.lookDx[n] = px - this.lookX[row];
        this.lookDy[n] = py - this.lookY[row];
        this.lookX0[n] = this.lookX[row];
        this.lookY0[n] = this.lookY[row];
        n++;
      }
      this.lookSlot[row] = steps.slot;
      this.lookId[row] = id;
      this.lookX[row] = px;
      this.lookY[row] = py;
    }
    return n;
  }

  private growLookRows(row: number): void {
    const size = Math.min(MAX_LOOK_ROWS, Math.max(row + 1, 2 * this.lookSlot.length, 1024));
    this.lookSlot = grownArray(this.lookSlot, size, -1);
    this.lookId = grownArray(this.lookId, size, -1);
    this.lookX = grownArray(this.lookX, size);
    this.lookY = grownArray(this.lookY, size);
  }

  private updatePool(s2x: number, s2y: number, n: number): void {
    this.poolFrames++;
    // Plain running mean during warm-up, then an EWMA with the configured memory.
    const weight = Math.max(1 / this.poolFrames, 1 / this.options.varianceMemoryFrames);
    this.poolX += weight * (s2x - this.poolX);
    this.poolY += weight * (s2y - this.poolY);
    this.meanCount += weight * (n - this.meanCount);
  }

  private recordPath(t: number): void {
    this.pathCounter++;
    if (this.pathCounter < this.pathStride) return;
    this.pathCounter = 0;
    this.pathT.push(t);
    this.pathXs.push(this.pathX);
    this.pathYs.push(this.pathY);
    if (this.pathT.length >= this.options.pathPoints) {
      // Keep every other point and double the stride: bounded memory, uniform spacing.
      let j = 0;
      for (let i = 1; i < this.pathT.length; i += 2, j++) {
        this.pathT[j] = this.pathT[i];
        this.pathXs[j] = this.pathXs[i];
        this.pathYs[j] = this.pathYs[i];
      }
      this.pathT.length = this.pathXs.length = this.pathYs.length = j;
      this.pathStride *= 2;
    }
  }

  private arm(context: DetectorContext): void {
    const dt = this.frameInterval;
    const perAxisVariance = 0.5 * (this.poolX + this.poolY); // µm² per step
    const tau = context.longestLag > 0 ? context.longestLag : 10 * dt;
    // D from the pipeline, else from the step variance (over-estimates D when σ is large: a less sensitive chart).
    const diffusion = context.diffusion !== undefined && context.diffusion > 0 ? context.diffusion : perAxisVariance / (2 * dt);
    this.minimumVelocity = this.options.minimumVelocity ?? Math.sqrt((4 * diffusion * this.options.tolerance) / tau);
    const sdMean = Math.sqrt(perAxisVariance / Math.max(2, this.meanCount));
    const delta = (this.minimumVelocity * dt) / sdMean; // per-axis shift, SD of z
    const k = Math.max(0.01, delta / 2);
    const framesPerHour = 3600 / dt;
    this.arl0PerChart = (4 * framesPerHour) / (0.9 * this.options.falseWarnsPerHour);
    const h = siegmundThreshold(k, this.arl0PerChart);
    this.charts = [new PageCusum(k, h), new PageCusum(k, h), new PageCusum(k, h), new PageCusum(k, h)];
    this.holdFrames = Math.ceil(3 * siegmundArl(2 * k, k, h)) + 10;
  }

  private closeWindow(t: number): Condition | undefined {
    this.lastWindow.copyFrom(this.window);
    // the looks' displacements span k frames each
    const flow = this.fiducials ? undefined : this.flowTest.result(this.lookFrames * this.frameInterval);
    // Mean-versus-median test: Var(median − mean) ≈ (π/2 − 1)·Var(mean) for normal steps.
    const w = this.window;
    let sub: { pValue: number; meanMinusMedian: [number, number] } | undefined;
    // Both on the window's looks (every frame at k = 1).
    if (w.lookVarX > 0 && w.lookVarY > 0) {
      const duration = w.lookSpan * this.frameInterval;
      const zx = (w.lookSumX - w.medX) / Math.sqrt((MEDIAN_VARIANCE_FACTOR - 1) * w.lookVarX);
      const zy = (w.lookSumY - w.medY) / Math.sqrt((MEDIAN_VARIANCE_FACTOR - 1) * w.lookVarY);
      const p = Math.min(1, 4 * normalUpperTail(Math.max(Math.abs(zx), Math.abs(zy))));
      sub = { pValue: p, meanMinusMedian: [(w.lookSumX - w.medX) / duration, (w.lookSumY - w.medY) / duration] };
    }
    this.lastFlow = flow;
    this.lastSubpopulation = sub;
    this.window.reset();
    this.flowTest.reset();
    this.windowFrames = 0;
    const alpha = this.options.flowAlpha;
    const flowing = flow !== undefined && flow.pValue < alpha;
    const subpopulation = sub !== undefined && sub.pValue < alpha;
    const level: AlertLevel | null = flowing || subpopulation ? 'info' : null;
    if (level === this.flowLevel) return undefined;
    this.flowLevel = level;
    if (level === null) return this.clearCondition('drift:flow', t, 'no position-dependent flow or moving subpopulation in the last window', 'flow p-value', alpha);
    const parts: string[] = [];
    if (flowing && flow) {
      parts.push(`${describePattern(flow)} (rotation ${fmt(flow.rotation, 4)} rad/s, divergence ${fmt(flow.divergence, 4)} 1/s, shear ${fmt(flow.shear, 4)} 1/s; F-test p = ${flow.pValue.toExponential(1)})`);
    }
    if (subpopulation && sub) {
      parts.push(`part of the particles move together: mean minus median velocity (${fmt(sub.meanMinusMedian[0], 3)}, ${fmt(sub.meanMinusMedian[1], 3)}) µm/s, p = ${sub.pValue.toExponential(1)}`);
    }
    const pValue = Math.min(flowing && flow ? flow.pValue : 1, subpopulation && sub ? sub.pValue : 1);
    return {
      key: 'drift:flow',
      kind: 'drift',
      level,
      t,
      message: `The sample itself is flowing, not only the stage: ${parts.join('; ')}. Likely cause: convection from uneven heating, evaporation or a leaking chamber; seal the chamber and let the temperature settle. The mean drift velocity is then not a stage drift; use the median-step velocity`,
      statistic: { name: 'flow p-value (affine F-test, mean-vs-median test)', value: pValue, threshold: alpha },
      falseAlarm: { pValue: alpha },
      effect: flowing && flow ? { name: 'rotation rate', value: flow.rotation, ci95: null, unit: 'rad/s' } : null,
      detail: {
        affine: flow ? { gradient: flow.gradient, rotation: flow.rotation, divergence: flow.divergence, shear: flow.shear, pattern: flow.pattern, f: flow.f, df2: flow.df2, pValue: flow.pValue } : null,
        subpopulation: sub ?? null,
      },
    };
  }

  private driftCondition(t: number, context: DetectorContext, signalled: number): Condition | undefined {
    const active = this.driftLevel !== null;
    if (!active && signalled < 0) return undefined;
    const charts = this.charts as PageCusum[];
    if (active && signalled < 0 && this.framesSinceSignal > this.holdFrames) {
      this.driftLevel = null;
      this.episode.reset();
      this.post.reset();
      return this.clearCondition('drift:stage', t, 'drift has stopped', 'CUSUM', charts[0].h);
    }
    const dt = this.frameInterval;
    const flowSuspected = this.flowLevel !== null;
    // The message quotes the episode (since the chart last left zero); severity uses only the frames after
    // the first signal, whose estimate is not inflated by the selection of the excursion, and its lower
    // 95 % bound on the speed, so that a harmless drift is not promoted by noise.
    const usePost = this.post.frames >= 10;
    const velocity = (usePost ? this.post : this.episode).velocity(dt, flowSuspected) as VelocityEstimate;
    const [vx, vy] = velocity.value;
    const speed = Math.hypot(vx, vy);
    const tau = context.longestLag > 0 ? context.longestLag : 10 * dt;
    const perAxisVariance = 0.5 * (this.poolX + this.poolY);
    const diffusion = context.diffusion !== undefined && context.diffusion > 0 ? context.diffusion : perAxisVariance / (2 * dt);
    const bias = (speed * speed * tau) / (4 * diffusion);
    const duration = this.episode.frames * dt;
    const seX = (velocity.ci95[0][1] - velocity.ci95[0][0]) / (2 * Z975);
    const seY = (velocity.ci95[1][1] - velocity.ci95[1][0]) / (2 * Z975);
    const seSpeed = speed > 0 ? Math.hypot((vx / speed) * seX, (vy / speed) * seY) : Math.hypot(seX, seY);
    const speedLow = Math.max(0, speed - Z975 * seSpeed);
    const biasLow = (speedLow * speedLow * tau) / (4 * diffusion);
    const displacementLow = speedLow * duration;
    const tol = this.options.tolerance;
    let level: AlertLevel = 'info';
    if (usePost) {
      if (biasLow > this.options.stopFactor * tol) level = 'stop';
      else if (biasLow > tol || displacementLow > this.options.maxDisplacement) level = 'warn';
    }
    // Escalate only within an episode: it clears through the hold period, not by flickering.
    if (rank(level) < rank(this.driftLevel)) level = this.driftLevel as AlertLevel;
    if (level === this.driftLevel) return undefined;
    this.driftLevel = level;
    const chart = charts[signalled >= 0 ? signalled : 0];
    const heading = (Math.atan2(vy, vx) * 180) / Math.PI;
    const source = this.fiducials ? 'fiducial beads' : flowSuspected ? 'median step (flow suspected)' : 'mean step';
    const cause = flowSuspected
      ? 'The sample is also flowing (see the flow alert), so part of this may be convection rather than the stage; seal the chamber and let the temperature settle'
      : 'Likely stage drift or thermal creep of the focus mount: let the stage settle after moving it, check the stage lock and tape down cables';
    const seBias = (2 * speed * seSpeed * tau) / (4 * diffusion);
    return {
      key: 'drift:stage',
      kind: 'drift',
      level,
      t,
      message: `Field moving at ${fmt(speed, 3)} µm/s (x ${fmt(vx, 3)}, y ${fmt(vy, 3)} µm/s; heading ${heading.toFixed(0)}° from +x) over the last ${duration.toFixed(1)} s, from the ${source}; this inflates the MSD at the ${fmt(tau, 3)} s lag by ${(100 * bias).toFixed(1)} % (tolerance ${(100 * tol).toFixed(0)} %). ${cause}; subtract the drift before fitting`,
      statistic: { name: `CUSUM ${CHART_NAMES[signalled >= 0 ? signalled : 0]} (SD units)`, value: chart.lastSignalValue, threshold: chart.h },
      falseAlarm: { arl0Frames: this.arl0PerChart / 4, perHour: (0.9 * this.options.falseWarnsPerHour) },
      effect: { name: 'relative MSD bias at the longest lag', value: bias, ci95: [biasLow, bias + Z975 * seBias], unit: '1' },
      detail: {
        velocity,
        speed,
        episodeSeconds: duration,
        chart: CHART_NAMES[signalled >= 0 ? signalled : 0],
        k: chart.k,
        h: chart.h,
        minimumVelocity: this.minimumVelocity,
        flowSuspected,
      },
    };
  }

  private jumpCondition(t: number, mx: number, my: number, z: number, context: DetectorContext): Condition {
    const size = Math.hypot(mx, my);
    const dt = this.frameInterval;
    const tau = context.longestLag > 0 ? context.longestLag : 10 * dt;
    const perAxisVariance = 0.5 * (this.poolX + this.poolY);
    const diffusion = context.diffusion !== undefined && context.diffusion > 0 ? context.diffusion : perAxisVariance / (2 * dt);
    // A jump matters when its square is more than `tolerance` of the 2-D MSD at the longest lag.
    const matters = size * size > this.options.tolerance * 4 * diffusion * tau;
    const framesPerHour = 3600 / dt;
    const pTwoSided = 2 * normalUpperTail(this.jumpThreshold);
    return {
      key: 'drift:jump',
      kind: 'drift',
      level: matters ? 'warn' : 'info',
      t,
      message: `All particles jumped together by ${fmt(size, 3)} µm (x ${fmt(mx, 3)}, y ${fmt(my, 3)} µm) in one frame, ${z.toFixed(1)} SD; likely the stage or the table was bumped. Avoid touching the rig; the frames around t = ${fmt(t, 4)} s should be split or excluded`,
      statistic: { name: 'jump |z|', value: z, threshold: this.jumpThreshold },
      falseAlarm: { pValue: 2 * pTwoSided, perHour: 2 * pTwoSided * framesPerHour },
      effect: { name: 'jump size', value: size, ci95: null, unit: 'µm' },
      detail: { dx: mx, dy: my },
    };
  }

  private clearCondition(key: string, t: number, message: string, statistic: string, threshold: number): Condition {
    return {
      key,
      kind: 'drift',
      level: null,
      t,
      message: `Cleared: ${message}`,
      statistic: { name: statistic, value: 0, threshold },
      falseAlarm: {},
      effect: null,
    };
  }
}

function rank(level: AlertLevel | null): number {
  return level === 'stop' ? 3 : level === 'warn' ? 2 : level === 'info' ? 1 : 0;
}

function describePattern(flow: AffineFlowResult): string {
  if (flow.pattern === 'rotation') return 'the field is rotating';
  if (flow.pattern === 'shear') return 'there is a shear flow across the field';
  return 'there is a converging or diverging flow (convection)';
}

function positive(value: number, name: string): void {
  if (!(value > 0) || !Number.isFinite(value)) throw new RangeError(`drift requires ${name} > 0`);
}

function fmt(value: number, digits: number): string {
  return Number(value.toPrecision(digits)).toString();
}
