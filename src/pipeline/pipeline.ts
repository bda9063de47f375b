import { AlertEngine, type AlertChange } from '../alerts/alertEngine.js';
import type { Condition } from '../alerts/condition.js';
import type { Detector } from '../detectors/detector.js';
import type { DetectorContext } from '../detectors/detectorContext.js';
import type { FrameSteps, StepSums } from '../detectors/frameSteps.js';
import type { Frame } from '../frame.js';
import { Linker } from '../linking/linker.js';
import { msdLags } from '../msd/msdLags.js';
import type { Report } from '../report.js';
import type { Tag } from '../tag.js';
import { buildReport, type ReportInput } from './buildReport.js';
import { resolvePipelineOptions, type PipelineOptions, type ResolvedPipelineOptions } from './pipelineOptions.js';
import {
  CVE_PAIRS,
  CVE_SUM,
  CVE_SUM_PRODUCTS,
  CVE_SUM_PRODUCTS_CORRECTED,
  CVE_SUM_SQUARES,
  CVE_SUM_SQUARES_CORRECTED,
  CVE_WIDTH,
  lagOffset,
  statsLayout,
  type StatsLayout,
} from './statsLayout.js';
import { TimeBlocks } from './timeBlocks.js';
import { TrackTable, type EndedTrack } from './trackTable.js';

/** Builds the detectors of a run (injected so that src/pipeline does not depend on each detector). */
export type DetectorFactory = (options: ResolvedPipelineOptions) => Detector[];

/** Counters of what the pipeline refused, for the report and the dashboard. */
export interface PipelineCounters {
  frames: number;
  centroids: number;
  rejectedFrames: number;
  backwardsFrames: number;
  duplicateFrames: number;
  duplicateIds: number;
  nonFinite: number;
}

/**
 * The one pipeline: frames in (one at a time, in time order), tracks, MSD accumulators,
 * estimators, detectors and alerts out. Pure and synchronous: the live server and the offline
 * `analyze` run this same class and get the same numbers for the same data.
 *
 * Work per frame is O(particles × lags) plus the detectors; memory is bounded by the live
 * tracks (one position ring of maxLag + 1 slots each), the time blocks (maxBlocks), the per-track
 * table (maxTrackTable) and the alerts (1000).
 *
 * Bad input policy: a frame whose time is not finite or goes backwards is rejected and counted
 * (and a backwards time raises a `timing` alert); a frame at an already-seen time slot is counted
 * as a duplicate and skipped; a centroid with a non-finite coordinate is skipped and counted; a
 * track id seen twice in one frame keeps its first position.
 *
 * @example
 * const pipeline = new Pipeline({ frameInterval: 0.033, radius: 0.5, temperature: 22 });
 * pipeline.push({ index: 0, t: 0, count: 1, x: Float64Array.of(1), y: Float64Array.of(2), id: Uint32Array.of(7) });
 * pipeline.report().input.frames // → 1
 */
export class Pipeline {
  readonly options: ResolvedPipelineOptions;
  private layout: StatsLayout | undefined;
  private tracks: TrackTable | undefined;
  private blocks: TimeBlocks | undefined;
  private readonly lags: Int32Array;
  private readonly ringSize: number;
  private readonly detectors: Detector[];
  private readonly alertEngine: AlertEngine;
  private readonly counters: PipelineCounters = {
    frames: 0,
    centroids: 0,
    rejectedFrames: 0,
    backwardsFrames: 0,
    duplicateFrames: 0,
    duplicateIds: 0,
    nonFinite: 0,
  };
  private readonly blur: number;
  private readonly tags: Tag[] = [];
  private readonly temperatureLog: { t: number; celsius: number }[] = [];
  private temperatureSum = 0;
  private temperatureCount = 0;
  private latestTemperature: number | undefined;
  private startTime: number | undefined;
  private lastTime = -Infinity;
  private lastSlot = -1;
  private lastFrameIndex: number | undefined;
  private dims = 2;
  // Global running totals of the covariance-estimator sums (the lag sums are not kept here: the
  // report adds the groups up), so the detectors' context can be refreshed cheaply.
  private globalStats: Float64Array = new Float64Array(0);
  // Cumulative common-mode drift X(slot) per axis, in a ring of maxLag + 1 slots.
  private driftRing: Float64Array = new Float64Array(0);
  private driftRingSlot: Int32Array = new Int32Array(0);
  private cumulativeDrift: Float64Array = new Float64Array(3);
  // Common-mode statistics over the run (per axis): Σm, Σ s²/N, ΣN·m², ΣN·m, ΣN, Σ within-frame SS, Σ(N−1).
  private commonMode: Float64Array = new Float64Array(21);
  private commonModeFrames = 0;
  private commonModeSlots = 0;
  private inverseCountFrames = 0;
  private inverseCountSteps = 0;
  // α2 at the first lag: Σ|Δr'|², Σ|Δr'|⁴, count.
  private nonGaussianSums = new Float64Array(3);
  private fieldBox = { xMin: Infinity, xMax: -Infinity, yMin: Infinity, yMax: -Infinity };
  private firstT: number | undefined;
  // Per-frame scratch, grown by doubling.
  private scratchCapacity = 0;
  private ids: Uint32Array = new Uint32Array(0);
  private trackIndex: Int32Array = new Int32Array(0);
  private steps!: FrameSteps;
  private stepZ: Float64Array = new Float64Array(0);
  // One-slot z steps of the frame (3-D), in step order, for the common-mode sums.
  private stepDz: Float64Array = new Float64Array(0);
  private gapDx: Float64Array = new Float64Array(0);
  private gapCount = 0;
  private context: DetectorContext;
  private framesSinceContext = 0;
  private alertChanges: AlertChange[] = [];
  private conditions: Condition[] = [];
  private readonly contextRefresher: ((pipeline: Pipeline) => Partial<DetectorContext>) | undefined;

  constructor(
    options: PipelineOptions,
    detectorFactory?: DetectorFactory,
    contextRefresher?: (pipeline: Pipeline) => Partial<DetectorContext>,
  ) {
    this.options = resolvePipelineOptions(options);
    const o = this.options;
    this.lags = msdLags(o.lagCount, o.maxLag, o.consecutiveLags);
    this.ringSize = this.lags[this.lags.length - 1] + 1;
    this.blur = o.frameInterval > 0 ? o.exposure / (6 * o.frameInterval) : 0;
    this.detectors = detectorFactory ? detectorFactory(this.options) : [];
    this.alertEngine = new AlertEngine();
    this.contextRefresher = contextRefresher;
    this.context = {
      diffusion: undefined,
      diffusionSe: undefined,
      localizationError: undefined,
      blur: this.blur,
      longestLag: this.lags[this.lags.length - 1] * o.frameInterval,
      reportedTemperature: o.temperature,
      expectedDiffusion: undefined,
      expectedDiffusionSd: undefined,
      radius: o.radius,
    };
    this.maxDisplacement = o.maxDisplacement;
  }

  private readonly maxDisplacement: number | undefined;
  private linkerInstance: Linker | undefined;

  /** The MSD lags in use, frames. */
  lagFrames(): Int32Array {
    return this.lags;
  }

  /** The motion-blur coefficient R = t_E/(6Δt). */
  blurCoefficient(): number {
    return this.blur;
  }

  /** Counters of refused input so far. */
  counts(): Readonly<PipelineCounters> {
    return this.counters;
  }

  /** The alert engine (for acknowledging alerts). */
  alerts(): AlertEngine {
    return this.alertEngine;
  }

  /** Alert changes caused by the last push (open, level, close); the array is reused. */
  lastAlertChanges(): readonly AlertChange[] {
    return this.alertChanges;
  }

  /**
   * Feed one frame. Frames must come in time order; see the class doc for what is refused.
   * O(count × lags).
   */
  push(frame: Frame): void {
    this.alertChanges = [];
    const o = this.options;
    const t = frame.t;
    if (!Number.isFinite(t) || !Number.isFinite(frame.index)) {
      this.counters.rejectedFrames++;
      return;
    }
    if (t < this.lastTime) {
      this.counters.rejectedFrames++;
      this.counters.backwardsFrames++;
      this.noteBackwards(t, frame.index);
      return;
    }
    if (this.startTime === undefined) {
      this.startTime = t;
      this.initialise(frame);
    }
    const slot = Math.round((t - (this.startTime as number)) / o.frameInterval);
    if (t === this.lastTime || slot <= this.lastSlot || (this.lastFrameIndex !== undefined && frame.index === this.lastFrameIndex)) {
      this.counters.duplicateFrames++;
      this.noteDuplicate(t, frame.index);
      return;
    }
    const slotGap = this.lastSlot < 0 ? 1 : slot - this.lastSlot;
    this.lastTime = t;
    this.lastSlot = slot;
    this.lastFrameIndex = frame.index;
    this.counters.frames++;
    this.counters.centroids += frame.count;
    this.processFrame(frame, slot, slotGap);
  }

  /** Feed one temperature reading from the sample's sensor log (°C at time t s). */
  pushTemperature(t: number, celsius: number): void {
    if (!Number.isFinite(t) || !Number.isFinite(celsius)) return;
    this.temperatureSum += celsius;
    this.temperatureCount++;
    this.latestTemperature = celsius;
    if (this.temperatureLog.length < 100_000) this.temperatureLog.push({ t, celsius });
    this.context.reportedTemperature = celsius;
  }

  /** Record an operator's tag (a point mark, or a segment with an end). */
  pushTag(tag: Tag): void {
    this.tags.push({ ...tag });
  }

  /** Tags recorded so far. */
  tagList(): readonly Tag[] {
    return this.tags;
  }

  /** End of input: ends every live track and closes open alerts. */
  finish(): void {
    if (this.tracks) {
      const ended = this.tracks.endAll();
      this.foldEnded(ended);
    }
    this.alertChanges = this.alertEngine.closeAll(this.lastTime);
  }

  /** The current report (CONTRACTS §3). O(live tracks × lags + blocks). */
  report(extra: Partial<ReportInput> = {}): Report {
    return buildReport({
      options: this.options,
      layout: this.layout,
      lags: this.lags,
      blur: this.blur,
      tracks: this.tracks,
      blocks: this.blocks,
      counters: this.counters,
      commonMode: this.commonMode,
      commonModeFrames: this.commonModeFrames,
      commonModeSlots: this.commonModeSlots,
      inverseCount: this.inverseCountSteps > 0 ? this.inverseCountFrames / this.inverseCountSteps : 0,
      nonGaussianSums: this.nonGaussianSums,
      detectors: this.detectors,
      alerts: this.alertEngine.alerts(),
      tags: this.tags,
      temperatureMean: this.temperatureCount > 0 ? this.temperatureSum / this.temperatureCount : this.options.temperature,
      temperatureLog: this.temperatureLog,
      dims: this.dims,
      firstTime: this.startTime,
      lastTime: Number.isFinite(this.lastTime) ? this.lastTime : undefined,
      ...extra,
    });
  }

  /**
   * Tell the pipeline that input at time `t` (s) was refused because time went backwards (a reader
   * that rejects such rows itself calls this, so the run still gets its `timing` alert).
   */
  rejectBackwards(t: number, where: number): void {
    this.counters.backwardsFrames++;
    this.noteBackwards(t, where);
  }

  /** Number of tracks (live and ended) that made at least one step. */
  tracksWithSteps(): number {
    return this.tracks ? this.tracks.tracksWithSteps() : 0;
  }

  /** Current detector context (estimates handed to detectors). */
  currentContext(): Readonly<DetectorContext> {
    return this.context;
  }

  /** Global running statistics record and its layout (for context refreshers). */
  globalStatistics(): { layout: StatsLayout | undefined; stats: Float64Array; driftVelocity: [number, number, number] } {
    return { layout: this.layout, stats: this.globalStats, driftVelocity: this.driftVelocity() };
  }

  /** Run-so-far common-mode drift velocity per axis, µm/s (Σm / (slots·Δt)). */
  driftVelocity(): [number, number, number] {
    const duration = this.commonModeSlots * this.options.frameInterval;
    if (!(duration > 0)) return [0, 0, 0];
    return [this.commonMode[0] / duration, this.commonMode[7] / duration, this.commonMode[14] / duration];
  }

  private initialise(frame: Frame): void {
    const o = this.options;
    this.dims = o.dims ?? (frame.z ? 3 : 2);
    this.layout = statsLayout(this.dims, this.lags.length);
    this.tracks = new TrackTable(this.layout, this.ringSize, o.groups, o.maxTrackTable);
    this.blocks = new TimeBlocks(this.layout, o.blockSeconds, o.maxBlocks);
    this.globalStats = new Float64Array(this.layout.width);
    this.frameCve = new Float64Array(this.layout.width);
    this.frameLag = new Float64Array(o.groups * this.layout.width);
    this.groupSeen = new Uint8Array(o.groups);
    this.groupFull = new Int32Array(o.groups);
    this.groupFastCount = new Int32Array(o.groups);
    this.groupFastStart = new Int32Array(o.groups + 1);
    this.groupFastNext = new Int32Array(o.groups);
    this.lagFromIndex = new Int32Array(this.lags.length);
    this.lagUsable = new Uint8Array(this.lags.length);
    this.lagDrift = new Float64Array(this.lags.length * 3);
    this.driftRing = new Float64Array(this.ringSize * 3);
    this.driftRingSlot = new Int32Array(this.ringSize).fill(-1);
    this.firstT = frame.t;
    this.ensureScratch(Math.max(64, frame.count));
  }

  private ensureScratch(count: number): void {
    if (count <= this.scratchCapacity) return;
    let capacity = Math.max(64, this.scratchCapacity);
    while (capacity < count) capacity *= 2;
    this.scratchCapacity = capacity;
    this.ids = new Uint32Array(capacity);
    this.trackIndex = new Int32Array(capacity);
    this.stepZ = new Float64Array(capacity);
    this.stepDz = new Float64Array(capacity);
    this.gapDx = new Float64Array(capacity * 3);
    this.fastGroup = new Uint16Array(capacity);
    this.fastSource = new Int32Array(capacity);
    this.fastCell = new Int32Array(capacity);
    this.fastX = new Float64Array(capacity);
    this.fastY = new Float64Array(capacity);
    this.steps = {
      t: 0,
      frameIndex: 0,
      slot: 0,
      slotGap: 1,
      frameInterval: this.options.frameInterval,
      exposure: this.options.exposure,
      count: 0,
      trackId: new Uint32Array(capacity),
      trackRow: new Int32Array(capacity),
      x: new Float64Array(capacity),
      y: new Float64Array(capacity),
      intensity: undefined,
      trackLength: new Uint32Array(capacity),
      stepCount: 0,
      stepParticle: new Int32Array(capacity),
      dx: new Float64Array(capacity),
      dy: new Float64Array(capacity),
      endedCount: 0,
      endedTrackId: new Uint32Array(capacity),
      endedLength: new Uint32Array(capacity),
      endedX: new Float64Array(capacity),
      endedY: new Float64Array(capacity),
      field: this.fieldBox,
      sums: { steps: 0, squares: 0, pairs: 0, products: 0, sumX: 0, sumY: 0, residualSquares: 0, residualSquaresX: 0, residualSquaresY: 0, residualPairs: 0, residualProducts: 0 },
    };
    this.intensityScratch = new Float64Array(capacity);
  }

  private intensityScratch: Float64Array = new Float64Array(0);

  private linkerFor(): Linker {
    if (!this.linkerInstance) {
      this.linkerInstance = new Linker({
        maxDisplacement: this.maxDisplacement,
        initialMaxDisplacement: this.options.initialMaxDisplacement,
        maxGapFrames: this.options.maxGapFrames,
      });
    }
    return this.linkerInstance;
  }

  private processFrame(frame: Frame, slot: number, slotGap: number): void {
    const o = this.options;
    const layout = this.layout as StatsLayout;
    const tracks = this.tracks as TrackTable;
    const dims = this.dims;
    const count = frame.count;
    this.ensureScratch(count);
    const steps = this.steps;
    const ids = this.ids;
    // 1. Track ids: given by the rig, or made by linking.
    if (frame.id) {
      ids.set(frame.id.subarray(0, count));
    } else {
      const velocity = this.driftVelocity();
      this.linkerFor().link(frame.x, frame.y, count, slot, {
        diffusion: this.context.diffusion,
        localizationVariance:
          this.context.localizationError !== undefined ? this.context.localizationError ** 2 : undefined,
        frameInterval: o.frameInterval,
        driftVelocity: [velocity[0], velocity[1]],
      }, ids);
    }
    // After dropped frames, tracks whose gap already exceeds the allowance end before this frame's
    // particles are matched to them (the end-of-frame sweep, step 5, runs only on frames that
    // arrive, so without this a track could bridge a longer gap than maxGapFrames).
    const endedEarly = slotGap > 1 ? tracks.endStale(slot - 1, o.maxGapFrames) : undefined;
    // 2. Present particles and their one-slot steps.
    let present = 0;
    let stepCount = 0;
    let gapCount = 0;
    const box = this.fieldBox;
    const z = dims === 3 ? frame.z : undefined;
    for (let p = 0; p < count; p++) {
      const x = frame.x[p];
      const y = frame.y[p];
      const zp = z ? z[p] : 0;
      if (!Number.isFinite(x) || !Number.isFinite(y) || !Number.isFinite(zp)) {
        this.counters.nonFinite++;
        continue;
      }
      const index = tracks.lookupOrCreate(ids[p], slot, frame.t);
      if (tracks.mark[index] === slot) {
        this.counters.duplicateIds++;
        continue;
      }
      tracks.mark[index] = slot;
      this.trackIndex[present] = index;
      steps.trackId[present] = ids[p];
      steps.trackRow[present] = index;
      steps.x[present] = x;
      steps.y[present] = y;
      this.stepZ[present] = zp;
      if (frame.intensity) this.intensityScratch[present] = frame.intensity[p];
      if (x < box.xMin) box.xMin = x;
      if (x > box.xMax) box.xMax = x;
      if (y < box.yMin) box.yMin = y;
      if (y > box.yMax) box.yMax = y;
      const last = tracks.lastSlot[index];
      if (last === slot - 1) {
        const cell = tracks.ringCell(index, last);
        steps.stepParticle[stepCount] = present;
        steps.dx[stepCount] = x - tracks.ring[2 * cell];
        steps.dy[stepCount] = y - tracks.ring[2 * cell + 1];
        stepCount++;
      } else if (last >= 0 && slot - last <= o.maxGapFrames + 1) {
        const cell = tracks.ringCell(index, last);
        const base = gapCount * 3;
        this.gapDx[base] = (x - tracks.ring[2 * cell]) / (slot - last);
        this.gapDx[base + 1] = (y - tracks.ring[2 * cell + 1]) / (slot - last);
        this.gapDx[base + 2] = dims === 3 ? (zp - tracks.ringZ[cell]) / (slot - last) : 0;
        gapCount++;
      }
      present++;
    }
    this.gapCount = gapCount;
    // 3. Common-mode step m(t) and its cumulative drift X(slot).
    const mean = this.frameMean;
    mean[0] = 0;
    mean[1] = 0;
    mean[2] = 0;
    if (stepCount > 0) {
      let zSum = 0;
      for (let s = 0; s < stepCount; s++) {
        mean[0] += steps.dx[s];
        mean[1] += steps.dy[s];
        if (dims === 3) {
          const p = steps.stepParticle[s];
          const dz = this.stepZ[p] - tracks.ringZ[tracks.ringCell(this.trackIndex[p], slot - 1)];
          this.stepDz[s] = dz;
          zSum += dz;
        }
      }
      mean[0] /= stepCount;
      mean[1] /= stepCount;
      mean[2] = zSum / stepCount;
      if (stepCount >= 2) this.accumulateCommonMode(stepCount, mean);
      this.commonModeSlots += 1;
      // Frames where the gap steps (after a drop) cover more slots are added by slot count below.
    } else if (gapCount > 0) {
      // After dropped frames nobody has a one-slot step: use the mean per-slot displacement.
      for (let g = 0; g < gapCount; g++) {
        mean[0] += this.gapDx[g * 3];
        mean[1] += this.gapDx[g * 3 + 1];
        mean[2] += this.gapDx[g * 3 + 2];
      }
      mean[0] /= gapCount;
      mean[1] /= gapCount;
      mean[2] /= gapCount;
    }
    const drift = this.cumulativeDrift;
    const bridged = stepCount > 0 ? 1 : slotGap;
    drift[0] += mean[0] * bridged;
    drift[1] += mean[1] * bridged;
    drift[2] += mean[2] * bridged;
    if (stepCount === 0 && gapCount > 0) {
      this.commonMode[0] += mean[0] * slotGap;
      this.commonMode[7] += mean[1] * slotGap;
      this.commonMode[14] += mean[2] * slotGap;
      this.commonModeSlots += slotGap;
    }
    const ringSlotIndex = slot % this.ringSize;
    this.driftRing[ringSlotIndex * 3] = drift[0];
    this.driftRing[ringSlotIndex * 3 + 1] = drift[1];
    this.driftRing[ringSlotIndex * 3 + 2] = drift[2];
    this.driftRingSlot[ringSlotIndex] = slot;
    // 4. Per particle: ring, CVE sums, lag sums.
    // Each sum goes to one destination in the loop: the track's own record (CVE sums, needed per
    // track) and small per-frame scratch records (the frame's CVE sums, and its lag sums per
    // group of tracks) that stay in cache; the scratch is folded into the run, group and block
    // totals once per frame below (O(groups × width) per frame instead of per particle and lag).
    const block = (this.blocks as TimeBlocks).blockFor(slot * o.frameInterval, frame.t);
    const blockStats = (this.blocks as TimeBlocks).stats;
    const blockOffset = block * layout.width;
    const width = layout.width;
    const lags = this.lags;
    const lagCount = lags.length;
    const ringSize = this.ringSize;
    const trackStats = tracks.stats;
    const trackWidth = tracks.trackWidth;
    const ring = tracks.ring;
    const ringZ = tracks.ringZ;
    const ringSlot = tracks.ringSlot;
    const capacity = tracks.capacity;
    const runStart = tracks.runStart;
    const trackGroup = tracks.group;
    const driftRing = this.driftRing;
    const driftRingSlot = this.driftRingSlot;
    const previousOffset = layout.previousOffset;
    const lagBase = layout.lagBase;
    const lagStride = 1 + 3 * dims;
    const frameCve = this.frameCve;
    const frameLag = this.frameLag;
    const groupSeen = this.groupSeen;
    // Slots since the last slot with no frame: lags reaching back no further than this find the
    // drift ring filled (no per-lag check needed).
    if (slotGap !== 1) this.driftRunStart = slot;
    const driftRunStart = this.driftRunStart;
    let nonGaussianR2 = 0;
    let nonGaussianR4 = 0;
    let nonGaussianCount = 0;
    const hereSlot = slot % ringSize;
    // Per lag, constant over the frame: the first ring cell of slot − n, and whether the drift ring
    // holds that slot (lagUsable: 0 = no, 1 = yes). The per-frame drift correction of a lag-n
    // displacement, D_n = X(slot) − X(slot − n), is also constant over the frame, so the corrected
    // sums are not accumulated per particle: Σ(Δ − D)² = ΣΔ² − 2DΣΔ + N·D² is formed per group when
    // the frame's scratch is folded (below), from the count, ΣΔ and ΣΔ² kept here.
    const lagFrom = this.lagFromIndex;
    const lagUsable = this.lagUsable;
    let reach = 0; // lags with slot − n ≥ 0
    for (let l = 0; l < lagCount; l++) {
      const n = lags[l];
      const from = slot - n;
      if (from < 0) break;
      let fromIndex = hereSlot - n;
      if (fromIndex < 0) fromIndex += ringSize;
      lagFrom[l] = fromIndex * capacity; // first cell of that slot's block
      lagUsable[l] = from >= driftRunStart || driftRingSlot[fromIndex] === from ? 1 : 0;
      const driftAt = fromIndex * 3;
      this.lagDrift[l * 3] = drift[0] - driftRing[driftAt];
      this.lagDrift[l * 3 + 1] = drift[1] - driftRing[driftAt + 1];
      this.lagDrift[l * 3 + 2] = drift[2] - driftRing[driftAt + 2];
      reach = l + 1;
    }
    let allUsable = true;
    for (let l = 0; l < reach; l++) if (lagUsable[l] === 0) allUsable = false;
    const longestReach = reach > 0 ? slot - lags[reach - 1] : slot;
    const groupFull = this.groupFull;
    const firstLagIsOne = lags[0] === 1;
    const fastGroup = this.fastGroup;
    const fastSource = this.fastSource;
    const groupFastCount = this.groupFastCount;
    let fastCount = 0;
    // The frame's CVE sums in 2-D, in locals (x then y: steps, ΣΔ, ΣΔ², pairs, ΣΔΔ₋₁, Σ(Δ + Δ₋₁),
    // ΣΔ'², ΣΔ'Δ'₋₁), added to the frame's scratch record after the loop; 3-D adds per step.
    let cveSteps = 0, cvePairs = 0;
    let sumX = 0, squaresX = 0, productsX = 0, pairSumX = 0, squaresCX = 0, productsCX = 0;
    let sumY = 0, squaresY = 0, productsY = 0, pairSumY = 0, squaresCY = 0, productsCY = 0;
    for (let p = 0; p < present; p++) {
      const index = this.trackIndex[p];
      const base = index * trackWidth;
      const px = steps.x[p];
      const py = steps.y[p];
      const pz = this.stepZ[p];
      const lastSlot = tracks.lastSlot[index];
      // One-slot step: CVE sums (raw and per-frame corrected).
      if (lastSlot === slot - 1 && dims === 2) {
        const lastCell = (lastSlot % ringSize) * capacity + index;
        const po = base + previousOffset;
        const hasPair = trackStats[po + 4] === slot - 1;
        const dx = px - ring[2 * lastCell];
        const dy = py - ring[2 * lastCell + 1];
        const dcx = dx - mean[0];
        const dcy = dy - mean[1];
        const previousX = trackStats[po];
        const previousY = trackStats[po + 1];
        const previousCX = trackStats[po + 2];
        const previousCY = trackStats[po + 3];
        addCve(trackStats, base, dx, dcx, hasPair, previousX, previousCX);
        addCve(trackStats, base + 8, dy, dcy, hasPair, previousY, previousCY);
        cveSteps++;
        sumX += dx;
        squaresX += dx * dx;
        squaresCX += dcx * dcx;
        sumY += dy;
        squaresY += dy * dy;
        squaresCY += dcy * dcy;
        if (hasPair) {
          cvePairs++;
          productsX += dx * previousX;
          pairSumX += dx + previousX;
          productsCX += dcx * previousCX;
          productsY += dy * previousY;
          pairSumY += dy + previousY;
          productsCY += dcy * previousCY;
        }
        trackStats[po] = dx;
        trackStats[po + 1] = dy;
        trackStats[po + 2] = dcx;
        trackStats[po + 3] = dcy;
        trackStats[po + 4] = slot;
        if (firstLagIsOne) {
          const r2 = dcx * dcx + dcy * dcy;
          nonGaussianR2 += r2;
          nonGaussianR4 += r2 * r2;
          nonGaussianCount += 1;
        }
      } else if (lastSlot === slot - 1) {
        const lastCell = (lastSlot % ringSize) * capacity + index;
        const hasPair = trackStats[base + previousOffset + 2 * dims] === slot - 1;
        let r2 = 0;
        for (let a = 0; a < dims; a++) {
          const d = a === 0 ? px - ring[2 * lastCell] : a === 1 ? py - ring[2 * lastCell + 1] : pz - ringZ[lastCell];
          const dc = d - mean[a];
          r2 += dc * dc;
          const c = a * CVE_WIDTH;
          const previous = trackStats[base + previousOffset + a];
          const previousCorrected = trackStats[base + previousOffset + dims + a];
          addCve(trackStats, base + c, d, dc, hasPair, previous, previousCorrected);
          addCve(frameCve, c, d, dc, hasPair, previous, previousCorrected);
          trackStats[base + previousOffset + a] = d;
          trackStats[base + previousOffset + dims + a] = dc;
        }
        trackStats[base + previousOffset + 2 * dims] = slot;
        // α2 at the first lag (the lag-1 displacement is this step; X(slot) − X(slot − 1) is m).
        if (firstLagIsOne) {
          nonGaussianR2 += r2;
          nonGaussianR4 += r2 * r2;
          nonGaussianCount += 1;
        }
      } else {
        // the track's unbroken run of slots starts here
        runStart[index] = slot;
      }
      // Lag sums over the ring (time-averaged MSD): count, ΣΔ and ΣΔ² per axis, into the frame's
      // scratch record of the track's group.
      const group = trackGroup[index];
      groupSeen[group] = 1;
      const groupBase = group * width + lagBase;
      // Lags reaching back no further than the track's unbroken run find its ring cell filled.
      const trackRunStart = runStart[index];
      if (allUsable && longestReach >= trackRunStart) {
        // The usual case: every reachable lag lies inside the track's unbroken run and the drift
        // ring's, so no checks. These tracks are summed after this loop, lag by lag over each
        // group's tracks (see `sumFullLags`); here they are only counted per group.
        fastGroup[fastCount] = group;
        fastSource[fastCount] = p;
        fastCount++;
        groupFastCount[group]++;
      } else {
        for (let l = 0; l < reach; l++) {
          if (lagUsable[l] === 0) continue;
          const cell = lagFrom[l] + index;
          if (slot - lags[l] < trackRunStart && ringSlot[cell] !== slot - lags[l]) continue;
          const at = groupBase + l * lagStride;
          const dx = px - ring[2 * cell];
          const dy = py - ring[2 * cell + 1];
          frameLag[at] += 1;
          frameLag[at + 1] += dx;
          frameLag[at + 2] += dx * dx;
          frameLag[at + 4] += dy;
          frameLag[at + 5] += dy * dy;
        }
      }
      if (dims === 3) {
        for (let l = 0; l < reach; l++) {
          if (lagUsable[l] === 0) continue;
          const cell = lagFrom[l] + index;
          if (slot - lags[l] < trackRunStart && ringSlot[cell] !== slot - lags[l]) continue;
          const dz = pz - ringZ[cell];
          const at = groupBase + l * lagStride;
          frameLag[at + 7] += dz;
          frameLag[at + 8] += dz * dz;
        }
      }
      // Store the position in the ring and update the track's bookkeeping.
      const here = hereSlot * capacity + index;
      ring[2 * here] = px;
      ring[2 * here + 1] = py;
      if (dims === 3) ringZ[here] = pz;
      ringSlot[here] = slot;
      tracks.touch(index, slot, frame.t);
      steps.trackLength[p] = tracks.length[index];
    }
    if (fastCount > 0) this.sumFullLags(fastCount, reach, lagStride);
    if (dims === 2) {
      // offsets as in addCve: 0 steps, 1 ΣΔ, 2 ΣΔ², 3 pairs, 4 ΣΔΔ₋₁, 5 Σ(Δ + Δ₋₁), 6 ΣΔ'², 7 ΣΔ'Δ'₋₁
      frameCve[0] += cveSteps; frameCve[1] += sumX; frameCve[2] += squaresX; frameCve[3] += cvePairs;
      frameCve[4] += productsX; frameCve[5] += pairSumX; frameCve[6] += squaresCX; frameCve[7] += productsCX;
      frameCve[8] += cveSteps; frameCve[9] += sumY; frameCve[10] += squaresY; frameCve[11] += cvePairs;
      frameCve[12] += productsY; frameCve[13] += pairSumY; frameCve[14] += squaresCY; frameCve[15] += productsCY;
    }
    this.nonGaussianSums[0] += nonGaussianR2;
    this.nonGaussianSums[1] += nonGaussianR4;
    this.nonGaussianSums[2] += nonGaussianCount;
    // Fold the frame's scratch into the run's totals (CVE part: run and block; lag part: the
    // group totals and the block), and clear it for the next frame.
    const global = this.globalStats;
    const cveEnd = previousOffset;
    // The frame's step sums for the detectors (x and y), read off its CVE scratch before the fold.
    const sums = steps.sums as StepSums;
    const cy = CVE_WIDTH;
    sums.steps = stepCount;
    sums.squares = frameCve[CVE_SUM_SQUARES] + frameCve[cy + CVE_SUM_SQUARES];
    sums.pairs = frameCve[CVE_PAIRS];
    sums.products = frameCve[CVE_SUM_PRODUCTS] + frameCve[cy + CVE_SUM_PRODUCTS];
    sums.sumX = frameCve[CVE_SUM];
    sums.sumY = frameCve[cy + CVE_SUM];
    sums.residualSquaresX = frameCve[CVE_SUM_SQUARES_CORRECTED];
    sums.residualSquaresY = frameCve[cy + CVE_SUM_SQUARES_CORRECTED];
    sums.residualSquares = sums.residualSquaresX + sums.residualSquaresY;
    // the previous steps were all made into slot − 1: residuals there are about a mean of ≥ 2 steps or not
    const previousResidualsUsable = this.stepsSlot === slot - 1 && this.stepsInSlot >= 2;
    sums.residualPairs = previousResidualsUsable ? frameCve[CVE_PAIRS] : 0;
    sums.residualProducts = previousResidualsUsable ? frameCve[CVE_SUM_PRODUCTS_CORRECTED] + frameCve[cy + CVE_SUM_PRODUCTS_CORRECTED] : 0;
    if (stepCount > 0) {
      this.stepsSlot = slot;
      this.stepsInSlot = stepCount;
    }
    if (stepCount > 0) {
      for (let i = 0; i < cveEnd; i++) {
        const v = frameCve[i];
        global[i] += v;
        blockStats[blockOffset + i] += v;
        frameCve[i] = 0;
      }
    }
    const groupLag = tracks.groupLag;
    for (let g = 0; g < groupSeen.length; g++) {
      if (groupSeen[g] === 0) continue;
      groupSeen[g] = 0;
      const from = g * width;
      // Counts of the tracks that took the unchecked path, then the corrected sums per lag and
      // axis: Σ(Δ − D)² = ΣΔ² − 2D·ΣΔ + N·D².
      const full = groupFull[g];
      groupFull[g] = 0;
      for (let l = 0; l < reach; l++) {
        const at = from + lagBase + l * lagStride;
        frameLag[at] += full;
        const count = frameLag[at];
        if (count === 0) continue;
        for (let a = 0; a < dims; a++) {
          const d = this.lagDrift[l * 3 + a];
          frameLag[at + 3 + 3 * a] = frameLag[at + 2 + 3 * a] - 2 * d * frameLag[at + 1 + 3 * a] + count * d * d;
        }
      }
      for (let i = lagBase; i < width; i++) {
        const v = frameLag[from + i];
        if (v === 0) continue;
        groupLag[from + i] += v;
        blockStats[blockOffset + i] += v;
        frameLag[from + i] = 0;
      }
    }
    // 5. Tracks unseen for more than maxGapFrames end now.
    const ended = tracks.endStale(slot, o.maxGapFrames);
    this.foldEnded(endedEarly !== undefined && endedEarly.length > 0 ? [...endedEarly, ...ended] : ended);
    // 6. Detectors and alerts.
    steps.t = frame.t;
    steps.frameIndex = frame.index;
    steps.slot = slot;
    steps.slotGap = slotGap;
    steps.count = present;
    steps.stepCount = stepCount;
    steps.intensity = frame.intensity ? this.intensityScratch : undefined;
    this.framesSinceContext++;
    if (this.framesSinceContext >= 10 || this.context.diffusion === undefined) {
      this.framesSinceContext = 0;
      if (this.contextRefresher) Object.assign(this.context, this.contextRefresher(this));
    }
    if (this.detectors.length > 0) {
      this.conditions.length = 0;
      for (const detector of this.detectors) {
        const raised = detector.push(steps, this.context);
        for (const condition of raised) this.conditions.push(condition);
      }
      if (this.conditions.length > 0) this.alertChanges.push(...this.alertEngine.push(this.conditions));
    }
    const closed = this.alertEngine.tick(frame.t);
    if (closed.length > 0) this.alertChanges.push(...closed);
  }

  /**
   * The lag sums of the tracks that took the unchecked path in `processFrame` (every reachable lag
   * inside the track's run): the tracks are ordered by group (a counting sort, stable, O(tracks +
   * groups)), then each group's count, ΣΔ and ΣΔ² per axis and lag are summed over its tracks in
   * local variables and added to the frame's scratch once per group and lag. The same sums as one
   * read-modify-write per track, lag and sum into the scratch, in the same order within a group,
   * but the running sums stay in local variables (1.03–1.11× for the core in A/B runs: the loop
   * is bound by its loads from the ring more than by the stores). Two lags per pass over a group
   * share each track's loads of its cell and position (1.19× for the core by interleaved A/B;
   * three per pass was 0.96× against two; why was not profiled).
   * x and y only; the z lag sums are formed per track in `processFrame`.
   */
  private sumFullLags(fastCount: number, reach: number, lagStride: number): void {
    const layout = this.layout as StatsLayout;
    const tracks = this.tracks as TrackTable;
    const groups = this.groupFastCount.length;
    const counts = this.groupFastCount;
    const start = this.groupFastStart;
    let offset = 0;
    for (let g = 0; g < groups; g++) {
      start[g] = offset;
      offset += counts[g];
    }
    start[groups] = offset;
    const next = this.groupFastNext;
    next.set(start.subarray(0, groups));
    const cells = this.fastCell;
    const xs = this.fastX;
    const ys = this.fastY;
    const steps = this.steps;
    for (let k = 0; k < fastCount; k++) {
      const p = this.fastSource[k];
      const at = next[this.fastGroup[k]]++;
      cells[at] = this.trackIndex[p];
      xs[at] = steps.x[p];
      ys[at] = steps.y[p];
    }
    const ring = tracks.ring;
    const lagFrom = this.lagFromIndex;
    const frameLag = this.frameLag;
    const width = layout.width;
    const lagBase = layout.lagBase;
    const groupFull = this.groupFull;
    for (let g = 0; g < groups; g++) {
      const begin = start[g];
      const end = start[g + 1];
      counts[g] = 0;
      if (begin === end) continue;
      groupFull[g] += end - begin;
      const groupBase = g * width + lagBase;
      let l = 0;
      // Two lags per pass over the group's tracks: each track's cell and position are loaded once
      // for both (the sums for each lag are formed in the same order as one lag per pass).
      for (; l + 1 < reach; l += 2) {
        const from = lagFrom[l];
        const fromNext = lagFrom[l + 1];
        let sumX = 0;
        let squaresX = 0;
        let sumY = 0;
        let squaresY = 0;
        let sumXNext = 0;
        let squaresXNext = 0;
        let sumYNext = 0;
        let squaresYNext = 0;
        for (let k = begin; k < end; k++) {
          const track = cells[k];
          const x = xs[k];
          const y = ys[k];
          const cell = 2 * (from + track);
          const cellNext = 2 * (fromNext + track);
          const dx = x - ring[cell];
          const dy = y - ring[cell + 1];
          const dxNext = x - ring[cellNext];
          const dyNext = y - ring[cellNext + 1];
          sumX += dx;
          squaresX += dx * dx;
          sumY += dy;
          squaresY += dy * dy;
          sumXNext += dxNext;
          squaresXNext += dxNext * dxNext;
          sumYNext += dyNext;
          squaresYNext += dyNext * dyNext;
        }
        const at = groupBase + l * lagStride;
        frameLag[at + 1] += sumX;
        frameLag[at + 2] += squaresX;
        frameLag[at + 4] += sumY;
        frameLag[at + 5] += squaresY;
        const atNext = at + lagStride;
        frameLag[atNext + 1] += sumXNext;
        frameLag[atNext + 2] += squaresXNext;
        frameLag[atNext + 4] += sumYNext;
        frameLag[atNext + 5] += squaresYNext;
      }
      for (; l < reach; l++) {
        const from = lagFrom[l];
        let sumX = 0;
        let squaresX = 0;
        let sumY = 0;
        let squaresY = 0;
        for (let k = begin; k < end; k++) {
          const cell = from + cells[k];
          const dx = xs[k] - ring[2 * cell];
          const dy = ys[k] - ring[2 * cell + 1];
          sumX += dx;
          squaresX += dx * dx;
          sumY += dy;
          squaresY += dy * dy;
        }
        const at = groupBase + l * lagStride;
        frameLag[at + 1] += sumX;
        frameLag[at + 2] += squaresX;
        frameLag[at + 4] += sumY;
        frameLag[at + 5] += squaresY;
      }
    }
  }

  // Scratch of `sumFullLags`: per unchecked track its group and particle, then the tracks ordered
  // by group (ring row and position); per group the count, first position and next free place.
  private fastGroup: Uint16Array = new Uint16Array(0);
  private fastSource: Int32Array = new Int32Array(0);
  private fastCell: Int32Array = new Int32Array(0);
  private fastX: Float64Array = new Float64Array(0);
  private fastY: Float64Array = new Float64Array(0);
  private groupFastCount: Int32Array = new Int32Array(0);
  private groupFastStart: Int32Array = new Int32Array(0);
  private groupFastNext: Int32Array = new Int32Array(0);

  private frameMean = new Float64Array(3);
  // The last slot with one-frame steps, and how many (for StepSums.residualPairs).
  private stepsSlot = -2;
  private stepsInSlot = 0;
  // Per-frame scratch records (see processFrame step 4): the frame's CVE sums, and its lag sums
  // per group (groups × width), with the groups seen in the frame; allocated once per run.
  private frameCve: Float64Array = new Float64Array(0);
  private frameLag: Float64Array = new Float64Array(0);
  private groupSeen: Uint8Array = new Uint8Array(0);
  // Tracks per group that took the unchecked lag path this frame (their counts, added at the fold).
  private groupFull: Int32Array = new Int32Array(0);
  private driftRunStart = 0;
  // Per-lag values constant over a frame (see processFrame step 4), allocated once per run.
  private lagFromIndex: Int32Array = new Int32Array(0);
  private lagUsable: Uint8Array = new Uint8Array(0);
  private lagDrift: Float64Array = new Float64Array(0);

  private accumulateCommonMode(stepCount: number, mean: Float64Array): void {
    const steps = this.steps;
    const cm = this.commonMode;
    // within-frame sums of squares per axis, for s_t (self-calibrating SE) and the pooled variance
    let ssx = 0;
    let ssy = 0;
    let ssz = 0;
    for (let s = 0; s < stepCount; s++) {
      const ex = steps.dx[s] - mean[0];
      const ey = steps.dy[s] - mean[1];
      ssx += ex * ex;
      ssy += ey * ey;
    }
    if (this.dims === 3) {
      for (let s = 0; s < stepCount; s++) {
        const ez = this.stepDz[s] - mean[2];
        ssz += ez * ez;
      }
    }
    const n = stepCount;
    // per axis a at offset 7a: Σm, Σs²/N, ΣNm², ΣNm, ΣN, within-frame SS, its degrees of freedom
    for (let a = 0; a < this.dims; a++) {
      const offset = 7 * a;
      const m = mean[a];
      const ss = a === 0 ? ssx : a === 1 ? ssy : ssz;
      const s2 = ss / (n - 1);
      cm[offset] += m; // Σ m
      cm[offset + 1] += s2 / n; // Σ s²/N (variance of v̂'s numerator)
      cm[offset + 2] += n * m * m; // Σ N m²
      cm[offset + 3] += n * m; // Σ N m
      cm[offset + 4] += n; // Σ N
      cm[offset + 5] += ss; // within-frame SS
      cm[offset + 6] += n - 1; // its degrees of freedom
    }
    this.commonModeFrames++;
    this.inverseCountFrames += 1;
    this.inverseCountSteps += n;
  }

  private foldEnded(ended: readonly EndedTrack[]): void {
    const steps = this.steps;
    let e = 0;
    for (const track of ended) {
      if (steps && e < steps.endedTrackId.length) {
        steps.endedTrackId[e] = track.id;
        steps.endedLength[e] = track.length;
        steps.endedX[e] = track.lastX;
        steps.endedY[e] = track.lastY;
        e++;
      }
    }
    if (steps) steps.endedCount = e;
  }

  private noteBackwards(t: number, frameIndex: number): void {
    let handled = false;
    for (const detector of this.detectors) {
      const candidate = detector as unknown as { noteBackwards?: (t: number, index: number) => Condition[] | void };
      if (typeof candidate.noteBackwards === 'function') {
        const raised = candidate.noteBackwards(t, frameIndex);
        handled = true;
        if (raised && raised.length > 0) this.alertChanges.push(...this.alertEngine.push(raised));
      }
    }
    if (!handled) {
      // Without a timing detector the pipeline still says so: time going backwards is an error of
      // the rig's clock or of the file's order (CONTRACTS §2).
      this.alertChanges.push(
        ...this.alertEngine.push([
          {
            key: 'timing:backwards',
            kind: 'timing',
            level: 'warn',
            t,
            message: `time went backwards at ${t} s (input ${frameIndex}): those rows were refused; check the rig's clock and the file's order`,
            statistic: { name: 'backwards', value: this.counters.backwardsFrames, threshold: 0 },
            falseAlarm: {},
            effect: null,
          },
        ]),
      );
    }
  }

  private noteDuplicate(t: number, frameIndex: number): void {
    for (const detector of this.detectors) {
      const candidate = detector as unknown as { noteDuplicate?: (t: number, index: number) => Condition[] | void };
      if (typeof candidate.noteDuplicate === 'function') {
        const raised = candidate.noteDuplicate(t, frameIndex);
        if (raised && raised.length > 0) this.alertChanges.push(...this.alertEngine.push(raised));
      }
    }
  }
}

/**
 * Adds one step to a covariance-estimator block at `offset`: raw step d, corrected step dc, and
 * (when the previous step of the same track was one slot earlier) the adjacent-pair products.
 */
function addCve(
  target: Float64Array,
  offset: number,
  d: number,
  dc: number,
  hasPair: boolean,
  previous: number,
  previousCorrected: number,
): void {
  // The offsets are written as numbers, not as the imported CVE_* constants (statsLayout.ts):
  // in this per-particle call each imported constant costs a load and a check, about 4 % of the
  // core (A/B, 2026-12-02). 0 steps, 1 ΣΔ, 2 ΣΔ², 3 pairs, 4 ΣΔΔ₋₁, 5 Σ(Δ + Δ₋₁), 6 ΣΔ'², 7 ΣΔ'Δ'₋₁.
  target[offset + 0] += 1;
  target[offset + 1] += d;
  target[offset + 2] += d * d;
  target[offset + 6] += dc * dc;
  if (hasPair) {
    target[offset + 3] += 1;
    target[offset + 4] += d * previous;
    target[offset + 5] += d + previous;
    target[offset + 7] += dc * previousCorrected;
  }
}

export { lagOffset };
