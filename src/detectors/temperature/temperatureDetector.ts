import type { Condition } from '../../alerts/condition.js';
import type { Detector } from '../detector.js';
import type { DetectorContext } from '../detectorContext.js';
import type { FrameSteps } from '../frameSteps.js';
import { defaultRadiusSd } from '../../physics/defaultRadiusSd.js';
import { impliedTemperature } from '../../physics/impliedTemperature.js';
import { isTemperatureDependent } from '../../physics/isTemperatureDependent.js';
import type { Medium } from '../../physics/medium.js';
import { mediumViscosity } from '../../physics/mediumViscosity.js';
import { parseMedium } from '../../physics/parseMedium.js';
import { normalQuantile } from '../../stats/quantiles.js';
import { GammaCusum } from './gammaCusum.js';
import { gammaCusumThreshold } from './gammaCusumThreshold.js';
import { StepCovarianceRing, type StepCovarianceSums } from './stepCovarianceRing.js';

/** Options of {@link TemperatureDetector}; every field has a documented default. */
export interface TemperatureDetectorOptions {
  /** False `warn`s per hour allowed to this detector (its share of the budget). Default 0.25. */
  falseWarnsPerHour?: number;
  /** Fraction of that share given to the absolute check (the rest goes to the two CUSUM charts). Default 0.2. */
  absoluteShare?: number;
  /** Override: in-control ARL of each CUSUM chart, frames (else derived from the budget and Δt). */
  arl0Frames?: number;
  /**
   * Design ratio θ1/θ0 of the rise chart (> 1). Default 1.03: about 1.2 K of warming in water near
   * 25 °C (d ln D/dT ≈ 2.6 %/K) when D dominates θ; a little above the 1 K value so that larger
   * shifts are still caught fast.
   */
  riseRatio?: number;
  /** Design ratio of the fall chart (< 1). Default 1/1.03. */
  fallRatio?: number;
  /** Steps (Σ over frames of stepCount − 1) in the baseline before the charts arm. Default 1e5 (detectors.md §4). */
  burnInSteps?: number;
  /** Frames per baseline block for the block-wise CVE spread. Default 50. */
  blockFrames?: number;
  /** Standardised CVE change of D̂ (fresh confirmation window against the baseline) needed to attribute a chart signal to D, one-sided. Default 2.5. */
  attributionZ?: number;
  /** Minimum steps in the confirmation window after a chart signal. Default 1e5. */
  confirmSteps?: number;
  /** Relative change of D against the run's start that matters (warn; below it: info). Default 0.02. */
  minRelativeChange?: number;
  /** Data time between looks of the absolute check, s (non-overlapping blocks). Default 60. */
  absoluteBlockSeconds?: number;
  /** Tolerance of the absolute check, K: warn when the implied-temperature CI misses the reported value by more. Default 1. */
  toleranceKelvin?: number;
  /** The medium, as the `--medium` option. Default `water`. */
  medium?: string;
  /** Nominal particle radius, µm (else the context's radius; without one there is no absolute check). */
  radius?: number;
  /** Radius standard uncertainty, µm. Default 2 % of the radius. */
  radiusSd?: number;
  /** Particle height above the coverslip, µm, for Faxén's correction (default none: bulk). */
  height?: number;
  /** Points kept in the summary series (decimated by halving when full). Default 512. */
  maxSeries?: number;
  /** Frames kept for post-change estimates. Default 65536. */
  ringFrames?: number;
}

/** The detector's report fragment. */
export interface TemperatureSummary {
  /** Latest implied temperature, °C, with its 95 % CI (radius uncertainty included), or null. */
  implied: { value: number; ci95: [number, number] } | null;
  /** Latest block's mean reported temperature, °C, or null. */
  reported: number | null;
  /** One point per absolute look (decimated, at most maxSeries), °C and s. */
  series: { t: number[]; reported: number[]; implied: number[]; low: number[]; high: number[] };
  /** Current chart values W (nats) and thresholds: h of the rise chart, hLower of the fall chart (null before the first arming). */
  chart: { upper: number; lower: number; h: number | null; hLower: number | null };
  /** Latest change attributed to D, or null: change time s, D after (µm²/s, 95 % CI), implied ΔT in K (null without a T-dependent medium). */
  change: { t: number; diffusionAfter: { value: number; ci95: [number, number] }; deltaKelvin: number | null } | null;
}

const KEY_ABSOLUTE = 'temperature:absolute';
const KEY_RISE = 'temperature:cusum:rise';
const KEY_FALL = 'temperature:cusum:fall';
const CAUTION = 'a temperature alert is advice, not a thermometer: follow your lab procedures for heating and illumination';

/**
 * Watches the sample temperature through the diffusion coefficient, two ways:
 *
 * (a) **Absolute**: every `absoluteBlockSeconds` of data it inverts Stokes–Einstein for the
 * implied temperature from the pipeline's D̂ ± SE and compares it with the reported temperature.
 * Each look is a two-sided test at a fixed α_look = falseWarnsPerHour·absoluteShare / (looks per
 * hour), looks per hour = 3600/absoluteBlockSeconds (Bonferroni over looks; 60 looks/h and
 * α_look ≈ 8.3×10⁻⁴ at the defaults). The implied-temperature interval at level 1 − α_look includes
 * the radius uncertainty (combined on the log scale of D by `impliedTemperature`, both parts
 * widened from 1.96 to z_{1−α_look/2}). It warns when that interval
 * misses the reported value by more than `toleranceKelvin`, and gives info when it misses it by
 * less. None for a fixed-viscosity medium.
 *
 * (b) **Relative**: two one-sided Gamma-scale LLR CUSUMs (Page 1954; {@link GammaCusum}) on
 * S_t = Σ|d_i − m_t|² (drift-corrected steps), S_t ~ Gamma(N_t − 1, θ), θ = 4DΔt(1−2R) + 4σ²,
 * against the run's own baseline θ0 from a burn-in of `burnInSteps` steps (Jones, Champ & Rigdon
 * 2004: plug-in baselines need N·B ≳ 10⁵). The dispersion of S_t (heterogeneous D) is estimated in
 * the burn-in and used as a quasi-likelihood weight. h is set at arming by the Markov-chain method
 * of Brook & Evans (1972) for the mean shape, with each chart's ARL0 = 2·(frames per hour)/(CUSUM
 * share). When a chart fires, the CVE (Vestergaard et al. 2014) estimates D̂ and σ̂² on a fresh
 * confirmation window (at least `confirmSteps` steps: the data that made the chart fire are biased
 * by that selection) and compares them with the baseline's block-wise estimates: only a significant
 * D change is reported (a σ-only change belongs to the noise detector and is silently
 * re-baselined; no change at all is a chart false alarm, and the charts restart). The condition
 * compares D now with the run's first baseline: warn when the change matters (≥
 * minRelativeChange), info otherwise; it clears when D returns within that tolerance. After every
 * reported change the charts
 * re-baseline with a fresh burn-in.
 *
 * Complexity: O(stepCount) per frame; an O(m³) threshold solve (≈ 0.1 s) at each arming.
 * Bad input: non-finite steps are skipped and counted; bad options throw RangeError.
 *
 * @example
 * const detector = new TemperatureDetector({ medium: 'water', radius: 0.5 });
 * const conditions = detector.push(frameSteps, context); // → [] most frames
 * detector.summary().chart;                              // → { upper: 0.7, lower: 0, h: 10.4, hLower: 10.5 }
 */
export class TemperatureDetector implements Detector<TemperatureSummary> {
  readonly name = 'temperature';
  /** Non-finite steps skipped so far. */
  skippedSteps: number;
  /**
   * Chart signals so far: by chart (`rise`, `fall`) and by attribution (`diffusion`: reported;
   * `localization`: σ moved, silently re-baselined; `unattributed`: neither moved, charts restarted).
   */
  readonly signals: { rise: number; fall: number; diffusion: number; localization: number; unattributed: number };
  /** Frames pushed while the charts were armed. */
  armedFrames: number;
  private readonly options: Required<Omit<TemperatureDetectorOptions, 'arl0Frames' | 'radius' | 'radiusSd' | 'height'>> &
    Pick<TemperatureDetectorOptions, 'arl0Frames' | 'radius' | 'radiusSd' | 'height'>;
  private readonly medium: Medium;
  private readonly ring: StepCovarianceRing;
  private readonly rise: GammaCusum;
  private readonly fall: GammaCusum;
  private armed: boolean;
  private pending: {
    direction: 1 | -1; startFrame: number; framesNeeded: number; signalTime: number;
    changeTime: number; statistic: number; threshold: number;
  } | null;
  private baselineFrames: number;
  private threshold: number;
  private arl0PerChart: number;
  // burn-in accumulators
  private burnFrames: number;
  private burnShape: number;
  private burnStatistic: number;
  private burnStatisticSquaredOverShape: number;
  private blockFrameCount: number;
  private blockSums: StepCovarianceSums;
  private blocks: number;
  private blockWeight: number;
  private blockDiffusionSum: number;
  private blockDiffusionSquares: number;
  private blockSigmaSum: number;
  private blockSigmaSquares: number;
  private currentBlur: number;
  // current baseline
  private baselineDiffusion: number;
  private baselineSigma2: number;
  private baselineSteps: number;
  private diffusionSpreadPerStep: number;
  private sigmaSpreadPerStep: number;
  private referenceDiffusion: number;
  private raised: { key: string; level: 'info' | 'warn' } | null;
  private change: TemperatureSummary['change'];
  // absolute check
  private readonly lookLevel: number;
  private blockStart: number;
  private reportedSum: number;
  private reportedCount: number;
  private absoluteLevel: 'info' | 'warn' | null;
  private implied: TemperatureSummary['implied'];
  private reported: number | null;
  private readonly series: TemperatureSummary['series'];
  private seriesStride: number;
  private seriesSkip: number;
  private frameInterval: number;

  /** @param options see {@link TemperatureDetectorOptions}; RangeError names a bad option */
  constructor(options: TemperatureDetectorOptions = {}) {
    const merged = {
      falseWarnsPerHour: 0.25,
      absoluteShare: 0.2,
      riseRatio: 1.03,
      fallRatio: 1 / 1.03,
      burnInSteps: 1e5,
      blockFrames: 50,
      attributionZ: 2.5,
      confirmSteps: 1e5,
      minRelativeChange: 0.02,
      absoluteBlockSeconds: 60,
      toleranceKelvin: 1,
      medium: 'water',
      maxSeries: 512,
      ringFrames: 65536,
      ...options,
    };
    const positive = (name: string, value: unknown): void => {
      if (typeof value !== 'number' || !(value > 0) || !Number.isFinite(value)) {
        throw new RangeError(`TemperatureDetector requires ${name} > 0`);
      }
    };
    positive('falseWarnsPerHour', merged.falseWarnsPerHour);
    if (!(merged.absoluteShare > 0 && merged.absoluteShare < 1)) throw new RangeError('TemperatureDetector requires absoluteShare in (0, 1)');
    if (merged.arl0Frames !== undefined && !(merged.arl0Frames > 1)) throw new RangeError('TemperatureDetector requires arl0Frames > 1');
    if (!(merged.riseRatio > 1) || !Number.isFinite(merged.riseRatio)) throw new RangeError('TemperatureDetector requires riseRatio > 1');
    if (!(merged.fallRatio > 0 && merged.fallRatio < 1)) throw new RangeError('TemperatureDetector requires fallRatio in (0, 1)');
    positive('burnInSteps', merged.burnInSteps);
    if (!(merged.blockFrames >= 2) || !Number.isInteger(merged.blockFrames)) throw new RangeError('TemperatureDetector requires an integer blockFrames >= 2');
    positive('attributionZ', merged.attributionZ);
    positive('confirmSteps', merged.confirmSteps);
    positive('minRelativeChange', merged.minRelativeChange);
    positive('absoluteBlockSeconds', merged.absoluteBlockSeconds);
    positive('toleranceKelvin', merged.toleranceKelvin);
    if (merged.radius !== undefined) positive('radius', merged.radius);
    if (merged.radiusSd !== undefined && !(merged.radiusSd >= 0)) throw new RangeError('TemperatureDetector requires radiusSd >= 0');
    if (merged.height !== undefined) positive('height', merged.height);
    if (!(merged.maxSeries >= 2) || !Number.isInteger(merged.maxSeries)) throw new RangeError('TemperatureDetector requires an integer maxSeries >= 2');
    if (!(merged.ringFrames >= 16) || !Number.isInteger(merged.ringFrames)) throw new RangeError('TemperatureDetector requires an integer ringFrames >= 16');
    this.options = merged;
    this.medium = parseMedium(merged.medium);
    this.ring = new StepCovarianceRing(merged.ringFrames);
    this.rise = new GammaCusum(merged.riseRatio, 1);
    this.fall = new GammaCusum(merged.fallRatio, 1);
    this.armed = false;
    this.pending = null;
    this.baselineFrames = 0;
    this.threshold = Number.NaN;
    this.arl0PerChart = Number.NaN;
    this.skippedSteps = 0;
    this.signals = { rise: 0, fall: 0, diffusion: 0, localization: 0, unattributed: 0 };
    this.armedFrames = 0;
    this.burnFrames = 0;
    this.burnShape = 0;
    this.burnStatistic = 0;
    this.burnStatisticSquaredOverShape = 0;
    this.blockFrameCount = 0;
    this.blockSums = emptySums();
    this.blocks = 0;
    this.blockWeight = 0;
    this.blockDiffusionSum = 0;
    this.blockDiffusionSquares = 0;
    this.blockSigmaSum = 0;
    this.blockSigmaSquares = 0;
    this.currentBlur = 0;
    this.baselineDiffusion = Number.NaN;
    this.baselineSigma2 = Number.NaN;
    this.baselineSteps = 0;
    this.diffusionSpreadPerStep = Number.NaN;
    this.sigmaSpreadPerStep = Number.NaN;
    this.referenceDiffusion = Number.NaN;
    this.raised = null;
    this.change = null;
    const looksPerHour = 3600 / merged.absoluteBlockSeconds;
    this.lookLevel = (merged.falseWarnsPerHour * merged.absoluteShare) / looksPerHour;
    this.blockStart = Number.NaN;
    this.reportedSum = 0;
    this.reportedCount = 0;
    this.absoluteLevel = null;
    this.implied = null;
    this.reported = null;
    this.series = { t: [], reported: [], implied: [], low: [], high: [] };
    this.seriesStride = 1;
    this.seriesSkip = 0;
    this.frameInterval = Number.NaN;
  }

  /** Whether the CUSUM charts are armed (baseline complete). */
  get isArmed(): boolean {
    return this.armed;
  }

  /** Threshold h of each chart, nats (NaN before the first arming). */
  get chartThreshold(): number {
    return this.threshold;
  }

  /** In-control ARL of each chart at the last arming, frames (NaN before). */
  get chartArl0Frames(): number {
    return this.arl0PerChart;
  }

  /** Feed one frame. Returns the conditions that changed on it. O(stepCount). */
  push(steps: FrameSteps, context: DetectorContext): readonly Condition[] {
    const out: Condition[] = [];
    this.frameInterval = steps.frameInterval;
    this.currentBlur = context.blur;
    // (the pipeline's frames, which carry sums, have finite steps only)
    const checkedSteps = steps.sums ? 0 : steps.stepCount;
    for (let k = 0; k < checkedSteps; k++) {
      if (!Number.isFinite(steps.dx[k]) || !Number.isFinite(steps.dy[k])) this.skippedSteps++;
    }
    this.ring.push(steps);
    const shape = this.ring.lastShape;
    const statistic = this.ring.lastStatistic;
    if (this.pending !== null) {
      if (this.ring.frames - this.pending.startFrame >= this.pending.framesNeeded) this.confirm(steps, context, out);
    } else if (!this.armed) {
      this.burnIn(shape, statistic, steps.frameInterval);
    } else if (shape > 0) {
      this.armedFrames++;
      const riseFired = this.rise.push(statistic, shape, steps.t);
      const fallFired = this.fall.push(statistic, shape, steps.t);
      if (riseFired) this.signals.rise++;
      if (fallFired) this.signals.fall++;
      if (riseFired || fallFired) this.onSignal(riseFired ? this.rise : this.fall, riseFired ? 1 : -1, steps.t);
    }
    this.absolute(steps, context, out);
    return out;
  }

  /** The report fragment (JSON-serialisable). O(series length). */
  summary(): TemperatureSummary {
    return {
      implied: this.implied === null ? null : { value: this.implied.value, ci95: [this.implied.ci95[0], this.implied.ci95[1]] },
      reported: this.reported,
      series: {
        t: this.series.t.slice(),
        reported: this.series.reported.slice(),
        implied: this.series.implied.slice(),
        low: this.series.low.slice(),
        high: this.series.high.slice(),
      },
      chart: { upper: this.rise.value, lower: this.fall.value, h: Number.isFinite(this.threshold) ? this.rise.threshold : null, hLower: Number.isFinite(this.threshold) ? this.fall.threshold : null },
      change: this.change,
    };
  }

  private burnIn(shape: number, statistic: number, frameInterval: number): void {
    if (shape > 0) {
      this.burnFrames++;
      this.burnShape += shape;
      this.burnStatistic += statistic;
      this.burnStatisticSquaredOverShape += (statistic * statistic) / shape;
    }
    this.blockFrameCount++;
    if (this.blockFrameCount >= this.options.blockFrames) this.closeBlock(frameInterval);
    if (this.burnShape >= this.options.burnInSteps && this.blocks >= 5) this.arm();
  }

  private closeBlock(frameInterval: number): void {
    const sums = this.ring.sumSince(this.blockFrameCount);
    this.blockFrameCount = 0;
    const d = StepCovarianceRing.diffusion(sums, frameInterval);
    const s2 = StepCovarianceRing.localizationVariance(sums, this.currentBlur);
    if (!Number.isFinite(d) || !Number.isFinite(s2)) return;
    const weight = sums.squareCount;
    this.blocks++;
    this.blockWeight += weight;
    this.blockDiffusionSum += weight * d;
    this.blockDiffusionSquares += weight * d * d;
    this.blockSigmaSum += weight * s2;
    this.blockSigmaSquares += weight * s2 * s2;
  }

  private arm(): void {
    const theta = this.burnStatistic / this.burnShape;
    const dispersionRaw =
      (this.burnStatisticSquaredOverShape / (theta * theta) - (2 * this.burnStatistic) / theta + this.burnShape) / this.burnFrames;
    const dispersion = Math.max(1, dispersionRaw);
    const meanShape = this.burnShape / this.burnFrames / dispersion;
    const framesPerHour = 3600 / this.frameInterval;
    const cusumShare = this.options.falseWarnsPerHour * (1 - this.options.absoluteShare);
    this.arl0PerChart = this.options.arl0Frames ?? (2 * framesPerHour) / cusumShare;
    // One h for both charts, from the rise chart (the fall chart's ARL0 at the same h is within a few % of it; both are checked in tests).
    const hRise = gammaCusumThreshold({ arl0Frames: this.arl0PerChart, ratio: this.options.riseRatio, shape: meanShape });
    const hFall = gammaCusumThreshold({ arl0Frames: this.arl0PerChart, ratio: this.options.fallRatio, shape: meanShape });
    this.threshold = Math.max(hRise, hFall);
    this.rise.threshold = hRise;
    this.fall.threshold = hFall;
    this.rise.setBaseline(theta, dispersion);
    this.fall.setBaseline(theta, dispersion);
    // Baseline CVE: pooled over the burn-in, with the per-step spread of the block estimates.
    const w = this.blockWeight;
    const meanD = this.blockDiffusionSum / w;
    const meanS = this.blockSigmaSum / w;
    const correction = this.blocks / (this.blocks - 1);
    this.baselineDiffusion = meanD;
    this.baselineSigma2 = meanS;
    this.baselineSteps = w;
    this.baselineFrames = this.burnFrames;
    this.diffusionSpreadPerStep = Math.max(0, this.blockDiffusionSquares - w * meanD * meanD) * correction / this.blocks;
    this.sigmaSpreadPerStep = Math.max(0, this.blockSigmaSquares - w * meanS * meanS) * correction / this.blocks;
    if (!Number.isFinite(this.referenceDiffusion)) this.referenceDiffusion = meanD;
    this.armed = true;
  }

  private restartBurnIn(): void {
    this.armed = false;
    this.burnFrames = 0;
    this.burnShape = 0;
    this.burnStatistic = 0;
    this.burnStatisticSquaredOverShape = 0;
    this.blockFrameCount = 0;
    this.blocks = 0;
    this.blockWeight = 0;
    this.blockDiffusionSum = 0;
    this.blockDiffusionSquares = 0;
    this.blockSigmaSum = 0;
    this.blockSigmaSquares = 0;
    this.rise.reset();
    this.fall.reset();
  }

  /**
   * A chart crossed h. The data that made it cross are biased upward in that direction (they were
   * selected by the chart), so attribution uses a fresh confirmation window: as many frames as the
   * chart's run since its last zero, and at least `confirmSteps` steps.
   */
  private onSignal(chart: GammaCusum, direction: 1 | -1, t: number): void {
    const stepsPerFrame = Math.max(1, this.baselineSteps / 2 / Math.max(1, this.baselineFrames));
    const framesNeeded = Math.min(
      this.options.ringFrames,
      Math.max(chart.framesSinceZero, Math.ceil(this.options.confirmSteps / stepsPerFrame)),
    );
    this.pending = {
      direction, startFrame: this.ring.frames, framesNeeded, signalTime: t,
      changeTime: chart.changeTime, statistic: chart.value, threshold: chart.threshold,
    };
  }

  private confirm(steps: FrameSteps, context: DetectorContext, out: Condition[]): void {
    const pending = this.pending!;
    this.pending = null;
    const { direction, changeTime, signalTime } = pending;
    const dt = steps.frameInterval;
    const sums = this.ring.sumSince(this.ring.frames - pending.startFrame);
    const dAfter = StepCovarianceRing.diffusion(sums, dt);
    const s2After = StepCovarianceRing.localizationVariance(sums, context.blur);
    const n = Math.max(1, sums.squareCount);
    // Per-step spread scales with D² (CVE variance ∝ D², Vestergaard et al. 2014).
    const scale = Number.isFinite(dAfter) && this.baselineDiffusion > 0 ? (dAfter / this.baselineDiffusion) ** 2 : 1;
    const varianceAfter = (this.diffusionSpreadPerStep * scale) / n;
    const varianceBefore = this.diffusionSpreadPerStep / this.baselineSteps;
    const zD = (dAfter - this.baselineDiffusion) / Math.sqrt(varianceAfter + varianceBefore);
    const zSigma = (s2After - this.baselineSigma2) / Math.sqrt(this.sigmaSpreadPerStep * (1 / n + 1 / this.baselineSteps));
    const statisticValue = pending.statistic;
    const chart = { threshold: pending.threshold };
    const z = this.options.attributionZ;
    if (!(direction * zD >= z)) {
      if (Math.abs(zSigma) >= 3 || Math.abs(zD) >= 3) {
        // σ moved (focus: the noise detector's business) or D moved against the chart: the
        // baseline is stale, so learn a new one, and say nothing.
        this.signals.localization++;
        this.restartBurnIn();
      } else {
        // Neither estimate moved: a chart false alarm; restart both charts at 0 on the same baseline.
        this.signals.unattributed++;
        this.rise.reset();
        this.fall.reset();
      }
      return;
    }
    this.signals.diffusion++;
    this.restartBurnIn();
    const seAfter = Math.sqrt(varianceAfter);
    const ci: [number, number] = [dAfter - 1.959963984540054 * seAfter, dAfter + 1.959963984540054 * seAfter];
    const relative = dAfter / this.referenceDiffusion - 1;
    const slope = this.logSlope(context.reportedTemperature);
    const deltaKelvin = slope === null ? null : relative / slope;
    this.change = { t: changeTime, diffusionAfter: { value: dAfter, ci95: ci }, deltaKelvin };
    // §0: significant AND large enough to matter is a warn; significant but small is info. A
    // raised condition clears when D comes back within the tolerance of the run's start.
    const matters = Math.abs(relative) >= this.options.minRelativeChange;
    if (!matters && this.raised !== null) {
      this.clearRaised(steps.t, out);
      return;
    }
    const key = relative > 0 ? KEY_RISE : KEY_FALL;
    const level: 'info' | 'warn' = matters ? 'warn' : 'info';
    if (this.raised !== null && this.raised.key !== key) this.clearRaised(steps.t, out);
    this.raised = { key, level };
    const percent = 100 * relative;
    const kelvinText = deltaKelvin === null
      ? ''
      : `, about ${deltaKelvin >= 0 ? '+' : ''}${deltaKelvin.toFixed(1)} K if the medium alone changed`;
    const causes = relative > 0
      ? 'likely warming by the illumination or the stage heater while the sensor stays flat; check the lamp or laser power and the heater, and let the sample settle'
      : 'likely cooling, rising viscosity (evaporation, gelling) or particles aggregating into slower clusters; check the sample for clumps and the temperature control';
    out.push({
      key,
      kind: 'temperature',
      level,
      t: steps.t,
      message:
        `diffusion ${relative > 0 ? 'rose' : 'fell'} ${Math.abs(percent).toFixed(1)} % since t = ${changeTime.toFixed(1)} s ` +
        `(D ${this.referenceDiffusion.toPrecision(3)} → ${dAfter.toPrecision(3)} µm²/s, 95 % CI ${ci[0].toPrecision(3)}–${ci[1].toPrecision(3)})` +
        `${kelvinText}; ${causes}; ${CAUTION}`,
      statistic: { name: direction > 0 ? 'gamma CUSUM (rise)' : 'gamma CUSUM (fall)', value: statisticValue, threshold: chart.threshold },
      falseAlarm: { arl0Frames: this.arl0PerChart, perHour: (3600 / dt) / this.arl0PerChart },
      effect: { name: 'relative change of D', value: relative, ci95: [ci[0] / this.referenceDiffusion - 1, ci[1] / this.referenceDiffusion - 1], unit: '1' },
      detail: { changeTime, signalTime, diffusionBefore: this.referenceDiffusion, diffusionAfter: dAfter, zDiffusion: zD, zLocalization: zSigma, deltaKelvin },
    });
  }

  private clearRaised(t: number, out: Condition[]): void {
    if (this.raised === null) return;
    out.push({
      key: this.raised.key, kind: 'temperature', level: null, t,
      message: 'diffusion is back within tolerance of the start of the run',
      statistic: { name: 'gamma CUSUM', value: 0, threshold: this.threshold },
      falseAlarm: { arl0Frames: this.arl0PerChart }, effect: null,
    });
    this.raised = null;
  }

  /** d ln D/dT = 1/T − d ln η/dT at the reported temperature, K⁻¹, or null for a fixed viscosity. */
  private logSlope(celsius: number | undefined): number | null {
    if (!isTemperatureDependent(this.medium) || celsius === undefined || !Number.isFinite(celsius)) return null;
    const h = 0.05; // central difference, K
    const up = mediumViscosity(this.medium, celsius + h);
    const down = mediumViscosity(this.medium, celsius - h);
    if (!(up > 0 && down > 0)) return null;
    return 1 / (celsius + 273.15) - (Math.log(up) - Math.log(down)) / (2 * h);
  }

  private absolute(steps: FrameSteps, context: DetectorContext, out: Condition[]): void {
    if (!Number.isFinite(this.blockStart)) this.blockStart = steps.t;
    if (context.reportedTemperature !== undefined && Number.isFinite(context.reportedTemperature)) {
      this.reportedSum += context.reportedTemperature;
      this.reportedCount++;
    }
    if (steps.t - this.blockStart < this.options.absoluteBlockSeconds) return;
    const reported = this.reportedCount > 0 ? this.reportedSum / this.reportedCount : null;
    this.blockStart = steps.t;
    this.reportedSum = 0;
    this.reportedCount = 0;
    this.reported = reported;
    const radius = this.options.radius ?? context.radius;
    const d = context.diffusion;
    const se = context.diffusionSe;
    if (!isTemperatureDependent(this.medium) || radius === undefined || d === undefined || se === undefined || !(d > 0) || !(se >= 0)) return;
    const radiusSd = this.options.radiusSd ?? defaultRadiusSd(radius);
    // impliedTemperature combines D's CI with 1.96·(radius term) on the log scale of D; for the
    // look level z we widen both: D's CI to ±z·SE/D̂ and the radius SD by z/1.96.
    const relativeSe = se / d;
    const at = (z: number): { value: number; ci95: [number, number] } | null =>
      impliedTemperature({
        diffusion: { value: d, ci95: [d * Math.exp(-z * relativeSe), d * Math.exp(z * relativeSe)] },
        radius, radiusSd: (radiusSd * z) / 1.959963984540054, medium: this.medium,
        ...(this.options.height !== undefined ? { height: this.options.height } : {}),
      });
    const ci95 = at(1.959963984540054);
    const look = at(normalQuantile(1 - this.lookLevel / 2));
    if (ci95 === null || look === null) return;
    this.implied = { value: ci95.value, ci95: [ci95.ci95[0], ci95.ci95[1]] };
    if (reported === null) return;
    this.addSeries(steps.t, reported, ci95.value, ci95.ci95[0], ci95.ci95[1]);
    const [low, high] = look.ci95;
    const miss = low > reported ? low - reported : high < reported ? reported - high : 0;
    const level: 'info' | 'warn' | null = miss > this.options.toleranceKelvin ? 'warn' : miss > 0 ? 'info' : null;
    if (level === this.absoluteLevel) return;
    this.absoluteLevel = level;
    const diff = ci95.value - reported;
    out.push({
      key: KEY_ABSOLUTE,
      kind: 'temperature',
      level,
      t: steps.t,
      message: level === null
        ? `implied temperature ${ci95.value.toFixed(1)} °C agrees with the reported ${reported.toFixed(1)} °C`
        : `diffusion implies ${ci95.value.toFixed(1)} °C (95 % CI ${ci95.ci95[0].toFixed(1)}–${ci95.ci95[1].toFixed(1)}) but ${reported.toFixed(1)} °C is reported ` +
          `(${diff >= 0 ? '+' : ''}${diff.toFixed(1)} K); likely causes: illumination heating the sample, a sensor not at the sample, ` +
          `a wrong radius or medium, particles near a wall (Faxén slowing, give --height) or clusters lowering D; ` +
          `check the sensor placement, the bead size and the medium; ${CAUTION}`,
      statistic: { name: 'implied temperature miss beyond the CI, K', value: miss, threshold: this.options.toleranceKelvin },
      falseAlarm: { pValue: this.lookLevel, perHour: this.lookLevel * (3600 / this.options.absoluteBlockSeconds) },
      effect: { name: 'implied minus reported temperature', value: diff, ci95: [ci95.ci95[0] - reported, ci95.ci95[1] - reported], unit: 'K' },
      detail: { implied: ci95.value, ci95: ci95.ci95, lookInterval: look.ci95, reported, radius, radiusSd },
    });
  }

  private addSeries(t: number, reported: number, implied: number, low: number, high: number): void {
    // Decimate by halving: when full, keep every other point and double the stride (bounded memory).
    if (this.seriesSkip > 0) {
      this.seriesSkip--;
      return;
    }
    const s = this.series;
    s.t.push(t);
    s.reported.push(reported);
    s.implied.push(implied);
    s.low.push(low);
    s.high.push(high);
    this.seriesSkip = this.seriesStride - 1;
    if (s.t.length >= this.options.maxSeries) {
      const keep = (a: number[]): number[] => a.filter((_, i) => i % 2 === 0);
      s.t = keep(s.t);
      s.reported = keep(s.reported);
      s.implied = keep(s.implied);
      s.low = keep(s.low);
      s.high = keep(s.high);
      this.seriesStride *= 2;
      this.seriesSkip = this.seriesStride - 1;
    }
  }
}

function emptySums(): StepCovarianceSums {
  return { frames: 0, sumSquares: 0, squareCount: 0, sumProducts: 0, productCount: 0, sumStatistic: 0, sumShape: 0 };
}

