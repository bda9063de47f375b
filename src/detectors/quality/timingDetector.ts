import type { AlertLevel, Condition } from '../../alerts/condition.js';
import type { Detector } from '../detector.js';
import type { DetectorContext } from '../detectorContext.js';
import type { FrameSteps } from '../frameSteps.js';
import { binomialUpperTail } from './binomialUpperTail.js';

/** Options of {@link TimingDetector}. */
export interface TimingOptions {
  /** Intervals in the rolling median Δ̂ (odd, default 101). */
  medianWindow: number;
  /** Frames per non-overlapping block for the jitter and drop-rate decisions (default 1000). */
  blockFrames: number;
  /** Allowed drop rate p0 per slot (default 0.001). */
  allowedDropRate: number;
  /** Significance of the per-block binomial drop-rate test (default 1e-4). */
  dropAlpha: number;
  /** Jitter that matters, as a fraction of Δ̂ (default 0.01). */
  jitterFraction: number;
  /** Events kept in the summary lists (default 1000). */
  maxEvents: number;
}

/** What {@link TimingDetector.summary} returns. */
export interface TimingSummary {
  frames: number;
  dropped: number;
  duplicated: number;
  backwards: number;
  /** Median frame interval Δ̂, s. */
  interval: number | null;
  /** Jitter 1.4826·MAD(δ − Δ̂) of the last complete block, s. */
  jitter: number | null;
  /** Drop rate over the run, per slot. */
  dropRate: number;
  droppedEvents: { t: number; frameIndex: number; missing: number }[];
  duplicatedEvents: { t: number; frameIndex: number }[];
  backwardsEvents: { t: number; frameIndex: number }[];
}

const DEFAULTS: TimingOptions = {
  medianWindow: 101,
  blockFrames: 1000,
  allowedDropRate: 0.001,
  dropAlpha: 1e-4,
  jitterFraction: 0.01,
  maxEvents: 1000,
};

/**
 * Timing checks from timestamps (kind `timing`), detectors.md §6a: intervals δ_k = t_k − t_{k−1}
 * against the rolling median Δ̂; dropped frames (round(δ/Δ̂) − 1 of them when δ > 1.5Δ̂),
 * duplicated frames (δ < 0.5Δ̂ or a repeated index or timestamp), jitter 1.4826·MAD(δ − Δ̂)
 * per non-overlapping block (the normal-consistent MAD, Hampel 1974), the drop rate against an
 * allowed p0 (exact binomial test per block), and times going backwards (reported by the
 * pipeline through {@link TimingDetector.noteBackwards}). The event counts are exact: no
 * statistical false alarms.
 *
 * Levels: drops within the allowed rate are `info`; a block whose drop count rejects p0, any
 * duplicate, jitter above `jitterFraction`·Δ̂, or time going backwards are `warn`. A condition
 * clears after a clean block. O(medianWindow) per frame (a sort of a small ring), O(blockFrames)
 * memory.
 *
 * @example
 * const timing = new TimingDetector();
 * timing.push(frameSteps, context); // → [] while frames arrive on time
 * timing.summary().dropped;          // → 0
 */
export class TimingDetector implements Detector<TimingSummary> {
  readonly name = 'timing';
  private readonly options: TimingOptions;
  private readonly ring: Float64Array;
  private readonly sorted: Float64Array;
  private ringCount = 0;
  private ringNext = 0;
  private readonly blockDeviations: Float64Array;
  private blockDeviationCount = 0;
  private blockFramesSeen = 0;
  private blockDrops = 0;
  private blockSlots = 0;
  private blockDuplicates = 0;
  private blockBackwards = 0;
  private previousT = Number.NaN;
  private previousIndex = Number.NaN;
  private frames = 0;
  private dropped = 0;
  private duplicated = 0;
  private backwards = 0;
  private slots = 0;
  private interval = Number.NaN;
  private jitter = Number.NaN;
  private readonly levels = new Map<string, AlertLevel | null>();
  private readonly droppedEvents: TimingSummary['droppedEvents'] = [];
  private readonly duplicatedEvents: TimingSummary['duplicatedEvents'] = [];
  private readonly backwardsEvents: TimingSummary['backwardsEvents'] = [];

  /** @throws RangeError naming the option when an option is out of range */
  constructor(options: Partial<TimingOptions> = {}) {
    const o = { ...DEFAULTS, ...options };
    if (!Number.isInteger(o.medianWindow) || o.medianWindow < 3) throw new RangeError('timing requires medianWindow to be an integer >= 3');
    if (!Number.isInteger(o.blockFrames) || o.blockFrames < 10) throw new RangeError('timing requires blockFrames to be an integer >= 10');
    if (!(o.allowedDropRate > 0 && o.allowedDropRate < 1)) throw new RangeError('timing requires allowedDropRate in (0, 1)');
    if (!(o.dropAlpha > 0 && o.dropAlpha < 1)) throw new RangeError('timing requires dropAlpha in (0, 1)');
    if (!(o.jitterFraction > 0) || !Number.isFinite(o.jitterFraction)) throw new RangeError('timing requires jitterFraction > 0');
    if (!Number.isInteger(o.maxEvents) || o.maxEvents < 0) throw new RangeError('timing requires maxEvents to be an integer >= 0');
    this.options = o;
    this.ring = new Float64Array(o.medianWindow);
    this.sorted = new Float64Array(o.medianWindow);
    this.blockDeviations = new Float64Array(o.blockFrames);
  }

  /**
   * The pipeline rejected a frame whose time went backwards (t in s, its index): counted, and a
   * `warn` condition is returned (once, while the condition is open). O(1)
   */
  noteBackwards(t: number, frameIndex: number): readonly Condition[] {
    this.backwards++;
    this.blockBackwards++;
    if (this.backwardsEvents.length < this.options.maxEvents) this.backwardsEvents.push({ t, frameIndex });
    const c = this.set('timing:backwards', 'warn', t,
      `Frame ${frameIndex} came with time ${t} s, earlier than the frame before it; it was left out (${this.backwards} so far). Likely a clock reset or frames sent out of order by the acquisition computer; check the camera's timestamp source`,
      { name: 'frames with time going backwards', value: this.backwards, threshold: 0 }, null);
    return c ? [c] : [];
  }

  /**
   * The pipeline calls this for a frame it skipped as a duplicate (same time slot, same index or
   * same time as the previous frame), which therefore never reaches `push`.
   */
  noteDuplicate(t: number, frameIndex: number): Condition[] {
    const out: Condition[] = [];
    if (!Number.isFinite(t)) return out;
    const reference = this.ringCount >= 5 ? this.median() : this.interval;
    this.duplicate(t, frameIndex, t - this.previousT, reference, out);
    return out;
  }

  private duplicate(t: number, frameIndex: number, delta: number, reference: number, out: Condition[]): void {
    this.duplicated++;
    this.blockDuplicates++;
    if (this.duplicatedEvents.length < this.options.maxEvents) this.duplicatedEvents.push({ t, frameIndex });
    const c = this.set('timing:duplicated', 'warn', t,
      `Frame ${frameIndex} at ${t} s repeats the previous one (interval ${fmt(delta)} s against ${fmt(reference)} s; ${this.duplicated} so far). A repeated frame gives zero steps and biases D low; check the camera buffer and the frame grabber settings`,
      { name: 'duplicated frames', value: this.duplicated, threshold: 0 }, { name: 'interval', value: delta, ci95: null, unit: 's' });
    if (c) out.push(c);
  }

  /** Feed one frame; returns the conditions that changed. */
  push(steps: FrameSteps, _context: DetectorContext): readonly Condition[] {
    const out: Condition[] = [];
    const t = steps.t;
    if (!Number.isFinite(t)) return out;
    this.frames++;
    const nominal = steps.frameInterval;
    if (Number.isFinite(this.previousT)) {
      const delta = t - this.previousT;
      const reference = this.ringCount >= 5 ? this.median() : nominal;
      this.interval = reference;
      const repeated = steps.frameIndex === this.previousIndex || delta === 0;
      if (repeated || delta < 0.5 * reference) {
        this.duplicate(t, steps.frameIndex, delta, reference, out);
      } else {
        let missing = 0;
        if (delta > 1.5 * reference) missing = Math.round(delta / reference) - 1;
        else this.addInterval(delta);
        if (delta <= 1.5 * reference && this.blockDeviationCount < this.blockDeviations.length) {
          this.blockDeviations[this.blockDeviationCount++] = delta - reference;
        }
        this.blockSlots += 1 + missing;
        this.slots += 1 + missing;
        if (missing > 0) {
          this.dropped += missing;
          this.blockDrops += missing;
          if (this.droppedEvents.length < this.options.maxEvents) this.droppedEvents.push({ t, frameIndex: steps.frameIndex, missing });
          if ((this.levels.get('timing:dropped') ?? null) === null) {
            const c = this.set('timing:dropped', 'info', t,
              `${missing} frame(s) missing before ${t} s (${this.dropped} so far, ${(100 * this.dropRate()).toFixed(2)} % of slots); lags are taken from the timestamps, so the analysis stays valid. If it grows: lower the frame rate or the region of interest, or free the disk`,
              { name: 'dropped frames', value: this.dropped, threshold: 0 }, { name: 'drop rate', value: this.dropRate(), ci95: null, unit: '1' });
            if (c) out.push(c);
          }
        }
      }
    }
    this.previousT = t;
    this.previousIndex = steps.frameIndex;
    this.blockFramesSeen++;
    if (this.blockFramesSeen >= this.options.blockFrames) this.closeBlock(t, out);
    return out;
  }

  /** Counts, Δ̂, jitter and the event lists. */
  summary(): TimingSummary {
    return {
      frames: this.frames,
      dropped: this.dropped,
      duplicated: this.duplicated,
      backwards: this.backwards,
      interval: Number.isFinite(this.interval) ? this.interval : null,
      jitter: Number.isFinite(this.jitter) ? this.jitter : null,
      dropRate: this.dropRate(),
      droppedEvents: this.droppedEvents.slice(),
      duplicatedEvents: this.duplicatedEvents.slice(),
      backwardsEvents: this.backwardsEvents.slice(),
    };
  }

  private dropRate(): number {
    return this.slots > 0 ? this.dropped / this.slots : 0;
  }

  private addInterval(delta: number): void {
    this.ring[this.ringNext] = delta;
    this.ringNext = (this.ringNext + 1) % this.ring.length;
    if (this.ringCount < this.ring.length) this.ringCount++;
  }

  private median(): number {
    const n = this.ringCount;
    const s = this.sorted.subarray(0, n);
    s.set(this.ring.subarray(0, n));
    s.sort();
    return n % 2 ? s[(n - 1) >> 1] : 0.5 * (s[n / 2 - 1] + s[n / 2]);
  }

  private closeBlock(t: number, out: Condition[]): void {
    const o = this.options;
    // Jitter: 1.4826·MAD of the deviations δ − Δ̂ in this block.
    const n = this.blockDeviationCount;
    if (n >= 10) {
      const d = this.blockDeviations.subarray(0, n);
      d.sort();
      const med = n % 2 ? d[(n - 1) >> 1] : 0.5 * (d[n / 2 - 1] + d[n / 2]);
      for (let i = 0; i < n; i++) d[i] = Math.abs(d[i] - med);
      d.sort();
      const mad = n % 2 ? d[(n - 1) >> 1] : 0.5 * (d[n / 2 - 1] + d[n / 2]);
      this.jitter = 1.4826 * mad;
      const limit = o.jitterFraction * this.interval;
      const level: AlertLevel | null = this.jitter > limit ? 'warn' : null;
      const c = this.set('timing:jitter', level, t,
        level
          ? `Frame times wander by ${fmt(this.jitter)} s (robust SD) around the ${fmt(this.interval)} s interval, more than ${(100 * o.jitterFraction).toFixed(0)} %; timestamps are likely taken by software, not by the camera. Use hardware timestamps or trigger the camera`
          : 'Cleared: frame-time jitter is back within tolerance',
        { name: 'jitter 1.4826·MAD, s', value: this.jitter, threshold: limit }, { name: 'jitter', value: this.jitter, ci95: null, unit: 's' });
      if (c) out.push(c);
    }
    // Drop rate: exact binomial test of this block's drops against p0.
    const p = binomialUpperTail(this.blockDrops, this.blockSlots, o.allowedDropRate);
    const dropLevel: AlertLevel | null = this.blockDrops === 0 ? null : p < o.dropAlpha ? 'warn' : 'info';
    const rate = this.blockSlots > 0 ? this.blockDrops / this.blockSlots : 0;
    const c = this.set('timing:dropped', dropLevel, t,
      dropLevel === 'warn'
        ? `${this.blockDrops} of the last ${this.blockSlots} frames were lost (${(100 * rate).toFixed(2)} %, allowed ${(100 * o.allowedDropRate).toFixed(2)} %; binomial p = ${p.toExponential(1)}). The acquisition cannot keep up: lower the frame rate or the region of interest, or write to a faster disk`
        : dropLevel === 'info'
          ? `${this.blockDrops} of the last ${this.blockSlots} frames were lost (${(100 * rate).toFixed(2)} %), within the allowed rate; lags are taken from the timestamps`
          : 'Cleared: no frames lost in the last block',
      { name: 'binomial p-value of block drops', value: p, threshold: o.dropAlpha },
      { name: 'drop rate', value: rate, ci95: null, unit: '1' }, { pValue: o.dropAlpha });
    if (c) out.push(c);
    if (this.blockDuplicates === 0) {
      const d = this.set('timing:duplicated', null, t, 'Cleared: no repeated frames in the last block', { name: 'duplicated frames', value: this.duplicated, threshold: 0 }, null);
      if (d) out.push(d);
    }
    if (this.blockBackwards === 0) {
      const b = this.set('timing:backwards', null, t, 'Cleared: frame times have kept increasing for a whole block', { name: 'frames with time going backwards', value: this.backwards, threshold: 0 }, null);
      if (b) out.push(b);
    }
    this.blockFramesSeen = 0;
    this.blockDeviationCount = 0;
    this.blockDrops = 0;
    this.blockSlots = 0;
    this.blockDuplicates = 0;
    this.blockBackwards = 0;
  }

  /** Record a level for a key; returns a condition only when the level changed. */
  private set(key: string, level: AlertLevel | null, t: number, message: string,
    statistic: Condition['statistic'], effect: Condition['effect'], falseAlarm: Condition['falseAlarm'] = { perHour: 0 }): Condition | undefined {
    if ((this.levels.get(key) ?? null) === level) return undefined;
    this.levels.set(key, level);
    return { key, kind: 'timing', level, t, message, statistic, falseAlarm, effect };
  }
}

function fmt(value: number): string {
  return Number(value.toPrecision(3)).toString();
}
