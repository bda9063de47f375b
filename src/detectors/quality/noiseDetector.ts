import type { AlertLevel, Condition } from '../../alerts/condition.js';
import type { Detector } from '../detector.js';
import type { DetectorContext } from '../detectorContext.js';
import type { FrameSteps } from '../frameSteps.js';
import { TrackCache } from '../trackCache.js';
import { normalQuantile } from '../../stats/quantiles.js';
import { siegmundThreshold } from '../drift/siegmundThreshold.js';
import { PageCusum } from '../drift/pageCusum.js';
import { siegmundArl } from '../drift/siegmundArl.js';
import { pooledCveRelativeVariance } from './cveRelativeVariance.js';

/** Options of {@link NoiseDetector}. */
export interface NoiseOptions {
  /** Share of the false-warn budget, warns per hour (default 0.05: a third of the data-quality 0.15). */
  falseWarnsPerHour: number;
  /** Frames per non-overlapping CVE block (default 300). */
  blockFrames: number;
  /** Sub-batches per block for the batch-means SE of σ̂² (default 10). */
  batches: number;
  /** Blocks before the self-starting σ̂² chart is armed (default 10). */
  baselineBlocks: number;
  /** Reduced error x̂ above which the fit needs care: warn (default 1). */
  reducedErrorLimit: number;
  /** Requested relative SE of D over the analysis (default 0.05). */
  targetPrecision: number;
  /** Length of the analysis the precision refers to, s (default 600). */
  analysisSeconds: number;
  /** CUSUM reference value for the σ̂² chart, SD units (default 0.5). */
  cusumK: number;
  /** Change of x = σ²/(D̂Δt) that matters for the focus condition: warn above it, info below (default 0.25). */
  reducedErrorChange: number;
  /** Per-block significance for σ̂² < 0 (model misfit, info) (default 1e-3). */
  misfitAlpha: number;
  /** Most x̂ points kept in the summary (default 500). */
  seriesPoints: number;
}

/** One CVE block. */
export interface NoiseBlock {
  /** Block end time, s. */
  t: number;
  /** D̂, µm²/s. */
  diffusion: number;
  /** σ̂², µm² (may be negative). */
  sigmaSquared: number;
  /** Batch-means SE of σ̂², µm². */
  sigmaSquaredSe: number;
  /** x̂ = σ̂²/(D̂Δt). */
  reducedError: number;
  /** Particle steps in the block (per axis). */
  steps: number;
}

/** What {@link NoiseDetector.summary} returns. */
export interface NoiseSummary {
  last: NoiseBlock | null;
  baselineSigma: number | null;
  series: { t: number[]; reducedError: number[]; sigma: number[] };
  blocks: number;
  /** σ̂² CUSUM design (per chart, both sides) and its signal count so far. */
  cusum: { k: number; h: number; arl0Blocks: number; signals: number; armedBlocks: number } | null;
}

const DEFAULTS: NoiseOptions = {
  falseWarnsPerHour: 0.05,
  blockFrames: 300,
  batches: 10,
  baselineBlocks: 10,
  reducedErrorLimit: 1,
  targetPrecision: 0.05,
  analysisSeconds: 600,
  cusumK: 0.5,
  reducedErrorChange: 0.25,
  misfitAlpha: 1e-3,
  seriesPoints: 500,
};

/**
 * Localization-noise checks (kind `noise`), detectors.md §6c: block-wise covariance-based
 * estimator (CVE; Vestergaard, Blainey & Flyvbjerg 2014, Phys. Rev. E 89:022726) over
 * non-overlapping blocks of B frames, pooled over particles and both axes:
 *
 *     D̂ = ⟨Δx²⟩/(2Δt) + ⟨Δx_kΔx_{k+1}⟩/Δt,   σ̂² = R⟨Δx²⟩ + (2R − 1)⟨Δx_kΔx_{k+1}⟩,   x̂ = σ̂²/(D̂Δt)
 *
 * (products only between consecutive steps of the same track: the previous step of every track
 * is kept in a Map by track id). `warn` when x̂ > `reducedErrorLimit` (MSD fits then need the
 * optimal small number of points, Michalet 2010); `stop` only when the target precision of D
 * cannot be reached over `analysisSeconds` at this data rate and x (pooled CVE variance); a
 * self-starting two-sided Page CUSUM on the block σ̂² (Hawkins 1987; focus shift: `warn` when x
 * moved by more than `reducedErrorChange`, else `info`; it clears after a hold without signals); σ̂² significantly below 0 is
 * `info` (model misfit: wrong blur, sub-diffusion). Raw steps include stage drift, which adds
 * v²Δt² to ⟨Δx²⟩ (negligible at frame scale). O(N_t) per frame, O(tracks) memory.
 *
 * @example
 * const noise = new NoiseDetector({ blockFrames: 200 });
 * noise.push(frameSteps, context); // → [] until a block completes
 * noise.summary().last?.reducedError; // → 0.05
 */
export class NoiseDetector implements Detector<NoiseSummary> {
  readonly name = 'noise';
  private readonly options: NoiseOptions;
  private readonly previous = new TrackCache<{ slot: number; dx: number; dy: number }>();
  // Per batch: Σ squares, count of squares, Σ products, count of products (both axes pooled).
  private readonly squares: Float64Array;
  private readonly squareCount: Float64Array;
  private readonly products: Float64Array;
  private readonly productCount: Float64Array;
  private framesInBlock = 0;
  private blockStart = Number.NaN;
  private frameInterval = 0;
  private blocks = 0;
  private baselineSum = 0;
  private baselineVar = 0;
  private baselineCount = 0;
  private baselineSteps = 0;
  private holdBlocks = 0;
  private blocksSinceSignal = 0;
  private totalSignals = 0;
  private armedBlocks = 0;
  private lastDesign: { k: number; h: number } | undefined;
  private charts: PageCusum[] | undefined;
  private arl0Blocks = 0;
  private last: NoiseBlock | undefined;
  private readonly levels = new Map<string, AlertLevel | null>();
  private readonly seriesT: number[] = [];
  private readonly seriesX: number[] = [];
  private readonly seriesSigma: number[] = [];
  private seriesStride = 1;
  private seriesCounter = 0;
  private lengthSum = 0;
  private lengthCount = 0;

  /** @throws RangeError naming the option when an option is out of range */
  constructor(options: Partial<NoiseOptions> = {}) {
    const o = { ...DEFAULTS, ...options };
    for (const name of ['falseWarnsPerHour', 'reducedErrorLimit', 'targetPrecision', 'analysisSeconds', 'cusumK', 'reducedErrorChange'] as const) {
      if (!(o[name] > 0) || !Number.isFinite(o[name])) throw new RangeError(`noise requires ${name} > 0`);
    }
    if (!Number.isInteger(o.blockFrames) || o.blockFrames < 20) throw new RangeError('noise requires blockFrames to be an integer >= 20');
    if (!Number.isInteger(o.batches) || o.batches < 4 || o.batches > o.blockFrames / 2) throw new RangeError('noise requires batches to be an integer in [4, blockFrames/2]');
    if (!Number.isInteger(o.baselineBlocks) || o.baselineBlocks < 1) throw new RangeError('noise requires baselineBlocks to be an integer >= 1');
    if (!(o.misfitAlpha > 0 && o.misfitAlpha < 1)) throw new RangeError('noise requires misfitAlpha in (0, 1)');
    if (!Number.isInteger(o.seriesPoints) || o.seriesPoints < 10) throw new RangeError('noise requires seriesPoints to be an integer >= 10');
    this.options = o;
    this.squares = new Float64Array(o.batches);
    this.squareCount = new Float64Array(o.batches);
    this.products = new Float64Array(o.batches);
    this.productCount = new Float64Array(o.batches);
  }

  /** Feed one frame; returns the conditions that changed (only at block ends). O(N_t). */
  push(steps: FrameSteps, context: DetectorContext): readonly Condition[] {
    const out: Condition[] = [];
    if (!(steps.frameInterval > 0)) return out;
    this.frameInterval = steps.frameInterval;
    if (Number.isNaN(this.blockStart)) this.blockStart = steps.t;
    const batch = Math.min(this.options.batches - 1, Math.floor((this.framesInBlock * this.options.batches) / this.options.blockFrames));
    const slot = steps.slot;
    const sums = steps.sums;
    if (sums) {
      // the pipeline's sums for this frame: the same terms as the loop below, in O(1)
      this.squares[batch] += sums.squares;
      this.squareCount[batch] += 2 * sums.steps;
      this.products[batch] += sums.products;
      this.productCount[batch] += 2 * sums.pairs;
    }
    // a frame without them (hand-made) forms them here, with each track's last step
    const ownSteps = sums ? 0 : steps.stepCount;
    for (let i = 0; i < ownSteps; i++) {
      const a = steps.dx[i];
      const b = steps.dy[i];
      if (!Number.isFinite(a) || !Number.isFinite(b)) continue;
      const particle = steps.stepParticle[i];
      const id = steps.trackId[particle];
      this.squares[batch] += a * a + b * b;
      this.squareCount[batch] += 2;
      const before = this.previous.find(id, steps.trackRow[particle]);
      if (before !== undefined) {
        if (before.slot === slot - 1) {
          this.products[batch] += a * before.dx + b * before.dy;
          this.productCount[batch] += 2;
        }
        before.slot = slot;
        before.dx = a;
        before.dy = b;
      } else {
        this.previous.set(id, steps.trackRow[particle], { slot, dx: a, dy: b });
      }
    }
    for (let i = 0; i < steps.endedCount; i++) {
      this.previous.delete(steps.endedTrackId[i]);
      this.lengthSum += steps.endedLength[i];
      this.lengthCount++;
    }
    this.framesInBlock++;
    if (this.framesInBlock >= this.options.blockFrames) this.closeBlock(steps, context, out);
    return out;
  }

  /** Last block, baseline σ, decimated x̂ and σ series. */
  summary(): NoiseSummary {
    const design = this.lastDesign;
    return {
      last: this.last ?? null,
      baselineSigma: this.baselineSteps > 0 ? Math.sqrt(Math.max(0, this.baselineSum / this.baselineSteps)) : null,
      series: { t: this.seriesT.slice(), reducedError: this.seriesX.slice(), sigma: this.seriesSigma.slice() },
      blocks: this.blocks,
      cusum: design ? { k: design.k, h: design.h, arl0Blocks: this.arl0Blocks, signals: this.totalSignals, armedBlocks: this.armedBlocks } : null,
    };
  }

  private estimate(from: number, to: number, R: number, dt: number): { d: number; s2: number; n: number } | undefined {
    let sq = 0, nsq = 0, pr = 0, npr = 0;
    for (let j = from; j < to; j++) {
      sq += this.squares[j]; nsq += this.squareCount[j]; pr += this.products[j]; npr += this.productCount[j];
    }
    if (nsq < 2 || npr < 2) return undefined;
    const meanSquare = sq / nsq;
    const meanProduct = pr / npr;
    return { d: meanSquare / (2 * dt) + meanProduct / dt, s2: R * meanSquare + (2 * R - 1) * meanProduct, n: nsq / 2 };
  }

  private closeBlock(steps: FrameSteps, context: DetectorContext, out: Condition[]): void {
    const o = this.options;
    const dt = this.frameInterval;
    const R = Number.isFinite(context.blur) ? context.blur : 0;
    const whole = this.estimate(0, o.batches, R, dt);
    // Batch means: σ̂² per sub-batch; SE = SD/√K (adjacent batches share only one product per track).
    let sum = 0, sum2 = 0, k = 0;
    for (let j = 0; j < o.batches; j++) {
      const e = this.estimate(j, j + 1, R, dt);
      if (!e) continue;
      sum += e.s2; sum2 += e.s2 * e.s2; k++;
    }
    this.squares.fill(0); this.squareCount.fill(0); this.products.fill(0); this.productCount.fill(0);
    const blockSeconds = steps.t - this.blockStart;
    this.framesInBlock = 0;
    this.blockStart = steps.t;
    if (!whole || k < 3) return;
    const se = Math.sqrt(Math.max(0, (sum2 - (sum * sum) / k) / (k - 1)) / k);
    const x = whole.s2 / (whole.d * dt);
    const block: NoiseBlock = { t: steps.t, diffusion: whole.d, sigmaSquared: whole.s2, sigmaSquaredSe: se, reducedError: x, steps: whole.n };
    this.last = block;
    this.blocks++;
    this.recordSeries(block);
    const t = steps.t;

    // Dominance of localization error, and whether the target precision is still reachable.
    const stepsPerSecond = blockSeconds > 0 ? whole.n / blockSeconds : whole.n / (o.blockFrames * dt);
    const meanLength = this.lengthCount > 0 ? this.lengthSum / this.lengthCount : 100;
    const epsilon = x - 2 * R;
    const reachable = Math.sqrt(pooledCveRelativeVariance(epsilon, Math.max(1, meanLength - 1), stepsPerSecond * o.analysisSeconds));
    let level: AlertLevel | null = null;
    if (whole.d > 0 && x > o.reducedErrorLimit) level = reachable > o.targetPrecision ? 'stop' : 'warn';
    else if (whole.d > 0 && reachable > o.targetPrecision) level = 'stop';
    const sigmaNm = 1000 * Math.sqrt(Math.max(0, whole.s2));
    this.emit(out, 'noise:dominant', level, t,
      level === 'stop'
        ? `Localization error dominates (x = ${x.toFixed(2)}, σ ≈ ${sigmaNm.toFixed(0)} nm) and at ${stepsPerSecond.toFixed(0)} steps/s the requested ${(100 * o.targetPrecision).toFixed(0)} % precision on D cannot be reached in ${o.analysisSeconds} s (about ${(100 * reachable).toFixed(1)} %). Refocus, raise the illumination or exposure, or record many more particles`
        : level === 'warn'
          ? `Localization error is large against the motion per frame (x = ${x.toFixed(2)}, σ ≈ ${sigmaNm.toFixed(0)} nm); D is still usable, but an MSD fit must use only the first few lags. Likely dim particles or defocus; more light or a longer frame interval lowers x`
          : 'Cleared: localization error is small against the motion per frame',
      { name: 'reduced error x = σ²/(DΔt)', value: x, threshold: o.reducedErrorLimit },
      { name: 'reachable relative SE of D', value: reachable, ci95: null, unit: '1' }, { perHour: 0 },
      { diffusion: whole.d, sigmaSquared: whole.s2, stepsPerSecond, analysisSeconds: o.analysisSeconds });

    // Model misfit: σ̂² significantly below 0.
    const zMisfit = se > 0 ? whole.s2 / se : 0;
    const misfit = zMisfit < -normalQuantile(1 - o.misfitAlpha);
    this.emit(out, 'noise:misfit', misfit ? 'info' : null, t,
      misfit
        ? `The step covariance gives a negative σ² (${whole.s2.toExponential(2)} µm², ${zMisfit.toFixed(1)} SE below 0): the steps are more anti-correlated than blur and noise allow. Likely the exposure time (blur) is set wrong, or the motion is sub-diffusive or confined`
        : 'Cleared: step covariance agrees with diffusion plus noise',
      { name: 'σ̂²/SE', value: zMisfit, threshold: -normalQuantile(1 - o.misfitAlpha) },
      { name: 'σ²', value: whole.s2, ci95: [whole.s2 - 1.96 * se, whole.s2 + 1.96 * se], unit: 'µm²' }, { pValue: o.misfitAlpha });

    // Self-starting two-sided CUSUM on the block σ̂² (Hawkins 1987): each block is compared with the
    // step-weighted mean of all earlier blocks outside an alarm, standardised by the variance of that
    // difference, v0/n + v0/N_before (recursive residuals: independent N(0, 1) under control, so the ARL
    // matches Siegmund's design and no short Phase-I baseline distorts it; Jones, Champ & Rigdon 2004).
    // v0, the per-step variance of σ̂², is pooled from the batch-means SEs of those blocks.
    const episodeOpen = (this.levels.get('noise:focus') ?? null) !== null;
    const n = whole.n;
    if (this.baselineCount < o.baselineBlocks) {
      this.absorb(whole.s2, se, n);
      if (this.baselineCount === o.baselineBlocks) {
        const blocksPerHour = 3600 / (o.blockFrames * dt);
        this.arl0Blocks = (2 * blocksPerHour) / o.falseWarnsPerHour;
        const h = siegmundThreshold(o.cusumK, this.arl0Blocks);
        this.charts = [new PageCusum(o.cusumK, h), new PageCusum(o.cusumK, h)];
        this.lastDesign = { k: o.cusumK, h };
        this.holdBlocks = Math.ceil(3 * siegmundArl(2 * o.cusumK, o.cusumK, h)) + 2;
      }
      return;
    }
    const charts = this.charts as PageCusum[];
    const base = this.baselineSum / this.baselineSteps;
    const perStepVariance = this.baselineVar / this.baselineCount;
    const z = (whole.s2 - base) / Math.sqrt(perStepVariance / n + perStepVariance / this.baselineSteps);
    const up = charts[0].push(z);
    const down = charts[1].push(-z);
    this.armedBlocks++;
    if (!episodeOpen && !up && !down) this.absorb(whole.s2, se, n);
    const ratio = Math.sqrt(Math.max(0, whole.s2) / Math.max(1e-30, base));
    const changeInX = whole.d > 0 ? (whole.s2 - base) / (whole.d * dt) : 0;
    const matters = Math.abs(changeInX) > o.reducedErrorChange;
    const current = this.levels.get('noise:focus') ?? null;
    let focusLevel: AlertLevel | null = current;
    if (up) this.totalSignals++;
    if (down) this.totalSignals++;
    if (up || down) {
      this.blocksSinceSignal = 0;
      focusLevel = matters || current === 'warn' ? 'warn' : 'info';
    } else if (current !== null) {
      this.blocksSinceSignal++;
      if (matters && current === 'info') focusLevel = 'warn';
      if (this.blocksSinceSignal > this.holdBlocks) focusLevel = null;
    }
    this.emit(out, 'noise:focus', focusLevel, t,
      focusLevel
        ? `Localization error has changed: σ ≈ ${sigmaNm.toFixed(0)} nm now against ${(1000 * Math.sqrt(Math.max(0, base))).toFixed(0)} nm before (×${ratio.toFixed(2)}; x moved by ${changeInX.toFixed(2)}). Likely a focus shift or a change in illumination; refocus or check the lamp`
        : 'Cleared: no further change of the localization error',
      { name: 'CUSUM on standardised σ̂²', value: Math.max(charts[0].lastSignalValue, charts[1].lastSignalValue), threshold: charts[0].h },
      { name: 'change of x = σ²/(DΔt)', value: changeInX, ci95: null, unit: '1' },
      { arl0Frames: (this.arl0Blocks * o.blockFrames) / 2, perHour: o.falseWarnsPerHour },
      { baselineSigmaSquared: base, sigmaSquared: whole.s2, sigmaRatio: ratio });
    if (focusLevel === null && current === 'warn') {
      // A change that mattered becomes the new reference: start the self-starting mean again.
      this.baselineSum = this.baselineSteps = this.baselineVar = this.baselineCount = 0;
      this.charts = undefined;
    }
  }

  private absorb(s2: number, se: number, n: number): void {
    this.baselineSum += s2 * n;
    this.baselineSteps += n;
    this.baselineVar += se * se * n;
    this.baselineCount++;
  }

  private emit(out: Condition[], key: string, level: AlertLevel | null, t: number, message: string,
    statistic: Condition['statistic'], effect: Condition['effect'], falseAlarm: Condition['falseAlarm'], detail?: Record<string, unknown>): void {
    if ((this.levels.get(key) ?? null) === level) return;
    this.levels.set(key, level);
    out.push({ key, kind: 'noise', level, t, message, statistic, falseAlarm, effect, ...(detail ? { detail } : {}) });
  }

  private recordSeries(block: NoiseBlock): void {
    this.seriesCounter++;
    if (this.seriesCounter < this.seriesStride) return;
    this.seriesCounter = 0;
    this.seriesT.push(block.t);
    this.seriesX.push(block.reducedError);
    this.seriesSigma.push(Math.sqrt(Math.max(0, block.sigmaSquared)));
    if (this.seriesT.length >= this.options.seriesPoints) {
      let j = 0;
      for (let i = 1; i < this.seriesT.length; i += 2, j++) {
        this.seriesT[j] = this.seriesT[i];
        this.seriesX[j] = this.seriesX[i];
        this.seriesSigma[j] = this.seriesSigma[i];
      }
      this.seriesT.length = this.seriesX.length = this.seriesSigma.length = j;
      this.seriesStride *= 2;
    }
  }
}
