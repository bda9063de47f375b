import type { AlertLevel, Condition } from '../../alerts/condition.js';
import { DIMER_DIFFUSION_RATIO } from '../../physics/clusterDiffusionRatios.js';
import { clopperPearson, normalUpperTail } from '../../stats/quantiles.js';
import type { Detector } from '../detector.js';
import type { DetectorContext } from '../detectorContext.js';
import type { FrameSteps } from '../frameSteps.js';
import { medianInPlace } from '../drift/medianInPlace.js';
import { TrackCache } from '../trackCache.js';
import { persistenceFrames } from './chancePersistence.js';
import { clarkEvans, NearestNeighbourScratch, type ClarkEvansResult } from './clarkEvans.js';
import { ClosePairCandidates } from './closePairCandidates.js';
import { ClosePairEpisodes } from './closePairEpisodes.js';
import { countUpperTail } from './countUpperTail.js';
import { intensityMixture } from './intensityMixture.js';
import { segmentRelativeSe } from './segmentRelativeSe.js';
import { INTENSITY_HISTORY, TrackRecords } from './trackRecord.js';

/** Options of {@link ClumpingDetector}; every field has a default. */
export interface ClumpingOptions {
  /** Share of the false-warn budget, warns per hour of data (default 0.15), split equally over the 4 signals' looks. */
  falseWarnsPerHour: number;
  /** Length of the non-overlapping blocks on which each signal is tested once, s (default 10). */
  blockSeconds: number;
  /** Blocks at the start of the run that form the baseline (nearest-neighbour z, close-pair rate, D, intensity noise) (default 6). */
  baselineBlocks: number;
  /** Close-pair distance r_c, µm (default 3 × the radius in the context, else 1.5 µm). */
  closeDistance: number | undefined;
  /** Merge distance r_m between an ended track's last position and a continuing track, µm (default r_c). */
  mergeDistance: number | undefined;
  /** Steps per per-track D segment (non-overlapping; above the look rate, steps between looks) (default 150: about 14 % SE at x = 0, detectors.md §6d). */
  segmentSteps: number;
  /** D of a dimer relative to a monomer (default 0.718, estimators.md §8). */
  dimerRatio: number;
  /** A segment is slow when its D < slowCut × D_monomer (default 0.78: between 0.718 and 1, nearer the dimer, so chance slow segments are rare). */
  slowCut: number;
  /** Dimer fraction at or above which a warn becomes `stop` (default 0.2). */
  stopFraction: number;
  /** Smallest dimer fraction that matters: below it agreeing signals give `info` (default 0.03). */
  minimumFraction: number;
  /** A signal counts as agreeing for this many blocks after it was significant (default 3). */
  agreementBlocks: number;
  /** Blocks of segments per slow-track look (non-overlapping; default 3): more segments per look, fewer looks. */
  slowTrackBlocks: number;
  /** A warn or stop is held for this many blocks after two signs last agreed (default 6). */
  holdBlocks: number;
  /** Per-look significance of every signal; default: falseWarnsPerHour / (4 × blocks per hour). */
  signalAlpha: number | undefined;
  /** Smallest SD of ln I per frame assumed for the merge test (default 0.02). */
  intensityNoiseFloor: number;
  /** Brightness ratio after/before a merge that counts as "about twice" (default [1.4, 3]). */
  mergeRatioRange: [number, number];
  /** Frames of intensity on each side of a merge for the medians (default 5, at least 5). */
  mergeWindowFrames: number;
  /** Most entries kept in each list of the summary and the alert detail (default 20). */
  maxListed: number;
  /**
   * Baseline frames per block on which the Clark–Evans z is computed, evenly spaced (default 50;
   * every frame when a block has fewer). Successive frames' z are strongly correlated (the
   * pattern changes only as particles move a fair part of their spacing), so the baseline mean z
   * over 50 frames a block is as good as over every frame, at a fraction of the cost.
   */
  baselineNearestNeighbourFrames: number;
  /**
   * Most looks per second, Hz (default 200). Above 2·lookHz − 1 frames/s the close pairs and the
   * per-track D segments are taken on the frames of slot 0, k, 2k, … (k = ⌊rate/lookHz⌋), as a
   * camera sampling every k·Δt would see them: the segments from each track's displacement since
   * its previous look, the persistence length L designed at k·Δt (the chance-persistence law
   * carries the sampling interval in r_eff). The signals keep their false-alarm design and their
   * delays in seconds. Nearest neighbours and merges still see every frame.
   */
  lookHz: number;
}

/** One recorded merge: track `a` ended beside track `b`, which then became brighter. */
export interface MergeEvent {
  a: number;
  b: number;
  /** Time the merge was recognised, s. */
  t: number;
  /** Brightness ratio I_after/I_before of track b (median over the windows). */
  ratio: number;
  /** z of the log-intensity jump against the noise of ln I. */
  z: number;
}

/** What {@link ClumpingDetector.summary} returns (bounded in size by `maxListed`). */
export interface ClumpingSummary {
  /** Clark–Evans statistic of the last block (edge-corrected) and the baseline mean z. */
  nearestNeighbour: { ratio: number; z: number; baselineZ: number | null } | null;
  /** Close pairs held for ≥ L frames, most recent first. */
  persistentPairs: { a: number; b: number; since: number; frames: number }[];
  /** Merge events, most recent first. */
  merges: MergeEvent[];
  /** Fraction of tracks diffusing as dimers (segments of the last `agreementBlocks` blocks), with a 95 % CI, or null. */
  dimerFraction: { value: number; ci95: [number, number] } | null;
  /**
   * Fraction of the tracks in view that are dimers by brightness (detectors.md §3e): the tracks'
   * median log intensities at the last block's end, fitted by a mixture of monomers and
   * twice-as-bright dimers, with a profile-likelihood 95 % CI; reported, not alerted on. Null without
   * intensities or with fewer than 30 tracks of 10 or more readings.
   */
  intensityDimerFraction: {
    value: number;
    ci95: [number, number];
    /** Tracks fitted (each once, by its median). */
    tracks: number;
    /** exp μ̂, the monomer's median intensity (intensity units), and ŝ, the spread of ln I within a population. */
    monomerIntensity: number;
    logSpread: number;
    /** Data time of the fit, s. */
    t: number;
  } | null;
  /** Track-id pairs currently held together. */
  pairs: [number, number][];
  /** Design: block length, persistence length L, per-look α, baseline values. */
  design: {
    blockFrames: number;
    persistenceFrames: number | null;
    /** k, frames per look of the close pairs and the D segments (1 up to 2·lookHz − 1 frames/s). */
    lookFrames: number | null;
    closeDistance: number | null;
    signalAlpha: number | null;
    baselineDiffusion: number | null;
    baselineClosePairsPerFrame: number | null;
    intensityNoise: number | null;
  };
  /** Looks and significant looks per signal since the baseline ended, and the time of the first significant look (s). */
  looks: Record<SignalName, SignalLooks>;
}

/** Look counts of one signal. */
export interface SignalLooks {
  looks: number;
  significant: number;
  /** Time of the first significant look, s, or null. */
  firstSignificant: number | null;
}

/** The four signals of the detector. */
export type SignalName = 'nearestNeighbour' | 'persistentPairs' | 'merges' | 'slowTracks';
const SIGNALS: readonly SignalName[] = ['nearestNeighbour', 'persistentPairs', 'merges', 'slowTracks'];

const DEFAULTS: ClumpingOptions = {
  falseWarnsPerHour: 0.15,
  blockSeconds: 10,
  baselineBlocks: 6,
  closeDistance: undefined,
  mergeDistance: undefined,
  segmentSteps: 150,
  dimerRatio: DIMER_DIFFUSION_RATIO,
  slowCut: 0.78,
  stopFraction: 0.2,
  minimumFraction: 0.03,
  agreementBlocks: 3,
  holdBlocks: 6,
  slowTrackBlocks: 3,
  signalAlpha: undefined,
  intensityNoiseFloor: 0.02,
  mergeRatioRange: [1.4, 3],
  mergeWindowFrames: 5,
  maxListed: 20,
  baselineNearestNeighbourFrames: 50,
  lookHz: 200,
};

const KEY = 'clumping';
/** Intensity readings a track needs to enter the intensity-population fit. */
const POPULATION_MIN_READINGS = 10;
// Var(median of n normal values) ≈ (π/2)·s²/n (large-n asymptote; slightly conservative at n = 5).
const MEDIAN_VARIANCE_FACTOR = Math.PI / 2;

interface PendingMerge { a: number; b: number; split: number; t: number; before: number; beforeCount: number }
interface BlockTallies {
  persistent: Set<string>;
  mergeTests: number;
  bestMerge: MergeEvent | null;
  bestMergeP: number;
  segments: number;
  slow: number;
}

function median(values: Float64Array, n: number): number {
  const sorted = Array.from(values.subarray(0, n)).sort((p, q) => p - q);
  return n % 2 === 1 ? sorted[(n - 1) / 2] : 0.5 * (sorted[n / 2 - 1] + sorted[n / 2]);
}

function fmt(value: number, digits = 2): string {
  return Number.isFinite(value) ? value.toFixed(digits) : 'n/a';
}

/**
 * Clumping and aggregation detector (kind `clumping`), detectors.md §3. Four signals, each
 * tested once per non-overlapping block of `blockSeconds`, so the looks are countable:
 *
 * - nearest neighbours: the Clark & Evans (1954) z with the Donnelly (1978) edge correction on
 *   the block's last frame, against the mean z of this run's baseline blocks (hard-core
 *   exclusion and the optical resolution change small separations, so CSR itself is not the
 *   reference); one-sided, clumping when z falls;
 * - persistent close pairs: pairs within r_c for ≥ L consecutive frames, each counted once in the
 *   block where it reaches L, with L chosen from the chance-persistence law
 *   S(t) ≈ 0.69·exp(−5.783·2Dt/r_eff²) so that chance encounters give at most α such pairs per block;
 * - merges: a track ends within r_m of a continuing track whose ln I steps up and stays up for
 *   L frames (medians of ≥ 5 frames each side against the noise SD of ln I; Bonferroni over the
 *   block's candidates), so unresolved chance encounters, which split again, do not count; each
 *   continuing track is counted once;
 * - slow tracks: per-track CVE D (Vestergaard, Blainey & Flyvbjerg 2014) on non-overlapping
 *   segments of `segmentSteps` steps, classified below slowCut·D_monomer; a binomial test of the
 *   slow count against the chance rate (theory at the current x, or the baseline rate, whichever
 *   is larger, so heterogeneous samples do not fire); gives the dimer fraction with a CI.
 *
 * A signal significant in one of the last `agreementBlocks` blocks is active (a merge also while
 * its brightened track is in view, a persistent pair while it is held and a condition is open). Two active signals
 * and a dimer fraction ≥ `minimumFraction` → `warn`, ≥ `stopFraction` → `stop`; one active
 * signal (or too small an effect) → `info`. Every warn onset needs a fresh significant look, so
 * false warns per hour ≤ Σα × blocks per hour = `falseWarnsPerHour` (Bonferroni).
 *
 * Cost per frame: O(N) on average (a list of close-pair candidates kept across frames and rebuilt
 * on a uniform grid, closePairCandidates.ts; Clark–Evans on 50 frames of each baseline block and on block-end
 * frames), memory O(tracks present + open pairs).
 *
 * @example
 * const clumping = new ClumpingDetector({ blockSeconds: 5 });
 * clumping.push(frameSteps, context);          // → [] while nothing is wrong
 * clumping.summary().nearestNeighbour;          // → { ratio: 1.01, z: 0.3, baselineZ: 0.1 } after a block
 */
export class ClumpingDetector implements Detector<ClumpingSummary> {
  readonly name = 'clumping';
  private readonly options: ClumpingOptions;
  // Track id → its record number in `records` (the per-track values, in typed arrays).
  private readonly tracks = new TrackCache<number>();
  private readonly records = new TrackRecords();
  // The record number of each particle of the frame being pushed (reused; entries past the
  // frame's count are stale and never read).
  private recordOf = new Int32Array(256);
  private readonly episodes = new ClosePairEpisodes();
  private readonly scratch = new NearestNeighbourScratch();
  private pairKeys = new Float64Array(64);
  // A look frame's steps at k > 1 (displacements since the previous look, µm) and their particles.
  private lookDx = new Float64Array(64);
  private lookDy = new Float64Array(64);
  private lookOwner = new Int32Array(64);
  /** Close-pair list, skin r_c (made once r_c is known). */
  private candidates: ClosePairCandidates | undefined;
  private readonly before: Float64Array;
  private readonly after: Float64Array;
  private pending: PendingMerge[] = [];
  // timing and design
  private frameInterval = 0;
  private blockFrames = 0;
  private blocksPerHour = 0;
  private alpha = 0;
  private closeDistance = 0;
  private mergeDistance = 0;
  /** Persistence length L in frames ((L_looks − 1)·k + 1), and in close-pair looks. */
  private persistence = 0;
  private persistenceLooks = 0;
  /** k: frames per look; the look index (slot/k) of the last close-pair look. */
  private lookFrames = 1;
  private lastLook = -1;
  // Clark–Evans on every `nearestNeighbourStride`-th baseline frame (and every block's last frame)
  private nearestNeighbourStride = 1;
  // baseline
  private baselineDone = false;
  private baselineLooks = 0;
  private baselineClosePairs = 0;
  private baselineCsrPairs = 0;
  private baselineZSum = 0;
  private baselineZCount = 0;
  private baselineZ = Number.NaN;
  private baselineSegments: number[] = [];
  private baselineSlowRate = 0;
  private diffusionMonomer = Number.NaN;
  private pooledSquares = 0;
  private pooledSquareCount = 0;
  private pooledCross = 0;
  private pooledCrossCount = 0;
  private intensitySqDiff = 0;
  private intensityDiffs = 0;
  private intensityNoise = Number.NaN;
  // blocks
  private framesInBlock = 0;
  private blockIndex = 0;
  private tallies: BlockTallies = ClumpingDetector.emptyTallies();
  private readonly lastSignificant: Record<SignalName, number> = { nearestNeighbour: -1e9, persistentPairs: -1e9, merges: -1e9, slowTracks: -1e9 };
  private readonly looks: Record<SignalName, SignalLooks> = {
    nearestNeighbour: { looks: 0, significant: 0, firstSignificant: null },
    persistentPairs: { looks: 0, significant: 0, firstSignificant: null },
    merges: { looks: 0, significant: 0, firstSignificant: null },
    slowTracks: { looks: 0, significant: 0, firstSignificant: null },
  };
  private blockTime = 0;
  private lastNearest: ClarkEvansResult | undefined;
  private dimerFraction: { value: number; ci95: [number, number] } | null = null;
  private intensityPopulation: ClumpingSummary['intensityDimerFraction'] = null;
  private populationScratch = new Float64Array(256);
  private populationCount = 0;
  private populationTime = 0;
  private populationFitted = true;
  private readonly medianScratch = new Float64Array(INTENSITY_HISTORY);
  private readonly recentSegments: [number, number][] = [];
  private slowPending: [number, number] = [0, 0];
  private slowNote = '';
  private level: AlertLevel | null = null;
  private lastAgreement = -1e9;
  private readonly persistentLog: { a: number; b: number; since: number; frames: number }[] = [];
  private readonly merges: MergeEvent[] = [];

  /** @throws RangeError naming the option when an option is out of range */
  constructor(options: Partial<ClumpingOptions> = {}) {
    const o: ClumpingOptions = { ...DEFAULTS, ...options };
    positive(o.falseWarnsPerHour, 'falseWarnsPerHour');
    positive(o.blockSeconds, 'blockSeconds');
    if (!Number.isInteger(o.baselineBlocks) || o.baselineBlocks < 1) throw new RangeError('clumping requires baselineBlocks to be an integer >= 1');
    if (o.closeDistance !== undefined) positive(o.closeDistance, 'closeDistance');
    if (o.mergeDistance !== undefined) positive(o.mergeDistance, 'mergeDistance');
    if (!Number.isInteger(o.segmentSteps) || o.segmentSteps < 10) throw new RangeError('clumping requires segmentSteps to be an integer >= 10');
    if (!(o.dimerRatio > 0 && o.dimerRatio < 1)) throw new RangeError('clumping requires dimerRatio in (0, 1)');
    if (!(o.slowCut > o.dimerRatio && o.slowCut < 1)) throw new RangeError('clumping requires slowCut in (dimerRatio, 1)');
    if (!(o.stopFraction > 0 && o.stopFraction <= 1)) throw new RangeError('clumping requires stopFraction in (0, 1]');
    if (!(o.minimumFraction >= 0 && o.minimumFraction < o.stopFraction)) throw new RangeError('clumping requires minimumFraction in [0, stopFraction)');
    if (!Number.isInteger(o.agreementBlocks) || o.agreementBlocks < 1) throw new RangeError('clumping requires agreementBlocks to be an integer >= 1');
    if (!Number.isInteger(o.slowTrackBlocks) || o.slowTrackBlocks < 1) throw new RangeError('clumping requires slowTrackBlocks to be an integer >= 1');
    if (!Number.isInteger(o.holdBlocks) || o.holdBlocks < 0) throw new RangeError('clumping requires holdBlocks to be an integer >= 0');
    if (o.signalAlpha !== undefined && !(o.signalAlpha > 0 && o.signalAlpha < 1)) throw new RangeError('clumping requires signalAlpha in (0, 1)');
    positive(o.intensityNoiseFloor, 'intensityNoiseFloor');
    if (!Array.isArray(o.mergeRatioRange) || !(o.mergeRatioRange[0] > 1 && o.mergeRatioRange[1] > o.mergeRatioRange[0])) {
      throw new RangeError('clumping requires mergeRatioRange [low, high] with 1 < low < high');
    }
    if (!Number.isInteger(o.mergeWindowFrames) || o.mergeWindowFrames < 5) throw new RangeError('clumping requires mergeWindowFrames to be an integer >= 5');
    if (!Number.isInteger(o.maxListed) || o.maxListed < 1) throw new RangeError('clumping requires maxListed to be an integer >= 1');
    if (!Number.isInteger(o.baselineNearestNeighbourFrames) || o.baselineNearestNeighbourFrames < 1) {
      throw new RangeError('clumping requires baselineNearestNeighbourFrames to be an integer >= 1');
    }
    positive(o.lookHz, 'lookHz');
    this.options = o;
    this.before = new Float64Array(2 * o.mergeWindowFrames);
    this.after = new Float64Array(o.mergeWindowFrames);
  }

  /** Feed one frame; returns the condition when its level changed on this frame. O(N log N). */
  push(steps: FrameSteps, context: DetectorContext): readonly Condition[] {
    if (!(steps.frameInterval > 0) || steps.slotGap === 0) return []; // duplicated frame: nothing new
    if (this.frameInterval === 0) this.configure(steps.frameInterval, context);
    const slot = steps.slot;
    const n = steps.count;
    const intensity = steps.intensity;

    // A look frame (every frame at k = 1; else slots 0, k, 2k, …): the close pairs and, from each
    // track's displacement since its last look, the per-track D segments.
    const lookFrames = this.lookFrames;
    const lookFrame = slot % lookFrames === 0;
    // Per-track records: position, intensity history (and its frame-to-frame noise at baseline).
    // Each particle's record number is kept for the steps below (one lookup per particle). At
    // k > 1 without intensities the records are needed on look frames only.
    if (this.recordOf.length < n) this.recordOf = new Int32Array(Math.max(n, 2 * this.recordOf.length));
    const recordOf = this.recordOf;
    const records = this.records;
    let intensitySqDiff = 0;
    let intensityDiffs = 0;
    const recordCount = lookFrame || intensity ? n : 0;
    for (let i = 0; i < recordCount; i++) {
      const id = steps.trackId[i];
      let k = this.tracks.find(id, steps.trackRow[i]);
      if (k === undefined) {
        k = records.allocate(slot);
        this.tracks.set(id, steps.trackRow[i], k);
      }
      recordOf[i] = k;
      records.lastSlot[k] = slot;
      if (intensity) {
        const value = intensity[i];
        if (Number.isFinite(value) && value > 0) {
          const logI = Math.log(value);
          if (!this.baselineDone) {
            const latest = records.latestIntensityAt(k);
            if (latest >= 0 && records.intensitySlot[latest] === slot - 1) {
              const d = logI - records.logIntensity[latest];
              intensitySqDiff += d * d;
              intensityDiffs++;
            }
          }
          records.addIntensity(k, logI, slot);
        }
      }
    }
    this.intensitySqDiff += intensitySqDiff;
    this.intensityDiffs += intensityDiffs;

    // Steps: per-track CVE segments (and the pooled baseline CVE as a fallback D).
    const ratioCut = this.options.slowCut;
    const inBaseline = !this.baselineDone;
    const segmentSteps = this.options.segmentSteps;
    // the frame's pooled sums in locals, added once after the loop (no field store per step)
    let pooledSquares = 0;
    let pooledSquareCount = 0;
    let pooledCross = 0;
    let pooledCrossCount = 0;
    const lastStepSlot = records.lastStepSlot;
    const lastDx = records.lastDx;
    const lastDy = records.lastDy;
    // The steps: at k = 1 the frame's one-frame steps; at k > 1, on a look frame, each record's
    // displacement since its look k slots back, a step of a camera sampling every k·Δt (counted in
    // looks, so consecutive looks make a CVE pair); none on the other frames.
    let stepDx = steps.dx;
    let stepDy = steps.dy;
    let stepOwner = steps.stepParticle;
    let stepCount = lookFrames === 1 ? steps.stepCount : 0;
    let stepSlot = slot;
    let stepInterval = this.frameInterval;
    if (lookFrames > 1 && lookFrame) {
      stepCount = this.lookSteps(steps, n);
      stepDx = this.lookDx;
      stepDy = this.lookDy;
      stepOwner = this.lookOwner;
      stepSlot = slot / lookFrames;
      stepInterval = this.stepInterval();
    }
    for (let s = 0; s < stepCount; s++) {
      const dx = stepDx[s];
      const dy = stepDy[s];
      if (!Number.isFinite(dx) || !Number.isFinite(dy)) continue;
      const k = recordOf[stepOwner[s]];
      if (inBaseline) {
        pooledSquares += dx * dx + dy * dy;
        pooledSquareCount += 2;
        if (lastStepSlot[k] === stepSlot - 1) {
          pooledCross += dx * lastDx[k] + dy * lastDy[k];
          pooledCrossCount += 2;
        }
      }
      records.addStep(k, dx, dy, stepSlot);
      if (records.segmentSteps[k] >= segmentSteps) {
        const d = records.segmentDiffusion(k, stepInterval);
        records.resetSegment(k);
        if (!Number.isFinite(d)) continue;
        if (inBaseline) {
          if (this.baselineSegments.length < 100000) this.baselineSegments.push(d);
        } else {
          this.tallies.segments++;
          if (d < ratioCut * this.diffusionMonomer) this.tallies.slow++;
        }
      }
    }
    if (inBaseline) {
      this.pooledSquares += pooledSquares;
      this.pooledSquareCount += pooledSquareCount;
      this.pooledCross += pooledCross;
      this.pooledCrossCount += pooledCrossCount;
    }

    // Close pairs within r_c, on the look frames only (every frame up to 2·lookHz − 1 Hz): a
    // list of the pairs within r_c + skin kept across looks, measured each look and rebuilt on a
    // uniform grid when a track has moved skin/2 (no O(N²); no kd-tree rebuilt per frame): pairs
    // i < j, in ascending i then j. Episodes count looks; a look slot lost to dropped frames
    // continues them, as a dropped frame does at k = 1.
    let closePairs = 0;
    const lookIndex = slot / lookFrames;
    const look = lookFrame && lookIndex > this.lastLook;
    if (look) {
      const lookGap = this.lastLook < 0 ? 1 : lookIndex - this.lastLook;
      this.lastLook = lookIndex;
      if (n >= 2) {
        const candidates = (this.candidates ??= new ClosePairCandidates(this.closeDistance));
        let found = candidates.find(steps.x, steps.y, steps.trackId, steps.trackRow, n, this.closeDistance, this.pairKeys);
        if (found < 0) {
          this.pairKeys = new Float64Array(-2 * found);
          found = candidates.find(steps.x, steps.y, steps.trackId, steps.trackRow, n, this.closeDistance, this.pairKeys);
        }
        for (let h = 0; h < found; h++) {
          const key = this.pairKeys[h];
          const i = Math.floor(key / n);
          const j = key - i * n;
          closePairs++;
          this.episodes.see(steps.trackId[i], steps.trackId[j], lookIndex, steps.t, lookGap);
        }
      }
      this.episodes.sweep(lookIndex);
      if (this.baselineDone) {
        for (const episode of this.episodes.values()) {
          if (episode.frames < this.persistenceLooks || episode.persistent) continue;
          // counted once, in the block where the episode first reaches L looks
          this.tallies.persistent.add(`${episode.a}:${episode.b}`);
          episode.persistent = true;
          this.persistentLog.unshift({ a: episode.a, b: episode.b, since: episode.since, frames: this.looksToFrames(episode.frames) });
          if (this.persistentLog.length > this.options.maxListed) this.persistentLog.pop();
        }
      }
    }

    // Ended tracks: merge candidates beside a continuing track; then forget the record.
    for (let e = 0; e < steps.endedCount; e++) {
      const id = steps.endedTrackId[e];
      const k = this.tracks.get(id);
      if (k === undefined) continue;
      this.tracks.delete(id);
      const split = records.lastSlot[k];
      records.release(k); // its values stay readable until a record is next allocated (next frame)
      if (!intensity || !this.baselineDone) continue;
      const partner = this.nearestContinuing(steps, id, steps.endedX[e], steps.endedY[e], split);
      if (partner < 0) continue;
      // B's brightness before the split is taken now (the ring will have moved on by the decision)
      const partnerRecord = this.tracks.get(partner);
      const nBefore = partnerRecord !== undefined ? records.intensitiesAround(partnerRecord, split, false, 2 * this.options.mergeWindowFrames, this.before) : 0;
      if (nBefore < this.options.mergeWindowFrames) continue;
      this.pending.push({ a: id, b: partner, split, t: steps.t, before: median(this.before, nBefore), beforeCount: nBefore });
    }
    if (this.pending.length > 0) this.evaluateMerges(slot, steps.t);

    // Baseline bookkeeping: close-pair rate on every baseline look, nearest-neighbour z on
    // `baselineNearestNeighbourFrames` evenly spaced frames of each baseline block.
    const blockEnd = this.framesInBlock + 1 >= this.blockFrames;
    if (!this.baselineDone && look) {
      // per look: the close-pair rate and its CSR floor N(N − 1)πr_c²/(2A) (detectors.md §3b)
      this.baselineLooks++;
      this.baselineClosePairs += closePairs;
      const area = (steps.field.xMax - steps.field.xMin) * (steps.field.yMax - steps.field.yMin);
      if (area > 0) this.baselineCsrPairs += (n * (n - 1) * Math.PI * this.closeDistance * this.closeDistance) / (2 * area);
    }
    if ((!this.baselineDone && this.framesInBlock % this.nearestNeighbourStride === 0) || blockEnd) {
      const result = clarkEvans(steps.x, steps.y, n, steps.field, { scratch: this.scratch });
      if (result) {
        this.lastNearest = result;
        if (!this.baselineDone) {
          this.baselineZSum += result.z;
          this.baselineZCount++;
        }
      } else if (blockEnd) {
        this.lastNearest = undefined;
      }
    }

    this.framesInBlock++;
    if (!blockEnd) return [];
    this.framesInBlock = 0;
    this.blockIndex++;
    // Housekeeping: forget tracks not seen for a long time (ended without notice).
    for (const [id, k] of this.tracks.entries()) {
      if (slot - records.lastSlot[k] <= 4 * this.blockFrames) continue;
      this.tracks.delete(id);
      records.release(k);
    }
    if (intensity) this.takeIntensityPopulation(slot, steps.t);
    if (!this.baselineDone) {
      if (this.blockIndex >= this.options.baselineBlocks) this.finishBaseline(context);
      return [];
    }
    this.blockTime = steps.t;
    const condition = this.closeBlock(steps, context);
    this.tallies = ClumpingDetector.emptyTallies();
    return condition ? [condition] : [];
  }

  /**
   * Takes the intensity population (§3e) at a block's end: the tracks seen in that block with at
   * least `POPULATION_MIN_READINGS` (10) intensity readings, each by the median of its recent ln I.
   * O(tracks · 48). The mixture is fitted from these only when a summary asks
   * (`intensityPopulationFit`), at most once per block: the result is the same as fitting here,
   * and a file's analysis fits once, at the end.
   */
  private takeIntensityPopulation(slot: number, t: number): void {
    let n = 0;
    const records = this.records;
    for (const k of this.tracks.values()) {
      const count = records.intensityCount[k];
      if (slot - records.lastSlot[k] > this.blockFrames || count < POPULATION_MIN_READINGS) continue;
      if (n >= this.populationScratch.length) {
        const grown = new Float64Array(2 * this.populationScratch.length);
        grown.set(this.populationScratch);
        this.populationScratch = grown;
      }
      // the ring's first intensityCount entries are filled (all of it once full); quickselect on a copy
      this.medianScratch.set(records.intensities(k));
      this.populationScratch[n++] = medianInPlace(this.medianScratch, count);
    }
    this.populationCount = n;
    this.populationTime = t;
    this.populationFitted = false;
  }

  /** The mixture fit of the last block's intensity population (fitted once per block, on demand). */
  private intensityPopulationFit(): ClumpingSummary['intensityDimerFraction'] {
    if (!this.populationFitted) {
      this.populationFitted = true;
      const fit = intensityMixture(this.populationScratch, this.populationCount);
      this.intensityPopulation = fit
        ? { value: fit.dimerFraction, ci95: fit.ci95, tracks: fit.tracks, monomerIntensity: Math.exp(fit.monomerLogIntensity), logSpread: fit.spread, t: this.populationTime }
        : null;
    }
    return this.intensityPopulation;
  }

  /** The report fragment (bounded by `maxListed`). O(open pairs + listed). */
  summary(): ClumpingSummary {
    const nn = this.lastNearest;
    const pairs: [number, number][] = [];
    for (const episode of this.episodes.values()) {
      if (this.baselineDone && episode.frames >= this.persistenceLooks && pairs.length < this.options.maxListed) pairs.push([episode.a, episode.b]);
    }
    const looks = {} as Record<SignalName, SignalLooks>;
    for (const name of SIGNALS) looks[name] = { ...this.looks[name] };
    const population = this.intensityPopulationFit();
    return {
      nearestNeighbour: nn ? { ratio: nn.ratio, z: nn.z, baselineZ: Number.isFinite(this.baselineZ) ? this.baselineZ : null } : null,
      persistentPairs: this.persistentLog.map((p) => ({ ...p })),
      merges: this.merges.map((m) => ({ ...m })),
      dimerFraction: this.dimerFraction ? { value: this.dimerFraction.value, ci95: [...this.dimerFraction.ci95] as [number, number] } : null,
      intensityDimerFraction: population ? { ...population, ci95: [...population.ci95] as [number, number] } : null,
      pairs,
      design: {
        blockFrames: this.blockFrames,
        persistenceFrames: this.baselineDone ? this.persistence : null,
        lookFrames: this.frameInterval > 0 ? this.lookFrames : null,
        closeDistance: this.frameInterval > 0 ? this.closeDistance : null,
        signalAlpha: this.frameInterval > 0 ? this.alpha : null,
        baselineDiffusion: Number.isFinite(this.diffusionMonomer) ? this.diffusionMonomer : null,
        baselineClosePairsPerFrame: this.baselineLooks > 0 ? Math.max(this.baselineClosePairs, this.baselineCsrPairs) / this.baselineLooks : null,
        intensityNoise: Number.isFinite(this.intensityNoise) ? this.intensityNoise : null,
      },
      looks,
    };
  }

  // ---- internals ----

  private static emptyTallies(): BlockTallies {
    return { persistent: new Set(), mergeTests: 0, bestMerge: null, bestMergeP: 1, segments: 0, slow: 0 };
  }

  private configure(frameInterval: number, context: DetectorContext): void {
    const o = this.options;
    this.frameInterval = frameInterval;
    this.blockFrames = Math.max(20, Math.round(o.blockSeconds / frameInterval));
    this.blocksPerHour = 3600 / (this.blockFrames * frameInterval);
    this.nearestNeighbourStride = Math.max(1, Math.floor(this.blockFrames / o.baselineNearestNeighbourFrames));
    // Bonferroni: 4 signals, one look each per block.
    this.alpha = o.signalAlpha ?? o.falseWarnsPerHour / (4 * this.blocksPerHour);
    const radius = context.radius;
    this.closeDistance = o.closeDistance ?? (radius !== undefined && radius > 0 ? 3 * radius : 1.5);
    this.mergeDistance = o.mergeDistance ?? this.closeDistance;
    // frames per close-pair look (1e-9: a rate of exactly k·lookHz gives k, not k − 1)
    this.lookFrames = Math.max(1, Math.floor(1 / (frameInterval * o.lookHz) + 1e-9));
  }

  /**
   * At a look frame (k > 1): each present track's displacement since its record's look k slots
   * back into `lookDx`/`lookDy`, with the particle's index in `lookOwner`; every record then keeps
   * this look's position. Returns the count. O(N).
   */
  private lookSteps(steps: FrameSteps, n: number): number {
    if (this.lookDx.length < n) {
      const size = Math.max(n, 2 * this.lookDx.length);
      this.lookDx = new Float64Array(size);
      this.lookDy = new Float64Array(size);
      this.lookOwner = new Int32Array(size);
    }
    const records = this.records;
    const recordOf = this.recordOf;
    const previousLook = steps.slot - this.lookFrames;
    const lookSlot = records.lookSlot;
    const lookX = records.lookX;
    const lookY = records.lookY;
    let m = 0;
    for (let i = 0; i < n; i++) {
      const k = recordOf[i];
      const x = steps.x[i];
      const y = steps.y[i];
      if (!Number.isFinite(x) || !Number.isFinite(y)) continue;
      if (lookSlot[k] === previousLook) {
        this.lookDx[m] = x - lookX[k];
        this.lookDy[m] = y - lookY[k];
        this.lookOwner[m] = i;
        m++;
      }
      lookSlot[k] = steps.slot;
      lookX[k] = x;
      lookY[k] = y;
    }
    return m;
  }

  /** Interval of the per-track D segments' steps, s: Δt, or k·Δt above the look rate. */
  private stepInterval(): number {
    return this.lookFrames * this.frameInterval;
  }

  /** Frames spanned by `looks` close-pair looks k frames apart. */
  private looksToFrames(looks: number): number {
    return (looks - 1) * this.lookFrames + 1;
  }

  private finishBaseline(context: DetectorContext): void {
    const own = this.pooledSquareCount > 0 && this.pooledCrossCount > 0
      ? this.pooledSquares / (2 * this.stepInterval() * this.pooledSquareCount) + this.pooledCross / (this.stepInterval() * this.pooledCrossCount)
      : Number.NaN;
    // D_monomer: this run's own pooled baseline CVE (the same estimator as the per-track
    // segments, so crowding or a medium that slows every particle is absorbed); the context's D
    // only when the baseline had too few steps.
    const d = own > 0 ? own : context.diffusion !== undefined && context.diffusion > 0 ? context.diffusion : Number.NaN;
    if (!(d > 0)) return; // no D yet: the baseline goes on until one is available
    this.diffusionMonomer = d;
    this.baselineDone = true;
    this.baselineZ = this.baselineZCount > 0 ? this.baselineZSum / this.baselineZCount : 0;
    const cut = this.options.slowCut * d;
    let slow = 0;
    for (const value of this.baselineSegments) if (value < cut) slow++;
    // Slightly shrunk baseline rate ((k + 1)/(n + 2)), so a short baseline never gives 0.
    this.baselineSlowRate = (slow + 1) / (this.baselineSegments.length + 2);
    this.baselineSegments = [];
    const noise = this.intensityDiffs > 0 ? Math.sqrt(this.intensitySqDiff / this.intensityDiffs / 2) : 0;
    this.intensityNoise = Math.max(noise, this.options.intensityNoiseFloor);
    // L in looks, designed for a camera sampling every k·Δt (the looks are that camera's frames)
    this.persistenceLooks = persistenceFrames({
      diffusion: d,
      closeDistance: this.closeDistance,
      frameInterval: this.lookFrames * this.frameInterval,
      // the baseline's own rate per look, but never below CSR: a short baseline can undercount (pairs persist)
      closePairsPerFrame: Math.max(this.baselineClosePairs, this.baselineCsrPairs) / Math.max(1, this.baselineLooks),
      chancePairsPerHour: this.alpha * this.blocksPerHour,
    });
    this.persistence = this.looksToFrames(this.persistenceLooks);
  }

  /** Index of the present track nearest to (x, y) within r_m, other than `id`, that existed before `split`; −1 if none. */
  private nearestContinuing(steps: FrameSteps, id: number, x: number, y: number, split: number): number {
    let best = this.mergeDistance * this.mergeDistance;
    let bestId = -1;
    for (let i = 0; i < steps.count; i++) {
      const other = steps.trackId[i];
      if (other === id) continue;
      const ddx = steps.x[i] - x;
      const ddy = steps.y[i] - y;
      const d2 = ddx * ddx + ddy * ddy;
      if (d2 > best) continue;
      const k = this.tracks.get(other);
      if (k === undefined || this.records.firstSlot[k] >= split) continue;
      best = d2;
      bestId = other;
    }
    return bestId;
  }

  private evaluateMerges(slot: number, t: number): void {
    const w = this.options.mergeWindowFrames;
    // An unresolved chance encounter also looks like a merge, but it splits again: B must still be
    // bright L frames after the split (L from the chance-persistence law at r_c ≥ r_m, so chance
    // overlaps rarely last that long), judged on its latest w frames.
    const hold = Math.max(w, this.persistence);
    const keep: PendingMerge[] = [];
    for (const candidate of this.pending) {
      const k = this.tracks.get(candidate.b);
      if (k === undefined) continue; // partner gone: no lasting merge
      if (slot - candidate.split < hold) { keep.push(candidate); continue; }
      const nAfter = this.records.intensitiesAround(k, slot - w, true, w, this.after);
      if (nAfter < w) continue;
      const jump = median(this.after, nAfter) - candidate.before;
      const sd = this.intensityNoise * Math.sqrt(MEDIAN_VARIANCE_FACTOR * (1 / nAfter + 1 / candidate.beforeCount));
      const z = jump / sd;
      const ratio = Math.exp(jump);
      const [low, high] = this.options.mergeRatioRange;
      this.tallies.mergeTests++;
      if (ratio < low || ratio > high || this.records.merged[k] === 1) continue;
      const p = normalUpperTail(z);
      if (p < this.tallies.bestMergeP) {
        this.tallies.bestMergeP = p;
        this.tallies.bestMerge = { a: candidate.a, b: candidate.b, t, ratio, z };
      }
    }
    this.pending = keep;
  }

  private closeBlock(steps: FrameSteps, context: DetectorContext): Condition | null {
    const o = this.options;
    const alpha = this.alpha;
    const tallies = this.tallies;
    const significant: Record<SignalName, boolean> = { nearestNeighbour: false, persistentPairs: false, merges: false, slowTracks: false };
    const pValues: number[] = [];

    // (a) nearest neighbours against the baseline: d = (z − z̄_base)/√(1 + 1/baselineBlocks), lower tail.
    const nn = this.lastNearest;
    let nnStat = Number.NaN;
    if (nn) {
      nnStat = (nn.z - this.baselineZ) / Math.sqrt(1 + 1 / o.baselineBlocks);
      const p = 1 - normalUpperTail(nnStat);
      this.look('nearestNeighbour', p < alpha, significant);
      pValues.push(p);
    }
    // (b) persistent pairs: chance count per block ≈ Poisson(α) by the choice of L.
    const persistentCount = tallies.persistent.size;
    {
      const p = countUpperTail(persistentCount, alpha);
      this.look('persistentPairs', persistentCount > 0 && p < alpha, significant);
      pValues.push(p);
    }
    // (c) merges: the best ×2 brightening, Bonferroni over the block's candidates.
    if (steps.intensity) {
      const p = tallies.bestMerge ? Math.min(1, tallies.bestMergeP * Math.max(1, tallies.mergeTests)) : 1;
      const hit = tallies.bestMerge !== null && p < alpha;
      this.look('merges', hit, significant);
      pValues.push(p);
      if (hit && tallies.bestMerge) {
        const k = this.tracks.get(tallies.bestMerge.b);
        if (k !== undefined) this.records.merged[k] = 1;
        this.merges.unshift(tallies.bestMerge);
        if (this.merges.length > o.maxListed) this.merges.pop();
      }
    }
    // (d) slow tracks: binomial test of the slow segment count against the chance rate.
    // The slow-track look uses `slowTrackBlocks` blocks of segments at a time (non-overlapping).
    this.slowPending[0] += tallies.slow;
    this.slowPending[1] += tallies.segments;
    const slowLook = this.blockIndex % o.slowTrackBlocks === 0;
    const lookSlow = this.slowPending[0], lookSegments = this.slowPending[1];
    if (slowLook) this.slowPending = [0, 0];
    if (slowLook && lookSegments >= 5) {
      // x and R of the segment's steps, made every k·Δt (R = t_E/(6kΔt): the context's R over k)
      const x = context.localizationError !== undefined ? (context.localizationError ** 2) / (this.diffusionMonomer * this.stepInterval()) : 0;
      const se = segmentRelativeSe(o.segmentSteps, Math.max(0, x), context.blur / this.lookFrames);
      const cut = o.slowCut;
      const p0 = Math.max(1 - normalUpperTail((cut - 1) / se), this.baselineSlowRate);
      const p = countUpperTail(lookSlow, p0, lookSegments);
      // one look per `slowTrackBlocks` blocks: its share of the budget allows α × slowTrackBlocks
      this.look('slowTracks', p < Math.min(0.5, alpha * o.slowTrackBlocks), significant);
      pValues.push(p);
      this.slowNote = `${lookSlow} of ${lookSegments} track segments diffuse near ${fmt(o.dimerRatio)} D`;
    }
    if (tallies.segments >= 5) {
      // Dimer fraction from the segments of the last `agreementBlocks` blocks (pooled, steadier):
      // P(slow) = p0 + φ(p1 − p0), so φ̂ = (k/n − p0)/(p1 − p0), CI from Clopper–Pearson on k/n.
      this.recentSegments.push([tallies.slow, tallies.segments]);
    } else {
      this.recentSegments.push([0, 0]);
    }
    while (this.recentSegments.length > o.agreementBlocks) this.recentSegments.shift();
    let pooledSlow = 0, pooledSegments = 0;
    for (const [k, m] of this.recentSegments) { pooledSlow += k; pooledSegments += m; }
    if (pooledSegments >= 5) {
      // x and R of the segment's steps, made every k·Δt (R = t_E/(6kΔt): the context's R over k)
      const x = context.localizationError !== undefined ? (context.localizationError ** 2) / (this.diffusionMonomer * this.stepInterval()) : 0;
      const se = segmentRelativeSe(o.segmentSteps, Math.max(0, x), context.blur / this.lookFrames);
      const cut = o.slowCut;
      const p0 = Math.max(1 - normalUpperTail((cut - 1) / se), this.baselineSlowRate);
      const p1 = 1 - normalUpperTail((cut - o.dimerRatio) / (o.dimerRatio * se));
      const [lo, hi] = clopperPearson(pooledSlow, pooledSegments);
      const map = (q: number): number => Math.min(1, Math.max(0, (q - p0) / Math.max(1e-9, p1 - p0)));
      this.dimerFraction = { value: map(pooledSlow / pooledSegments), ci95: [map(lo), map(hi)] };
    } else {
      this.dimerFraction = null;
    }

    // Agreement over the last `agreementBlocks` blocks.
    // Effect: dimer fraction (slow tracks), or the objects visibly held together or merged.
    let heldPairs = 0;
    for (const episode of this.episodes.values()) if (episode.frames >= this.persistenceLooks) heldPairs++;
    let mergedPresent = 0;
    for (let i = 0; i < steps.count; i++) {
      const k = this.tracks.find(steps.trackId[i], steps.trackRow[i]);
      if (k !== undefined && this.records.merged[k] === 1) mergedPresent++;
    }
    // A merge stays in force while its brightened track is in view, a persistent pair while it is
    // held (once something was raised: the cluster is still there); every warn onset still needs
    // a fresh significant look, so the Bonferroni bound holds.
    const active: SignalName[] = [];
    for (const name of SIGNALS) {
      const held = (name === 'merges' && mergedPresent > 0) || (name === 'persistentPairs' && heldPairs > 0 && this.level !== null);
      if (this.blockIndex - this.lastSignificant[name] < o.agreementBlocks || held) active.push(name);
    }
    const objects = Math.max(1, steps.count - heldPairs);
    const visible = Math.min(1, (heldPairs + mergedPresent) / objects);
    const fraction = Math.max(this.dimerFraction?.value ?? 0, visible);

    let level: AlertLevel | null = null;
    if (active.length >= 2) {
      level = fraction >= o.stopFraction ? 'stop' : fraction >= o.minimumFraction ? 'warn' : 'info';
      if (level !== 'info') this.lastAgreement = this.blockIndex;
    } else if (active.length === 1) level = 'info';
    // Hold a warn or stop for `holdBlocks` blocks after the signs last agreed (sparse events such
    // as merges come and go while the sample keeps aggregating).
    if ((level === null || level === 'info') && (this.level === 'warn' || this.level === 'stop') && this.blockIndex - this.lastAgreement < o.holdBlocks) {
      level = this.level;
    }
    if (level === this.level) return null;
    this.level = level;

    const pairs: [number, number][] = [];
    for (const episode of this.episodes.values()) if (episode.frames >= this.persistenceLooks && pairs.length < o.maxListed) pairs.push([episode.a, episode.b]);
    const framesPerHour = 3600 / this.frameInterval;
    const minP = pValues.length > 0 ? Math.min(...pValues) : 1;
    const parts: string[] = [];
    if (heldPairs > 0 && active.includes('persistentPairs')) {
      const listed = pairs.slice(0, 4).map(([a, b]) => `${a}–${b}`).join(', ');
      parts.push(`${heldPairs} pair${heldPairs === 1 ? '' : 's'} held within ${fmt(this.closeDistance, 1)} µm for over ${fmt((this.persistence - 1) * this.frameInterval, 1)} s${listed ? ` (tracks ${listed})` : ''}`);
    }
    if (nn && active.includes('nearestNeighbour')) parts.push(`nearest-neighbour ratio ${fmt(nn.ratio)} (z ${fmt(nn.z, 1)} against ${fmt(this.baselineZ, 1)} at the start)`);
    if (active.includes('merges') && this.merges.length > 0) parts.push(`${this.merges.length} track${this.merges.length === 1 ? '' : 's'} merged into a neighbour that became ×${fmt(this.merges[0].ratio, 1)} brighter`);
    if (active.includes('slowTracks') && this.slowNote) parts.push(this.slowNote);
    const fractionText = this.dimerFraction
      ? `about ${fmt(100 * this.dimerFraction.value, 0)} % (${fmt(100 * this.dimerFraction.ci95[0], 0)}–${fmt(100 * this.dimerFraction.ci95[1], 0)} %) of tracks move as dimers`
      : `about ${fmt(100 * visible, 0)} % of objects are held pairs or merged`;
    const advice = 'the sample is likely aggregating: make a fresh dilution, sonicate it, check the ionic strength or add a little surfactant';
    const message = level === null
      ? 'clumping signs gone: pairs, neighbour spacing and track speeds look as at the start'
      : level === 'info'
        ? `possible clumping, not confirmed by a second sign: ${parts.join('; ') || 'one sign only'}; keep watching`
        : `particles clumping: ${parts.join('; ')}; ${fractionText}; ${advice}${level === 'stop' ? '; data taken now mixes single particles and clusters' : ''}`;
    return {
      key: KEY,
      kind: 'clumping',
      level,
      t: steps.t,
      message,
      statistic: { name: 'clumping signs agreeing', value: active.length, threshold: 2 },
      falseAlarm: { arl0Frames: framesPerHour / o.falseWarnsPerHour, pValue: minP, perHour: o.falseWarnsPerHour },
      effect: {
        name: 'dimer fraction',
        value: fraction,
        ci95: this.dimerFraction && this.dimerFraction.value >= visible ? this.dimerFraction.ci95 : null,
        unit: 'fraction of tracks',
      },
      detail: {
        signals: active,
        pairs,
        merges: this.merges.slice(0, o.maxListed).map((m) => ({ ...m })),
        nearestNeighbour: nn ? { ratio: nn.ratio, z: nn.z, baselineZ: this.baselineZ, statistic: nnStat } : null,
        persistenceFrames: this.persistence,
        signalAlpha: alpha,
      },
    };
  }

  private look(name: SignalName, hit: boolean, significant: Record<SignalName, boolean>): void {
    this.looks[name].looks++;
    if (!hit) return;
    this.looks[name].significant++;
    if (this.looks[name].firstSignificant === null) this.looks[name].firstSignificant = this.blockTime;
    this.lastSignificant[name] = this.blockIndex;
    significant[name] = true;
  }
}

function positive(value: number, name: string): void {
  if (!(value > 0) || !Number.isFinite(value)) throw new RangeError(`clumping requires ${name} > 0`);
}

