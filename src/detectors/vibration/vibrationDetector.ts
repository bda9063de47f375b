import type { AlertLevel, Condition } from '../../alerts/condition.js';
import type { Detector } from '../detector.js';
import type { DetectorContext } from '../detectorContext.js';
import type { FrameSteps } from '../frameSteps.js';
import { aliasFrequencies } from './aliasFrequencies.js';
import { baluevThreshold } from './baluevFalseAlarm.js';
import { fQuantile } from '../../stats/quantiles.js';
import { commonModeFTest, type FTestAxes, type FTestResult } from './commonModeFTest.js';
import { lineAmplitude } from './lineAmplitude.js';
import { lombScargle } from './lombScargle.js';
import { peakInterpolation } from './peakInterpolation.js';
import { SegmentCollector } from './segmentCollector.js';
import { SegmentSpectrum } from './segmentSpectrum.js';
import { exposureTransfer, stepTransfer } from './vibrationTransfer.js';

/** Options of `VibrationDetector`; every one has a default. */
export interface VibrationDetectorOptions {
  /** Segment length L, frames (a power of two ≥ 16). Default 256. */
  segmentLength: number;
  /** Segments per analysis window, K (≥ 2). Default 8. */
  segments: number;
  /** Segments between tests (1: a new test each time a segment completes). Default 1. */
  hopSegments: number;
  /** This detector's share of the false-warn budget, per hour. Default 0.2. */
  falseWarnsPerHour: number;
  /** Family-wise false-alarm probability per window; when set it overrides the hourly budget. */
  alphaPerWindow: number | undefined;
  /** Test x and y separately (`separate`, Šidák over both) or their sum (`combined`). Default `separate`. */
  axes: FTestAxes;
  /** Candidate true frequencies are listed up to this multiple of the frame rate. Default 5. */
  aliasLimitFactor: number;
  /** Largest width of a line, bins (within 10 dB of its peak and above threshold). Default 3. */
  maxLineWidthBins: number;
  /** An excess reaching down to this bin is slow wander, left to the drift detector. Default 2. */
  wanderBins: number;
  /** Largest relative MSD bias (any lag up to the longest) that does not matter: below it, `info`. Default 0.03. */
  msdBiasTolerance: number;
  /** `stop` when the camera-seen amplitude exceeds this multiple of σ. Default 2. */
  stopAmplitudeRatio: number;
  /** Fewest particles present throughout a segment for it to be used. Default 3. */
  minParticles: number;
  /**
   * Most particles per segment entering the F-test: the first ones (in the frame's order) to step
   * into the segment's first slot. Bounds the per-segment FFTs and the collector's memory
   * (16·L bytes per particle). The test stays exact; the line amplitude it can find grows about as
   * √(N/maxParticles) above this many. Default 256.
   */
  maxParticles: number;
  /** Lomb–Scargle takes over when more than this fraction of the segments ending in the last K·L slots broke on a dropped frame. Default 0.5. */
  fallbackBrokenFraction: number;
}

/** One detected line, as in the report's `vibration.peaks`. */
export interface VibrationPeak {
  /** Observed (baseband) frequency, Hz, in (0, f_s/2). */
  frequency: number;
  /** 0-to-peak amplitude of the stage motion, µm, corrected for exposure averaging at `frequency`. */
  amplitude: number;
  /** Axis of the test: `x`, `y`, or `xy` (combined test). */
  axis: 'x' | 'y' | 'xy';
  /** Other frequencies giving the same samples, Hz (k·f_s ± f_a up to the alias limit). */
  aliasesHz: number[];
  /** The amplitude the motion would have at each alias (exposure correction at that frequency), µm; null where the exposure hides it completely. */
  aliasAmplitudes: (number | null)[];
  /** Amplitude as seen by the camera (exposure-averaged), µm. */
  apparentAmplitude: number;
  /** 95 % CI of `amplitude`, µm. */
  amplitudeCi95: [number, number];
  /** Largest relative MSD bias over lags up to the longest lag. */
  msdBias: number;
}

/** `VibrationDetector.summary()`: the report fragment. */
export interface VibrationSummary {
  /** Distinct lines found over the run (largest amplitude kept), strongest first; [] when none. */
  peaks: VibrationPeak[];
  /** Lines in the latest window, strongest first. */
  current: VibrationPeak[];
  /** Latest window's statistic per tested frequency (max over axes when separate), for the dashboard. */
  spectrum: { frequency: number[]; statistic: number[]; threshold: number };
  /** Windows tested so far (F-test and Lomb–Scargle). */
  windows: number;
  /** Method of the latest window. */
  method: 'shumway-f' | 'lomb-scargle' | 'none';
  /** Segments discarded for a dropped frame, and for too few particles. */
  brokenSegments: number;
  sparseSegments: number;
  /** Per-window false-alarm probability in use, and windows per hour. */
  alphaPerWindow: number | null;
  windowsPerHour: number | null;
}

/** Defaults of `VibrationDetectorOptions`. */
export const VIBRATION_DEFAULTS: Readonly<VibrationDetectorOptions> = Object.freeze({
  segmentLength: 256,
  segments: 8,
  hopSegments: 1,
  falseWarnsPerHour: 0.2,
  alphaPerWindow: undefined,
  axes: 'separate' as FTestAxes,
  aliasLimitFactor: 5,
  maxLineWidthBins: 3,
  wanderBins: 2,
  msdBiasTolerance: 0.03,
  stopAmplitudeRatio: 2,
  minParticles: 3,
  maxParticles: 256,
  fallbackBrokenFraction: 0.5,
});

interface Candidate {
  peak: VibrationPeak;
  statistic: number;
  threshold: number;
  bin: number;
  lagS: number;
}

const AXIS_NAMES = ['x', 'y', 'xy'] as const;

/**
 * Stage-vibration detector (kind `vibration`): periodic motion common to all particles.
 *
 * Method: the cross-particle common-mode spectral F-test (Shumway 1970, JASA 65:1527) on the
 * one-frame steps of the particles present throughout each segment of L frames, over the last K
 * complete segments (Hann window, one real FFT per particle, axis and segment); a new test each
 * `hopSegments` segments. Segments with a dropped frame are skipped; when complete segments
 * become scarce, a Lomb–Scargle periodogram of the standardised mean steps with Baluev's (2008)
 * false-alarm probability takes over. Significant bins are grouped: a narrow excess above the
 * lowest bins is a vibration line (frequency by log-parabolic interpolation, amplitude from the
 * common-mode step power, corrected for the step transfer 2|sin πfΔt| and exposure averaging
 * |sinc πfτ_e|); an excess reaching the lowest bins is slow wander and left to the drift
 * detector; a wide excess elsewhere is reported as `info` (broadband common-mode motion).
 *
 * False alarms: per window α = falseWarnsPerHour / windowsPerHour, windows per hour =
 * 3600/(hop·L·Δt). Successive windows share K − hop segments, so they are not independent and
 * the hourly rate is at most α·windowsPerHour (conservative). Severity: `info` when the line
 * would bias the MSD by less than `msdBiasTolerance`, `stop` when the camera-seen amplitude
 * exceeds `stopAmplitudeRatio`·σ, `warn` otherwise. Conditions are keyed per axis
 * (`vibration:x`, `vibration:y`, or `vibration:xy`) plus `vibration:broadband`, reported when
 * their level changes, and an axis's line again at the same level when it has moved: its
 * frequency by more than one bin, or its amplitude outside the 95 % CI last reported (so the
 * alert's message and effect follow a line that grows, fades or shifts).
 *
 * Cost per frame O(steps); per segment O(N·L log L); per test O(K·L). Memory O(N·L + K·L).
 *
 * @example
 * const detector = new VibrationDetector({ segments: 8 });
 * for (const frame of frames) for (const c of detector.push(frame, context)) engine.report(c);
 * detector.summary().peaks; // → [{ frequency: 13.7, amplitude: 0.0061, axis: 'x', aliasesHz: [86.3, 113.7, …], … }]
 */
export class VibrationDetector implements Detector<VibrationSummary> {
  readonly name = 'vibration';
  /** The options in use (defaults merged). */
  readonly options: Readonly<VibrationDetectorOptions>;
  private readonly collector: SegmentCollector;
  private readonly ring: SegmentSpectrum[];
  private ringCount: number;
  private ringNext: number;
  private segmentsSinceTest: number;
  private sparseSegments: number;
  private windows: number;
  private method: VibrationSummary['method'];
  private result: FTestResult | undefined;
  private readonly levels: Map<string, AlertLevel | null>;
  // Per axis key: the frequency (Hz) and amplitude CI (µm) of the line last reported.
  private readonly reportedLines = new Map<string, { frequency: number; ci95: [number, number] }>();
  private readonly found: VibrationPeak[];
  private current: VibrationPeak[];
  private spectrum: VibrationSummary['spectrum'];
  private frameInterval: number;
  private exposure: number;
  private alpha: number;
  private windowsPerHour: number;
  // Per-segment mean step variance, µm² (for a D estimate when the context has none).
  private readonly stepVariance: Float64Array;
  // Lomb–Scargle fallback: ring of (slot, standardised mean step x, y) and segment end slots.
  private readonly lsSlot: Float64Array;
  private readonly lsX: Float64Array;
  private readonly lsY: Float64Array;
  private readonly lsScale: Float64Array;
  private lsCount: number;
  private lsNext: number;
  private readonly completedEnds: Float64Array;
  private completedNext: number;
  private readonly brokenEnds: Float64Array;
  private brokenNext: number;
  private lastSigma: number | undefined;
  private nextFallbackSlot: number;
  private readonly lsTimes: Float64Array;
  private readonly lsValues: Float64Array;
  private readonly lsPower: Float64Array;
  private readonly lsWork: Float64Array;
  private readonly lsValuesY: Float64Array;
  private readonly lsPowerY: Float64Array;
  private readonly lsLine: Float64Array;

  /** @throws RangeError naming the option when one is out of range. */
  constructor(options: Partial<VibrationDetectorOptions> = {}) {
    const o: VibrationDetectorOptions = { ...VIBRATION_DEFAULTS, ...options };
    const L = Number(o.segmentLength);
    if (!Number.isInteger(L) || L < 16 || (L & (L - 1)) !== 0) {
      throw new RangeError('VibrationDetector requires segmentLength a power of two >= 16');
    }
    if (!Number.isInteger(o.segments) || o.segments < 2) throw new RangeError('VibrationDetector requires segments an integer >= 2');
    if (!Number.isInteger(o.hopSegments) || o.hopSegments < 1 || o.hopSegments > o.segments) {
      throw new RangeError('VibrationDetector requires hopSegments an integer in [1, segments]');
    }
    if (!(o.falseWarnsPerHour > 0)) throw new RangeError('VibrationDetector requires falseWarnsPerHour > 0');
    if (o.alphaPerWindow !== undefined && !(o.alphaPerWindow > 0 && o.alphaPerWindow < 1)) {
      throw new RangeError('VibrationDetector requires alphaPerWindow in (0, 1)');
    }
    if (o.axes !== 'separate' && o.axes !== 'combined') throw new RangeError('VibrationDetector requires axes separate or combined');
    if (!(o.aliasLimitFactor >= 1)) throw new RangeError('VibrationDetector requires aliasLimitFactor >= 1');
    if (!Number.isInteger(o.maxLineWidthBins) || o.maxLineWidthBins < 1) throw new RangeError('VibrationDetector requires maxLineWidthBins an integer >= 1');
    if (!Number.isInteger(o.wanderBins) || o.wanderBins < 2 || o.wanderBins >= L / 2 - 1) {
      throw new RangeError('VibrationDetector requires wanderBins an integer in [2, segmentLength/2 - 1)');
    }
    if (!(o.msdBiasTolerance > 0)) throw new RangeError('VibrationDetector requires msdBiasTolerance > 0');
    if (!(o.stopAmplitudeRatio > 0)) throw new RangeError('VibrationDetector requires stopAmplitudeRatio > 0');
    if (!Number.isInteger(o.minParticles) || o.minParticles < 3) throw new RangeError('VibrationDetector requires minParticles an integer >= 3');
    if (!Number.isInteger(o.maxParticles) || o.maxParticles < o.minParticles) {
      throw new RangeError('VibrationDetector requires maxParticles an integer >= minParticles');
    }
    if (!(o.fallbackBrokenFraction >= 0 && o.fallbackBrokenFraction < 1)) throw new RangeError('VibrationDetector requires fallbackBrokenFraction in [0, 1)');
    this.options = Object.freeze(o);
    const K = o.segments;
    this.collector = new SegmentCollector(L, o.maxParticles);
    this.ring = [];
    for (let k = 0; k < K; k++) this.ring.push(new SegmentSpectrum(L));
    this.ringCount = 0;
    this.ringNext = 0;
    this.segmentsSinceTest = 0;
    this.sparseSegments = 0;
    this.windows = 0;
    this.method = 'none';
    this.result = undefined;
    this.levels = new Map();
    this.found = [];
    this.current = [];
    this.spectrum = { frequency: [], statistic: [], threshold: Number.NaN };
    this.frameInterval = Number.NaN;
    this.exposure = Number.NaN;
    this.alpha = Number.NaN;
    this.windowsPerHour = Number.NaN;
    this.stepVariance = new Float64Array(K);
    const span = K * L;
    this.lsSlot = new Float64Array(span);
    this.lsX = new Float64Array(span);
    this.lsY = new Float64Array(span);
    this.lsScale = new Float64Array(span);
    this.lsCount = 0;
    this.lsNext = 0;
    this.completedEnds = new Float64Array(K).fill(Number.NEGATIVE_INFINITY);
    this.completedNext = 0;
    this.brokenEnds = new Float64Array(span).fill(Number.NEGATIVE_INFINITY);
    this.brokenNext = 0;
    this.lastSigma = undefined;
    this.nextFallbackSlot = Number.NaN;
    this.lsTimes = new Float64Array(span);
    this.lsValues = new Float64Array(span);
    this.lsPower = new Float64Array(2 * span);
    this.lsWork = new Float64Array(14 * span);
    this.lsValuesY = new Float64Array(span);
    this.lsPowerY = new Float64Array(2 * span);
    this.lsLine = new Float64Array(1);
  }

  /** Feeds one frame; returns the conditions whose level changed. O(steps), plus a test when a segment completes. */
  push(steps: FrameSteps, context: DetectorContext): readonly Condition[] {
    if (Number.isNaN(this.frameInterval)) {
      if (!(steps.frameInterval > 0)) return [];
      this.start(steps);
    }
    this.lastSigma = context.localizationError;
    this.recordMeanStep(steps);
    const out: Condition[] = [];
    const collector = this.collector;
    const brokenBefore = collector.brokenSegments;
    const completed = collector.push(steps);
    if (collector.brokenSegments !== brokenBefore) {
      this.brokenEnds[this.brokenNext] = steps.slot;
      this.brokenNext = (this.brokenNext + 1) % this.brokenEnds.length;
    }
    if (completed) {
      const rows = collector.completeRows;
      const endSlot = steps.slot;
      if (rows >= this.options.minParticles) {
        const k = this.ringNext;
        this.ring[k].compute(collector.stepsX, collector.stepsY, rows);
        this.stepVariance[k] = meanStepVariance(collector.stepsX, collector.stepsY, rows, this.options.segmentLength);
        this.ringNext = (k + 1) % this.options.segments;
        this.ringCount = Math.min(this.ringCount + 1, this.options.segments);
        this.completedEnds[this.completedNext] = endSlot;
        this.completedNext = (this.completedNext + 1) % this.options.segments;
        this.segmentsSinceTest++;
        if (this.ringCount === this.options.segments && this.segmentsSinceTest >= this.options.hopSegments) {
          this.segmentsSinceTest = 0;
          this.testWindow(steps.t, context, out);
        }
      } else {
        this.sparseSegments++;
      }
    }
    if (steps.slot >= this.nextFallbackSlot) {
      this.nextFallbackSlot = steps.slot + this.options.segmentLength;
      this.maybeFallback(steps, context, out);
    }
    return out;
  }

  /** Frames between false windows on average: hop·L/α (windows overlap, so alerts are rarer still). */
  private arl0Frames(alpha: number): number {
    return (this.options.hopSegments * this.options.segmentLength) / alpha;
  }

  /** Windows tested so far (cheap: no copy, unlike `summary()`). O(1). */
  get windowsTested(): number {
    return this.windows;
  }

  /** The report fragment: lines found, the latest window's spectrum, counts. O(peaks + L). */
  summary(): VibrationSummary {
    const byAmplitude = (a: VibrationPeak, b: VibrationPeak): number => b.amplitude - a.amplitude;
    return {
      peaks: this.found.slice().sort(byAmplitude).map(copyPeak),
      current: this.current.map(copyPeak),
      spectrum: { frequency: this.spectrum.frequency.slice(), statistic: this.spectrum.statistic.slice(), threshold: this.spectrum.threshold },
      windows: this.windows,
      method: this.method,
      brokenSegments: this.collector.brokenSegments,
      sparseSegments: this.sparseSegments,
      alphaPerWindow: Number.isNaN(this.alpha) ? null : this.alpha,
      windowsPerHour: Number.isNaN(this.windowsPerHour) ? null : this.windowsPerHour,
    };
  }

  private start(steps: FrameSteps): void {
    const o = this.options;
    this.frameInterval = steps.frameInterval;
    this.exposure = steps.exposure >= 0 && Number.isFinite(steps.exposure) ? steps.exposure : steps.frameInterval;
    // A new test every hop·L frames: windows per hour = 3600/(hop·L·Δt).
    this.windowsPerHour = 3600 / (o.hopSegments * o.segmentLength * this.frameInterval);
    this.alpha = o.alphaPerWindow ?? Math.min(0.5, o.falseWarnsPerHour / this.windowsPerHour);
    this.nextFallbackSlot = steps.slot + o.segmentLength;
  }

  /** Stores the standardised cross-particle mean step of this frame for the Lomb–Scargle fallback. */
  private recordMeanStep(steps: FrameSteps): void {
    const n = steps.stepCount;
    if (steps.slotGap !== 1 || n < this.options.minParticles) return;
    const sums = steps.sums;
    let sx = 0;
    let sy = 0;
    if (sums) {
      sx = sums.sumX;
      sy = sums.sumY;
    } else {
      for (let j = 0; j < n; j++) {
        sx += steps.dx[j];
        sy += steps.dy[j];
      }
    }
    const mx = sx / n;
    const my = sy / n;
    let vx = 0;
    let vy = 0;
    if (sums) {
      // the pipeline's residual sums about the same mean
      vx = sums.residualSquaresX;
      vy = sums.residualSquaresY;
    } else {
      for (let j = 0; j < n; j++) {
        vx += (steps.dx[j] - mx) ** 2;
        vy += (steps.dy[j] - my) ** 2;
      }
    }
    vx /= n - 1;
    vy /= n - 1;
    if (!(vx > 0 && vy > 0) || !Number.isFinite(mx + my)) return;
    // u = m/(s/√N) is Student-t with N−1 degrees of freedom under H0; ×√((N−3)/(N−1)) gives
    // unit variance; for N ≤ 3 the t has no finite variance and the frame is skipped.
    const unit = n > 3 ? Math.sqrt((n - 3) / (n - 1)) : 0;
    if (unit === 0) return;
    const i = this.lsNext;
    this.lsSlot[i] = steps.slot;
    this.lsX[i] = (mx / Math.sqrt(vx / n)) * unit;
    this.lsY[i] = (my / Math.sqrt(vy / n)) * unit;
    this.lsScale[i] = Math.sqrt((vx + vy) / (2 * n)) / unit;
    this.lsNext = (i + 1) % this.lsSlot.length;
    this.lsCount = Math.min(this.lsCount + 1, this.lsSlot.length);
  }

  private testWindow(t: number, context: DetectorContext, out: Condition[]): void {
    const o = this.options;
    const result = commonModeFTest(this.ring, this.alpha, o.axes, this.result);
    this.result = result;
    this.windows++;
    this.method = 'shumway-f';
    const L = o.segmentLength;
    const df = 1 / (L * this.frameInterval);
    const series = o.axes === 'separate' ? [result.statistic.x, result.statistic.y] : [result.statistic.xy];
    // Dashboard spectrum: the max over the tested series per bin.
    const frequency: number[] = [];
    const statistic: number[] = [];
    for (let j = result.firstBin; j <= result.lastBin; j++) {
      let value = Number.NEGATIVE_INFINITY;
      for (const s of series) value = Math.max(value, s[j]);
      frequency.push(j * df);
      statistic.push(value);
    }
    this.spectrum = { frequency, statistic, threshold: result.threshold };
    const candidates: Candidate[] = [];
    let broadband: { bin: number; width: number; statistic: number } | undefined;
    // Bins raised at the unadjusted 1 % level: a run joined to the lowest bins by such bins is
    // the tail of slow wander (a red spectrum), not a line.
    const factor = o.axes === 'separate' ? 1 : 2;
    const elevated = fQuantile(0.99, factor * result.df1, factor * result.df2);
    for (let a = 0; a < series.length; a++) {
      const f = series[a];
      const axisName = o.axes === 'separate' ? AXIS_NAMES[a] : 'xy';
      let j = result.firstBin;
      while (j <= result.lastBin) {
        if (!(f[j] > result.threshold)) {
          j++;
          continue;
        }
        const runFirst = j;
        let peakBin = j;
        while (j <= result.lastBin && f[j] > result.threshold) {
          if (f[j] > f[peakBin]) peakBin = j;
          j++;
        }
        const runLast = j - 1;
        if (runFirst <= o.wanderBins) continue; // slow wander: the drift detector's business
        let joined = true;
        for (let b = o.wanderBins; b < runFirst; b++) {
          if (!(f[b] > elevated)) {
            joined = false;
            break;
          }
        }
        if (joined) continue;
        // Width: bins of the run within 10 dB of the peak excess.
        const cut = 1 + (f[peakBin] - 1) / 10;
        let width = 0;
        for (let b = runFirst; b <= runLast; b++) if (f[b] > cut) width++;
        if (width > o.maxLineWidthBins) {
          if (!broadband || f[peakBin] > broadband.statistic) broadband = { bin: peakBin, width: runLast - runFirst + 1, statistic: f[peakBin] };
          continue;
        }
        candidates.push(this.describeLine(axisName, peakBin, f[peakBin], result.threshold, context));
      }
    }
    candidates.sort((p, q) => q.peak.amplitude - p.peak.amplitude);
    this.current = candidates.map((c) => c.peak);
    for (const c of candidates) this.remember(c.peak);
    const pValue = this.alpha;
    this.emitAxes(candidates, t, out, pValue, o.axes === 'separate' ? ['x', 'y'] : ['xy'], result.threshold, series, df);
    // Broadband common-mode excess: info only (no line, so no MSD figure to judge it by).
    const level: AlertLevel | null = broadband ? 'info' : null;
    if ((this.levels.get('vibration:broadband') ?? null) !== level) {
      this.levels.set('vibration:broadband', level);
      out.push({
        key: 'vibration:broadband',
        kind: 'vibration',
        level,
        t,
        message: broadband
          ? `broad band of shared motion around ${(broadband.bin * df).toFixed(2)} Hz over ${broadband.width} bins (${(broadband.width * df).toFixed(2)} Hz); all particles jostle together but not at one frequency: look for flow in the chamber (evaporation, a loose lid) or an unsteady stage`
          : 'broad band of shared motion has gone',
        statistic: { name: 'common-mode F (max over bins)', value: broadband ? broadband.statistic : maxOf(statistic), threshold: result.threshold },
        falseAlarm: { pValue, perHour: pValue * this.windowsPerHour, arl0Frames: this.arl0Frames(pValue) },
        effect: null,
        detail: { method: 'shumway-f', widthBins: broadband?.width ?? 0 },
      });
    }
  }

  /** Frequency, amplitudes, aliases and MSD bias of the line at `peakBin` (F-test path). */
  private describeLine(axis: 'x' | 'y' | 'xy', peakBin: number, statistic: number, threshold: number, context: DetectorContext): Candidate {
    const L = this.options.segmentLength;
    const dt = this.frameInterval;
    const ring = this.ring;
    // Frequency: log-parabolic interpolation on the common-mode power (numerator) of 3 bins.
    const numerator = (j: number): number => {
      let s = 0;
      for (const seg of ring) s += axis === 'y' ? seg.between[1][j] : axis === 'x' ? seg.between[0][j] : seg.between[0][j] + seg.between[1][j];
      return s;
    };
    const delta = peakInterpolation(numerator(peakBin - 1), numerator(peakBin), numerator(peakBin + 1));
    const frequency = ((peakBin + delta) / L) / dt;
    let squared = 0;
    let squaredSe = 0;
    const axesUsed: (0 | 1)[] = axis === 'x' ? [0] : axis === 'y' ? [1] : [0, 1];
    let variance = 0;
    for (const a of axesUsed) {
      const line = lineAmplitude(ring, a, peakBin, 2);
      squared += line.squared;
      variance += line.squaredSe * line.squaredSe;
    }
    squaredSe = Math.sqrt(variance);
    const transfer = stepTransfer(frequency, dt);
    const stepAmplitude = Math.sqrt(Math.max(0, squared));
    const apparent = stepAmplitude / transfer;
    const low = Math.sqrt(Math.max(0, squared - 1.96 * squaredSe)) / transfer;
    const high = Math.sqrt(Math.max(0, squared + 1.96 * squaredSe)) / transfer;
    return this.finishLine(axis, frequency, apparent, [low, high], statistic, threshold, peakBin, context);
  }

  private finishLine(
    axis: 'x' | 'y' | 'xy',
    frequency: number,
    apparent: number,
    apparentCi: [number, number],
    statistic: number,
    threshold: number,
    bin: number,
    context: DetectorContext,
  ): Candidate {
    const dt = this.frameInterval;
    const fs = 1 / dt;
    const exposureGain = exposureTransfer(frequency, this.exposure);
    const amplitude = apparent / exposureGain;
    const aliasesHz = aliasFrequencies(Math.min(frequency, fs / 2), fs, this.options.aliasLimitFactor * fs).map(round4);
    const aliasAmplitudes = aliasesHz.map((f) => {
      const gain = exposureTransfer(f, this.exposure);
      return gain > 1e-6 ? apparent / gain : null;
    });
    // MSD bias: the camera-seen line adds A²(1 − cos 2πfτ) to that axis's MSD at lag τ
    // (estimators.md §10), compared with 2Dτ + 2σ² (per axis), largest over lags 1…longest.
    let D = context.diffusion;
    const sigma = context.localizationError ?? 0;
    if (D === undefined || !(D > 0)) {
      let v = 0;
      for (let k = 0; k < this.ringCount; k++) v += this.stepVariance[k];
      v /= Math.max(1, this.ringCount);
      D = Math.max(1e-12, (v - 2 * sigma * sigma) / (2 * dt));
    }
    const longest = Math.max(1, Math.min(100_000, Math.round((context.longestLag > 0 ? context.longestLag : dt) / dt)));
    let msdBias = 0;
    let lagS = dt;
    const a2 = apparent * apparent * (axis === 'xy' ? 0.5 : 1); // combined: shared over two axes
    for (let n = 1; n <= longest; n++) {
      const tau = n * dt;
      const bias = (a2 * (1 - Math.cos(2 * Math.PI * frequency * tau))) / (2 * D * tau + 2 * sigma * sigma);
      if (bias > msdBias) {
        msdBias = bias;
        lagS = tau;
      }
    }
    const peak: VibrationPeak = {
      frequency: round4(frequency),
      amplitude,
      axis,
      aliasesHz,
      aliasAmplitudes,
      apparentAmplitude: apparent,
      amplitudeCi95: [apparentCi[0] / exposureGain, apparentCi[1] / exposureGain],
      msdBias,
    };
    return { peak, statistic, threshold, bin, lagS };
  }

  /**
   * Whether the line now seen on an axis differs from the one last reported there: frequency
   * moved by more than `binHz`, or amplitude outside the reported 95 % CI.
   */
  private lineMoved(key: string, peak: VibrationPeak, binHz: number): boolean {
    const reported = this.reportedLines.get(key);
    if (!reported) return false;
    if (Math.abs(peak.frequency - reported.frequency) > binHz) return true;
    return peak.amplitude < reported.ci95[0] || peak.amplitude > reported.ci95[1];
  }

  /**
   * Emits one condition per axis key when its level changes, or when its line moved at the same
   * level (see `lineMoved`); `binHz` is the frequency resolution of the test.
   */
  private emitAxes(
    candidates: readonly Candidate[],
    t: number,
    out: Condition[],
    pValue: number,
    axes: readonly string[],
    threshold: number,
    series: readonly Float64Array[] | undefined,
    binHz: number,
  ): void {
    const o = this.options;
    const fs = 1 / this.frameInterval;
    for (let a = 0; a < axes.length; a++) {
      const axis = axes[a];
      const key = `vibration:${axis}`;
      const best = candidates.find((c) => c.peak.axis === axis);
      let level: AlertLevel | null = null;
      if (best) {
        const sigma = this.lastSigma;
        if (sigma !== undefined && sigma > 0 && best.peak.apparentAmplitude > o.stopAmplitudeRatio * sigma) level = 'stop';
        else if (best.peak.msdBias >= o.msdBiasTolerance) level = 'warn';
        else level = 'info';
      }
      if ((this.levels.get(key) ?? null) === level && !(best && this.lineMoved(key, best.peak, binHz))) continue;
      this.levels.set(key, level);
      if (best) this.reportedLines.set(key, { frequency: best.peak.frequency, ci95: [best.peak.amplitudeCi95[0], best.peak.amplitudeCi95[1]] });
      else this.reportedLines.delete(key);
      const maxStatistic = series && series[a] ? maxOf(Array.from(series[a]).filter((v) => !Number.isNaN(v))) : Number.NaN;
      if (!best) {
        out.push({
          key,
          kind: 'vibration',
          level: null,
          t,
          message: `stage vibration along ${axis} no longer seen`,
          statistic: { name: 'common-mode F (max over bins)', value: maxStatistic, threshold },
          falseAlarm: { pValue, perHour: pValue * this.windowsPerHour, arl0Frames: this.arl0Frames(pValue) },
          effect: null,
          detail: { method: this.method },
        });
        continue;
      }
      const p = best.peak;
      const nm = (v: number): string => (v * 1000).toFixed(1);
      const aliasText = p.aliasesHz.slice(0, 4).map((f) => f.toFixed(1)).join(', ');
      const bias = `${(p.msdBias * 100).toFixed(1)} % at lag ${best.lagS.toFixed(3)} s`;
      const head = `stage vibrating at ${p.frequency.toFixed(2)} Hz along ${axis}: ${nm(p.amplitude)} nm 0-to-peak (95 % CI ${nm(p.amplitudeCi95[0])}–${nm(p.amplitudeCi95[1])} nm; ${nm(p.apparentAmplitude)} nm as the camera sees it); at ${fs.toFixed(1)} frames/s it could also be ${aliasText}${p.aliasesHz.length > 4 ? ', …' : ''} Hz`;
      const tail =
        level === 'stop'
          ? `; it is more than ${o.stopAmplitudeRatio}× the localization error (σ = ${nm(this.lastSigma ?? 0)} nm), so positions now are dominated by stage motion: stop, find the source (pump, fan, chiller, footsteps) and float or decouple the table`
          : level === 'warn'
            ? `; it biases the MSD by up to ${bias}: find the source (pump, fan, chiller, footsteps) and decouple it from the stage, or change the frame rate to move it out of the lags in use`
            : `; it biases the MSD by at most ${bias}, below the ${(o.msdBiasTolerance * 100).toFixed(0)} % that matters: no action needed`;
      out.push({
        key,
        kind: 'vibration',
        level,
        t,
        message: head + tail,
        statistic: { name: this.method === 'lomb-scargle' ? 'Lomb–Scargle peak power' : 'common-mode F (max over bins)', value: best.statistic, threshold: best.threshold },
        falseAlarm: { pValue, perHour: pValue * this.windowsPerHour, arl0Frames: this.arl0Frames(pValue) },
        effect: { name: 'vibration amplitude (0-to-peak)', value: p.amplitude, ci95: p.amplitudeCi95, unit: 'µm' },
        detail: {
          method: this.method,
          frequencyHz: p.frequency,
          aliasesHz: p.aliasesHz,
          apparentAmplitudeUm: p.apparentAmplitude,
          exposureS: this.exposure,
          msdBias: p.msdBias,
          msdBiasLagS: best.lagS,
          bin: best.bin,
          lines: candidates.filter((c) => c.peak.axis === axis).map((c) => ({ frequencyHz: c.peak.frequency, amplitudeUm: c.peak.amplitude })),
        },
      });
    }
  }

  /** Lomb–Scargle on the standardised mean steps when complete segments are scarce. */
  private maybeFallback(steps: FrameSteps, context: DetectorContext, out: Condition[]): void {
    const o = this.options;
    const L = o.segmentLength;
    const span = o.segments * L;
    const since = steps.slot - span;
    let covered = 0;
    for (let k = 0; k < o.segments; k++) if (this.completedEnds[k] > since) covered++;
    let broken = 0;
    for (let k = 0; k < this.brokenEnds.length; k++) if (this.brokenEnds[k] > since) broken++;
    // "Most segments have drops": only then is the F-test starved and the fallback used.
    if (broken === 0 || broken <= o.fallbackBrokenFraction * (broken + covered)) return;
    // Gather the samples of the last K·L slots.
    let n = 0;
    for (let i = 0; i < this.lsCount; i++) {
      if (this.lsSlot[i] <= since) continue;
      this.lsTimes[n] = this.lsSlot[i] * this.frameInterval;
      n++;
    }
    if (n < span / 2) return; // too little data even for the fallback
    const dt = this.frameInterval;
    const T = span * dt;
    // Grid oversampled twice (Δf = 1/(2T)); the peak is then refined and evaluated exactly.
    const df = 1 / (2 * T);
    const firstIndex = Math.max(1, Math.ceil(2 * (o.wanderBins + 1) * o.segments)); // above the wander bins of an L-segment
    const lastIndex = span - 2; // just below Nyquist
    if (lastIndex < firstIndex) return;
    let tMean = 0;
    for (let i = 0; i < n; i++) tMean += this.lsTimes[i];
    tMean /= n;
    let tVar = 0;
    for (let i = 0; i < n; i++) tVar += (this.lsTimes[i] - tMean) ** 2;
    tVar /= n;
    let scale = 0;
    let used = 0;
    for (let i = 0; i < this.lsCount; i++) {
      if (this.lsSlot[i] <= since) continue;
      scale += this.lsScale[i] * this.lsScale[i];
      used++;
    }
    // B (µm) = B_u × the rms of (s/√N)/√((N−3)/(N−1)) (the scale recorded with each u).
    scale = Math.sqrt(scale / Math.max(1, used));
    const alphaAxis = -Math.expm1(Math.log1p(-this.alpha) / 2); // Šidák over the two axes
    const fMax = lastIndex * df;
    const zThreshold = baluevThreshold(alphaAxis, fMax, tVar);
    this.windows++;
    this.method = 'lomb-scargle';
    const candidates: Candidate[] = [];
    const F = lastIndex - firstIndex + 1;
    let spectrumMax: Float64Array | undefined;
    // Both axes in one pass (they share the trigonometric sums); each mean removed first,
    // since a constant drift only shifts the mean of u.
    n = 0;
    let meanX = 0;
    let meanY = 0;
    for (let i = 0; i < this.lsCount; i++) {
      if (this.lsSlot[i] <= since) continue;
      this.lsValues[n] = this.lsX[i];
      this.lsValuesY[n] = this.lsY[i];
      meanX += this.lsX[i];
      meanY += this.lsY[i];
      n++;
    }
    meanX /= n;
    meanY /= n;
    for (let i = 0; i < n; i++) {
      this.lsValues[i] -= meanX;
      this.lsValuesY[i] -= meanY;
    }
    lombScargle(this.lsTimes, this.lsValues, n, df, firstIndex, lastIndex, this.lsPower, this.lsWork, this.lsValuesY, this.lsPowerY);
    for (let a = 0; a < 2; a++) {
      const power = a === 0 ? this.lsPower : this.lsPowerY;
      const values = a === 0 ? this.lsValues : this.lsValuesY;
      let best = 0;
      for (let j = 1; j < F; j++) if (power[j] > power[best]) best = j;
      if (!spectrumMax) spectrumMax = Float64Array.from(power.subarray(0, F));
      else for (let j = 0; j < F; j++) spectrumMax[j] = Math.max(spectrumMax[j], power[j]);
      const z = power[best];
      if (!(z > zThreshold)) continue;
      const delta = best > 0 && best < F - 1 ? peakInterpolation(power[best - 1], z, power[best + 1]) : 0;
      const frequency = (firstIndex + best + delta) * df;
      // Power at the refined frequency (one-frequency grid), so the amplitude has no grid loss.
      const zLine = Math.max(z, lombScargle(this.lsTimes, values, n, frequency, 1, 1, this.lsLine, this.lsWork)[0]);
      // z ≈ 1 + n·B_u²/4 for a line of amplitude B_u in u; B (µm) = B_u × the step scale s/√N.
      const bu2 = (4 * Math.max(0, zLine - 1)) / n;
      const bu2Se = (4 * Math.sqrt(1 + 2 * Math.max(0, zLine - 1))) / n;
      const transfer = stepTransfer(frequency, dt);
      const apparent = (Math.sqrt(bu2) * scale) / transfer;
      const ci: [number, number] = [
        (Math.sqrt(Math.max(0, bu2 - 1.96 * bu2Se)) * scale) / transfer,
        (Math.sqrt(bu2 + 1.96 * bu2Se) * scale) / transfer,
      ];
      const candidate = this.finishLine(a === 0 ? 'x' : 'y', frequency, apparent, ci, z, zThreshold, firstIndex + best, context);
      candidates.push(candidate);
    }
    if (spectrumMax) {
      const frequency: number[] = [];
      for (let j = 0; j < F; j++) frequency.push((firstIndex + j) * df);
      this.spectrum = { frequency, statistic: Array.from(spectrumMax), threshold: zThreshold };
    }
    candidates.sort((p, q) => q.peak.amplitude - p.peak.amplitude);
    this.current = candidates.map((c) => c.peak);
    for (const c of candidates) this.remember(c.peak);
    this.emitAxes(candidates, steps.t, out, this.alpha, ['x', 'y'], zThreshold, undefined, df);
  }

  /** Keeps distinct lines over the run (same axis, within one bin), the largest amplitude of each. */
  private remember(peak: VibrationPeak): void {
    const binHz = 1 / (this.options.segmentLength * this.frameInterval);
    const same = this.found.find((p) => p.axis === peak.axis && Math.abs(p.frequency - peak.frequency) <= binHz);
    if (!same) this.found.push(copyPeak(peak));
    else if (peak.amplitude > same.amplitude) Object.assign(same, copyPeak(peak));
  }
}

function meanStepVariance(stepsX: Float64Array, stepsY: Float64Array, rows: number, L: number): number {
  let total = 0;
  for (let r = 0; r < rows; r++) {
    let sx = 0;
    let sy = 0;
    let qx = 0;
    let qy = 0;
    for (let t = 0; t < L; t++) {
      const x = stepsX[r * L + t];
      const y = stepsY[r * L + t];
      sx += x;
      sy += y;
      qx += x * x;
      qy += y * y;
    }
    total += (qx - (sx * sx) / L + qy - (sy * sy) / L) / (2 * (L - 1));
  }
  return total / rows;
}

function maxOf(values: readonly number[]): number {
  let m = Number.NEGATIVE_INFINITY;
  for (const v of values) if (v > m) m = v;
  return m;
}

function round4(v: number): number {
  return Math.round(v * 1e4) / 1e4;
}

function copyPeak(p: VibrationPeak): VibrationPeak {
  return { ...p, aliasesHz: p.aliasesHz.slice(), aliasAmplitudes: p.aliasAmplitudes.slice(), amplitudeCi95: [p.amplitudeCi95[0], p.amplitudeCi95[1]] };
}
