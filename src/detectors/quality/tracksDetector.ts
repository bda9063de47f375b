import type { AlertLevel, Condition } from '../../alerts/condition.js';
import type { Detector } from '../detector.js';
import type { DetectorContext } from '../detectorContext.js';
import type { FrameSteps } from '../frameSteps.js';
import { WindowTrackTally } from './windowTrackTally.js';
import { PageCusum } from '../drift/pageCusum.js';
import { siegmundThreshold } from '../drift/siegmundThreshold.js';
import { siegmundArl } from '../drift/siegmundArl.js';
import { normalQuantile } from '../../stats/quantiles.js';
import { Random } from '../../stats/random.js';
import { minimumTrackSteps } from './cveRelativeVariance.js';

/** Options of {@link TracksDetector}. */
export interface TracksOptions {
  /** Share of the false-warn budget, warns per hour (default 0.05). */
  falseWarnsPerHour: number;
  /** Target relative SE of a per-track D, which sets N_min (default 0.2). */
  trackPrecision: number;
  /** Non-overlapping window for the short-track rule and ξ, s (default 30). */
  windowSeconds: number;
  /** Warn when fewer than this fraction of the ended tracks' steps are in tracks with ≥ N_min steps (default 0.5). */
  minimumLongFraction: number;
  /** Ended tracks needed in a window before the short-track rule decides (default 10). */
  minimumEndedTracks: number;
  /** Ended tracks after which the length baseline cohort is fixed (default 500; about half of them form it). */
  baselineTracks: number;
  /** CUSUM reference value for the log-length chart, SD units (default 0.25). */
  cusumK: number;
  /** Fall of the median track length that matters (default 0.25: 25 % shorter). */
  lengthDropTolerance: number;
  /** Crowding ξ = ρ⟨s²⟩ above which linking is at risk: warn (default 0.01). */
  crowdingWarn: number;
  /** Crowding above which it is noted: info (default 0.003). */
  crowdingInfo: number;
  /** Seed of the tie-breaking generator of the normal scores (default 1). */
  seed: number;
}

/** What {@link TracksDetector.summary} returns. */
export interface TracksSummary {
  /** Minimum steps per track for the per-track precision. */
  minimumSteps: number;
  /** Fraction of steps (of tracks ended in the last window) in tracks with ≥ minimumSteps steps. */
  longFraction: number | null;
  /** Crowding ξ = ρ⟨s²⟩ over the last window, and the greedy confusion bound πξ/(1 + πξ). */
  crowding: number | null;
  confusionBound: number | null;
  /** Ended-track length statistics, positions per track. */
  endedTracks: number;
  medianLength: number | null;
  meanLength: number | null;
  baselineMedianLength: number | null;
  /** Track-length CUSUM design (ARL0 in ended tracks) and its signal count. */
  cusum: { k: number; h: number; arl0Tracks: number; signals: number; baselineCompletions: number } | null;
}

/** Largest reference sample of track lengths kept for the normal scores. */
const REFERENCE_CAP = 20000;

const DEFAULTS: TracksOptions = {
  falseWarnsPerHour: 0.05,
  trackPrecision: 0.2,
  windowSeconds: 30,
  minimumLongFraction: 0.5,
  minimumEndedTracks: 10,
  baselineTracks: 500,
  cusumK: 0.25,
  lengthDropTolerance: 0.25,
  crowdingWarn: 0.01,
  crowdingInfo: 0.003,
  seed: 1,
};

/**
 * Track-quality checks (kind `tracks`), detectors.md §6d and §5:
 * - tracks too short: in each non-overlapping window, the fraction of the steps of the tracks
 *   that ended there that belong to tracks with N ≥ N_min steps; N_min from the CVE variance for
 *   the per-track precision (Vestergaard, Blainey & Flyvbjerg 2014), at ε = x − 2R from the
 *   context (x = 0 while unknown); `warn` below `minimumLongFraction`;
 * - the median track length falling: a lower Page CUSUM on the normal scores of ended-track
 *   lengths against the empirical distribution of the first `baselineTracks` (probability-integral
 *   transform, so no length model is needed); `warn` when the median fell by more
 *   than `lengthDropTolerance`, else `info`;
 * - linking at risk: crowding ξ = ρ⟨s²⟩ (particles per µm² × mean squared 2-D step, µm²) with the
 *   greedy confusion bound πξ/(1 + πξ) (detectors.md §5); `info` above `crowdingInfo`, `warn`
 *   above `crowdingWarn`. ξ is always published in the summary.
 * O(N_t) per frame; O(window ended tracks) memory.
 *
 * @example
 * const tracks = new TracksDetector();
 * tracks.push(frameSteps, context);  // → [] while tracks are long and sparse
 * tracks.summary().crowding;          // → 6.6e-4
 */
export class TracksDetector implements Detector<TracksSummary> {
  readonly name = 'tracks';
  private readonly options: TracksOptions;
  private windowStart = Number.NaN;
  // Steps made in the current window, by track id, and each track's length: the final length for
  // tracks that ended, the length so far for live ones. Counting only ended tracks would bias the
  // long-track fraction short (long tracks have not ended yet).
  // Per track seen stepping in the window: its steps there and its latest length (typed arrays
  // by track row; see WindowTrackTally).
  private readonly windowTracks = new WindowTrackTally();
  private windowEnded = 0;
  private windowCrowdingSum = 0;
  private windowCrowdingFrames = 0;
  private minimumSteps: number;
  private longFraction = Number.NaN;
  private crowding = Number.NaN;
  private readonly levels = new Map<string, AlertLevel | null>();
  private readonly baselineLengths: number[] = [];
  private sortedBaseline: number[] = [];
  private baselineMeanLog = 0;
  private baselineMedian = Number.NaN;
  private arl0Tracks = 0;
  private holdTracks = 0;
  private tracksSinceSignal = 0;
  private signals = 0;
  private firstFrameTime = Number.NaN;
  private completions = 0;
  private cohortCut = Number.NaN;
  private cohortArm = Number.NaN;
  private readonly baselineBirths: number[] = [];
  private readonly random: Random;
  private chart: PageCusum | undefined;
  private sinceZeroLogSum = 0;
  private sinceZeroCount = 0;
  private firstEndTime = Number.NaN;
  private endedTotal = 0;
  private lengthSum = 0;
  private recentLengths: number[] = [];
  private frameInterval = 0;

  /** @throws RangeError naming the option when an option is out of range */
  constructor(options: Partial<TracksOptions> = {}) {
    const o = { ...DEFAULTS, ...options };
    for (const name of ['falseWarnsPerHour', 'trackPrecision', 'windowSeconds', 'cusumK', 'lengthDropTolerance', 'crowdingWarn', 'crowdingInfo'] as const) {
      if (!(o[name] > 0) || !Number.isFinite(o[name])) throw new RangeError(`tracks requires ${name} > 0`);
    }
    if (!(o.minimumLongFraction > 0 && o.minimumLongFraction < 1)) throw new RangeError('tracks requires minimumLongFraction in (0, 1)');
    if (!Number.isInteger(o.minimumEndedTracks) || o.minimumEndedTracks < 1) throw new RangeError('tracks requires minimumEndedTracks to be an integer >= 1');
    if (!Number.isInteger(o.baselineTracks) || o.baselineTracks < 10) throw new RangeError('tracks requires baselineTracks to be an integer >= 10');
    if (!(o.crowdingInfo < o.crowdingWarn)) throw new RangeError('tracks requires crowdingInfo < crowdingWarn');
    if (!Number.isInteger(o.seed)) throw new RangeError('tracks requires seed to be an integer');
    this.options = o;
    this.random = new Random(o.seed);
    this.minimumSteps = minimumTrackSteps(0, o.trackPrecision);
  }

  /** Feed one frame; returns the conditions that changed. O(N_t). */
  push(steps: FrameSteps, context: DetectorContext): readonly Condition[] {
    const out: Condition[] = [];
    const t = steps.t;
    if (steps.frameInterval > 0) this.frameInterval = steps.frameInterval;
    if (Number.isNaN(this.windowStart)) this.windowStart = t;
    // Crowding: density × mean squared 2-D step.
    const f = steps.field;
    const area = (f.xMax - f.xMin) * (f.yMax - f.yMin);
    if (steps.stepCount > 0 && area > 0) {
      let s2 = 0, n = 0;
      const sums = steps.sums;
      if (sums !== undefined && sums.steps === steps.stepCount && Number.isFinite(sums.squares)) {
        // the pipeline's own sums over the frame's steps (all finite): no pass over the steps
        s2 = sums.squares;
        n = sums.steps;
      } else {
        for (let i = 0; i < steps.stepCount; i++) {
          const q = steps.dx[i] * steps.dx[i] + steps.dy[i] * steps.dy[i];
          if (Number.isFinite(q)) { s2 += q; n++; }
        }
      }
      if (n > 0) {
        this.windowCrowdingSum += (steps.count / area) * (s2 / n);
        this.windowCrowdingFrames++;
      }
    }
    if (Number.isNaN(this.firstFrameTime)) this.firstFrameTime = t;
    const tally = this.windowTracks;
    for (let i = 0; i < steps.stepCount; i++) {
      const p = steps.stepParticle[i];
      tally.step(steps.trackId[p], steps.trackRow[p], steps.trackLength[p]);
    }
    for (let i = 0; i < steps.endedCount; i++) {
      tally.end(steps.endedTrackId[i], steps.endedLength[i]);
      // A track that was already there on the first frame is left-censored (its true length is unknown and
      // longer): it would bias the length baseline short, so it is left out of the length statistics. The end is
      // reported one or more frames after the last position (the linker's gap allowance), hence the 3-frame margin.
      const start = t - (steps.endedLength[i] - 1) * steps.frameInterval;
      if (start <= this.firstFrameTime + 3.5 * steps.frameInterval) continue;
      this.ended(steps.endedLength[i], t, out);
    }
    if (t - this.windowStart >= this.options.windowSeconds) this.closeWindow(t, context, out);
    return out;
  }

  /** Minimum steps, long-track fraction, crowding and length statistics. O(recent lengths). */
  summary(): TracksSummary {
    const sorted = this.recentLengths.slice().sort((a, b) => a - b);
    const median = sorted.length ? sorted[sorted.length >> 1] : Number.NaN;
    return {
      minimumSteps: this.minimumSteps,
      longFraction: Number.isFinite(this.longFraction) ? this.longFraction : null,
      crowding: Number.isFinite(this.crowding) ? this.crowding : null,
      confusionBound: Number.isFinite(this.crowding) ? (Math.PI * this.crowding) / (1 + Math.PI * this.crowding) : null,
      endedTracks: this.endedTotal,
      medianLength: Number.isFinite(median) ? median : null,
      meanLength: this.endedTotal > 0 ? this.lengthSum / this.endedTotal : null,
      baselineMedianLength: Number.isFinite(this.baselineMedian) ? this.baselineMedian : null,
      cusum: this.chart ? { k: this.chart.k, h: this.chart.h, arl0Tracks: this.arl0Tracks, signals: this.signals, baselineCompletions: this.completions } : null,
    };
  }

  private ended(length: number, t: number, out: Condition[]): void {
    if (!(length >= 1)) return;
    this.endedTotal++;
    this.lengthSum += length;
    this.recentLengths.push(length);
    if (this.recentLengths.length > 1000) this.recentLengths = this.recentLengths.slice(-500);
    this.windowEnded++;
    if (Number.isNaN(this.firstEndTime)) this.firstEndTime = t;
    const o = this.options;
    if (!this.chart) {
      // Baseline as a birth cohort: tracks born before T_cut, collected until T_arm. The first tracks to end are
      // biased short (long ones have not ended yet); waiting as long again as it took to see `baselineTracks`
      // ends lets the cohort's long tracks finish too.
      const born = t - (length - 1) * this.frameInterval;
      this.completions++;
      if (Number.isNaN(this.cohortCut) && this.completions >= o.baselineTracks) {
        const span = t - this.firstFrameTime;
        this.cohortCut = this.firstFrameTime + 0.5 * span;
        this.cohortArm = t + span;
      }
      this.baselineLengths.push(length);
      this.baselineBirths.push(born);
      if (!Number.isNaN(this.cohortArm) && t >= this.cohortArm) {
        const kept: number[] = [];
        for (let i = 0; i < this.baselineLengths.length; i++) if (this.baselineBirths[i] <= this.cohortCut) kept.push(this.baselineLengths[i]);
        this.baselineLengths.length = 0;
        this.baselineLengths.push(...kept);
        this.arm(t);
      }
      return;
    }
    // Probability-integral transform against the baseline sample: z = Φ⁻¹(mid-rank/(n + 1)) is N(0, 1)
    // under control whatever the length distribution (geometric lengths make log L far from normal).
    const z = this.normalScore(length);
    if (this.chart.value === 0) { this.sinceZeroLogSum = 0; this.sinceZeroCount = 0; }
    const fired = this.chart.push(-z);
    // The reference keeps growing with the tracks seen outside an episode (no other selection, which would bias
    // it), up to a cap,
    // so that the estimated-reference error that shortens the ARL fades during the run.
    if (!fired && (this.levels.get('tracks:shorter') ?? null) === null && this.sortedBaseline.length < REFERENCE_CAP) {
      this.insertReference(length);
    }
    this.sinceZeroLogSum += Math.log(length);
    this.sinceZeroCount++;
    const current = this.levels.get('tracks:shorter') ?? null;
    if (fired) {
      this.signals++;
      this.tracksSinceSignal = 0;
      const ratio = Math.exp(this.sinceZeroLogSum / this.sinceZeroCount - this.baselineMeanLog);
      let level: AlertLevel = 1 - ratio > o.lengthDropTolerance ? 'warn' : 'info';
      if (current === 'warn') level = 'warn';
      this.emit(out, 'tracks:shorter', level, t,
        `Tracks have become shorter: typical length ${(ratio * this.baselineMedian).toFixed(0)} positions against ${this.baselineMedian.toFixed(0)} at the start (×${ratio.toFixed(2)}). Likely particles leave the focal depth sooner (focus drift, stage tilt) or linking is breaking tracks; refocus and check the crowding figure`,
        { name: 'lower CUSUM on normal scores of track length', value: this.chart.lastSignalValue, threshold: this.chart.h },
        { name: 'track length ratio to baseline (geometric mean)', value: ratio, ci95: null, unit: '1' },
        { perHour: o.falseWarnsPerHour });
      this.sinceZeroLogSum = 0;
      this.sinceZeroCount = 0;
    } else if (current !== null) {
      this.tracksSinceSignal++;
      if (this.tracksSinceSignal > this.holdTracks) {
        this.emit(out, 'tracks:shorter', null, t, 'Cleared: track lengths have stopped falling',
          { name: 'lower CUSUM on normal scores of track length', value: this.chart.value, threshold: this.chart.h }, null, {});
      }
    }
  }

  /**
   * Randomized normal score of a length against the sorted baseline, Φ⁻¹((below + u·(ties + 1))/(n + 1)) with u
   * uniform from the seeded generator: ties between integer lengths are broken at random, so the score is N(0, 1)
   * under control even for short, heavily tied lengths (randomized quantile residuals, Dunn & Smyth 1996, from
   * memory). Mid-ranks would cap the score of the shortest tracks and make the chart slower than designed. O(log n).
   */
  private normalScore(length: number): number {
    const sorted = this.sortedBaseline;
    const n = sorted.length;
    let lo = 0, hi = n;
    while (lo < hi) { const mid = (lo + hi) >> 1; if (sorted[mid] < length) lo = mid + 1; else hi = mid; }
    const below = lo;
    hi = n;
    while (lo < hi) { const mid = (lo + hi) >> 1; if (sorted[mid] <= length) lo = mid + 1; else hi = mid; }
    const ties = lo - below;
    const u = Math.min(1 - 1e-12, Math.max(1e-12, this.random.uniform()));
    return normalQuantile((below + u * (ties + 1)) / (n + 1));
  }

  private insertReference(length: number): void {
    const sorted = this.sortedBaseline;
    let lo = 0, hi = sorted.length;
    while (lo < hi) { const mid = (lo + hi) >> 1; if (sorted[mid] < length) lo = mid + 1; else hi = mid; }
    sorted.splice(lo, 0, length); // O(n) memmove, n ≤ REFERENCE_CAP, once per ended track
  }

  private arm(t: number): void {
    const lengths = this.baselineLengths;
    const n = lengths.length;
    this.sortedBaseline = lengths.slice().sort((a, b) => a - b);
    let meanLog = 0;
    for (const v of lengths) meanLog += Math.log(v);
    this.baselineMeanLog = meanLog / n;
    this.baselineMedian = this.sortedBaseline[n >> 1];
    // ARL0 in ended tracks: tracks ending per hour (from the baseline rate) over the budget.
    const elapsed = Math.max(1e-9, t - this.firstEndTime);
    const tracksPerHour = (3600 * (this.completions - 1)) / elapsed;
    const arl0 = Math.max(10, tracksPerHour / this.options.falseWarnsPerHour);
    const h = siegmundThreshold(this.options.cusumK, arl0);
    this.chart = new PageCusum(this.options.cusumK, h);
    this.arl0Tracks = arl0;
    this.holdTracks = Math.ceil(3 * siegmundArl(2 * this.options.cusumK, this.options.cusumK, h)) + 5;
  }

  private closeWindow(t: number, context: DetectorContext, out: Condition[]): void {
    const o = this.options;
    // N_min at the current ε = x − 2R (x from the pipeline's σ and D; 0 while unknown).
    const dt = this.frameInterval;
    let epsilon = 0;
    if (context.localizationError !== undefined && context.diffusion !== undefined && context.diffusion > 0 && dt > 0) {
      epsilon = (context.localizationError * context.localizationError) / (context.diffusion * dt) - 2 * context.blur;
    }
    this.minimumSteps = minimumTrackSteps(Math.max(-0.5, epsilon), o.trackPrecision);
    const { steps: windowSteps, longSteps: windowLong } = this.windowTracks.totals(this.minimumSteps);
    if (this.windowEnded >= o.minimumEndedTracks && windowSteps > 0) {
      this.longFraction = windowLong / windowSteps;
      const short = this.longFraction < o.minimumLongFraction;
      this.emit(out, 'tracks:short', short ? 'warn' : null, t,
        short
          ? `Tracks are too short for a per-track D: only ${(100 * this.longFraction).toFixed(0)} % of the steps are in tracks of at least ${this.minimumSteps} steps (needed for ${(100 * o.trackPrecision).toFixed(0)} % precision each). Pooled D is still valid; for per-track D refocus, lower the particle density or widen the linking gap`
          : 'Cleared: most steps are in tracks long enough for a per-track D',
        { name: 'fraction of steps in long tracks', value: this.longFraction, threshold: o.minimumLongFraction },
        { name: 'fraction of steps in long tracks', value: this.longFraction, ci95: null, unit: '1' }, { perHour: 0 },
        { minimumSteps: this.minimumSteps, endedTracks: this.windowEnded });
    }
    if (this.windowCrowdingFrames > 0) {
      this.crowding = this.windowCrowdingSum / this.windowCrowdingFrames;
      const xi = this.crowding;
      const bound = (Math.PI * xi) / (1 + Math.PI * xi);
      const level: AlertLevel | null = xi > o.crowdingWarn ? 'warn' : xi > o.crowdingInfo ? 'info' : null;
      this.emit(out, 'tracks:crowding', level, t,
        level
          ? `Particles are crowded for their motion: ξ = ${xi.toExponential(2)} (density × mean squared step), so up to ${(100 * bound).toFixed(1)} % of nearest-neighbour links may be wrong, which inflates D. Raise the frame rate or dilute the sample`
          : 'Cleared: crowding is low enough for reliable linking',
        { name: 'crowding ξ = ρ⟨s²⟩', value: xi, threshold: level === 'warn' ? o.crowdingWarn : o.crowdingInfo },
        { name: 'greedy link confusion bound πξ/(1+πξ)', value: bound, ci95: null, unit: '1' }, { perHour: 0 });
    }
    this.windowStart = t;
    this.windowEnded = 0;
    this.windowTracks.clear();
    this.windowCrowdingSum = 0;
    this.windowCrowdingFrames = 0;
  }

  private emit(out: Condition[], key: string, level: AlertLevel | null, t: number, message: string,
    statistic: Condition['statistic'], effect: Condition['effect'], falseAlarm: Condition['falseAlarm'], detail?: Record<string, unknown>): void {
    if ((this.levels.get(key) ?? null) === level) return;
    this.levels.set(key, level);
    out.push({ key, kind: 'tracks', level, t, message, statistic, falseAlarm, effect, ...(detail ? { detail } : {}) });
  }
}
