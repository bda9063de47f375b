import { BehaviorSubject, interval, merge, Subject, type SchedulerLike, type Subscription, asyncScheduler } from 'rxjs';
import { buffer, filter, map, mergeMap, share, throttleTime } from 'rxjs/operators';
import type { AlertChange } from '../src/alerts/alertEngine.js';
import type { AlertLevel, Condition } from '../src/alerts/condition.js';
import { createDetectors } from '../src/detectors/createDetectors.js';
import type { Frame } from '../src/frame.js';
import { Pipeline } from '../src/pipeline/pipeline.js';
import { refreshContext } from '../src/pipeline/refreshContext.js';
import type { Report } from '../src/report.js';
import type { Tag } from '../src/tag.js';
import type { DashboardChannel } from './dashboardChannel.js';
import type { AlertMessage, RunCounters, RunHistory, RunListEntry, RunPositions, RunState } from './protocol.js';
import type { FrameRow, Recorder, RecordRow } from './recorder.js';
import type { RunSettings } from './rigMessageFields.js';
import { sampleWhileWatched } from './sampleWhileWatched.js';
import type { ResolvedServerOptions } from './serverOptions.js';

/** One input of a run's pipeline, in arrival order. */
export type RunInput =
  | { kind: 'frame'; frame: Frame }
  | { kind: 'temperature'; t: number; celsius: number }
  | { kind: 'tag'; tag: Tag }
  | { kind: 'ack'; alert: string }
  | { kind: 'end' };

/** What one input did: the input and the alert changes it caused. */
interface Step {
  input: RunInput;
  changes: readonly AlertChange[];
}

/** How a run reaches the world: alert fan-out and run-list changes. */
export interface RunHooks {
  /** An alert opened, changed level or closed. */
  alert(message: AlertMessage): void;
  /** Something shown in the run list changed (state, worst level). */
  changed(): void;
}

const HISTORY_POINTS = 3600;
const HISTORY_MIN_SECONDS = 1;
const RATE_WINDOW_MS = 2000;
const MAX_BATCH_ROWS = 2000;
const QUOTA_WARN_FRACTION = 0.9;

/**
 * One run on the live server: the very same `src/` pipeline as `jostle analyze`
 * (`new Pipeline(options, createDetectors, refreshContext)`), driven frame by frame through an
 * RxJS chain: a Subject of inputs → `map` (push into the pipeline, collect alert changes) →
 * `share`, then three consumers composed from standard operators:
 * - alerts: `mergeMap` over the changes → the rig, the dashboards, the recording;
 * - recording: frame/reading rows → `buffer` (every `flushMs`, or at 2000 rows) → one SQLite
 *   transaction per batch, with the quota raised as a `recording` alert through the pipeline's
 *   alert engine;
 * - dashboards: `sampleWhileWatched` (≤ `summaryHz`, only while someone watches) → the run
 *   state (report + history + positions + counters) → each dashboard's coalescing channel.
 * A periodic summary row is recorded every `summaryRecordMs` (`throttleTime`).
 *
 * @example
 * const run = new LiveRun(settings, 'bench-a', recorder, options, hooks);
 * run.input({ kind: 'frame', frame });
 */
export class LiveRun {
  readonly id: string;
  label: string;
  state: 'live' | 'ended' = 'live';
  started: string;
  pipeline: Pipeline;
  /** Highest frame index accepted (or recorded), or null. */
  lastIndex: number | null = null;
  readonly dashboards = new Set<DashboardChannel>();
  readonly watchers$ = new BehaviorSubject<number>(0);
  readonly counters = { rejectedMessages: 0, resentFrames: 0, recordedBytes: 0 };
  recording = true;
  /** The connection currently feeding this run (at most one). */
  rigSocket: { close(code?: number, reason?: string): void; sendAlert(message: AlertMessage): void } | undefined;
  private readonly inputs$ = new Subject<RunInput>();
  private readonly flush$ = new Subject<void>();
  private readonly subscriptions: Subscription[] = [];
  private readonly history: RunHistory = { t: [], reportedCelsius: [], impliedCelsius: [], impliedLow: [], impliedHigh: [], driftVx: [], driftVy: [], driftX: [], driftY: [] };
  // The last `trailFrames` kept frames' positions (at least `trailSpacingMs` apart in data time),
  // newest first, in reused typed arrays (a memcpy per kept frame, no per-centroid allocation);
  // turned into plain arrays, or JSON text kept with the frame, only when a dashboard draws them.
  private readonly trail: TrailFrame[] = [];
  private readonly spareTrail: TrailFrame[] = [];
  private pendingRows = 0;
  private quotaWarned = false;
  private rate = { at: 0, frames: 0, value: 0 };
  private finalReport: Report | undefined;
  private restoring = false;

  constructor(
    readonly settings: RunSettings,
    id: string,
    private readonly recorder: Recorder,
    private readonly options: ResolvedServerOptions,
    private readonly hooks: RunHooks,
    private readonly scheduler: SchedulerLike = asyncScheduler,
  ) {
    this.id = id;
    this.label = settings.label;
    this.started = new Date(scheduler.now()).toISOString();
    this.pipeline = new Pipeline(settings.pipeline, createDetectors, refreshContext);
    this.rate.at = scheduler.now();
    const steps$ = this.inputs$.pipe(
      map((input): Step => ({ input, changes: this.guarded(() => this.apply(input), []) })),
      share(),
    );
    this.subscriptions.push(
      steps$.pipe(mergeMap((step) => step.changes)).subscribe((change) => this.publishAlert(change)),
      steps$
        .pipe(
          filter(() => !this.restoring && this.recording),
          map((step) => this.row(step.input)),
          filter((row): row is RecordRow => row !== undefined),
          buffer(merge(interval(options.flushMs, scheduler), this.flush$)),
          filter((rows) => rows.length > 0),
        )
        .subscribe((rows) => {
          this.pendingRows = 0;
          this.guarded(() => this.recorder.writeBatch(rows), undefined);
        }),
      steps$
        .pipe(
          filter((step) => step.input.kind === 'frame'),
          sampleWhileWatched(this.watchers$, 1000 / options.summaryHz, scheduler),
          filter(() => !this.restoring),
        )
        .subscribe(() => this.guarded(() => this.broadcastUpdate(), undefined)),
      steps$
        .pipe(
          filter((step) => step.input.kind === 'frame' && !this.restoring),
          throttleTime(options.summaryRecordMs, scheduler),
        )
        .subscribe(() => this.guarded(() => this.recordSummary(), undefined)),
    );
  }

  /** Feeds one input (synchronously: frame buffers may be reused right after). */
  input(input: RunInput): void {
    this.inputs$.next(input);
  }

  /**
   * Replays the recorded frames, readings and tags of this run into the fresh pipeline (after a
   * restart), without recording them again or broadcasting; readings are pushed before the first
   * frame at or after their time, as `analyze` does.
   */
  restore(): void {
    this.restoring = true;
    try {
      const readings = this.recorder.temperatures(this.id);
      for (const tag of this.recorder.tags(this.id)) this.pipeline.pushTag(tag);
      let next = 0;
      for (const frame of this.recorder.frames(this.id)) {
        while (next < readings.length && readings[next].t <= frame.t) {
          this.input({ kind: 'temperature', ...readings[next] });
          next++;
        }
        this.input({ kind: 'frame', frame });
      }
      while (next < readings.length) this.input({ kind: 'temperature', ...readings[next++] });
      const record = this.recorder.run(this.id);
      this.counters.recordedBytes = record?.bytes ?? 0;
      this.lastIndex = record?.lastIndex ?? this.lastIndex;
    } finally {
      this.restoring = false;
    }
  }

  /** Writes any pending recording batch now. */
  flush(): void {
    this.flush$.next();
  }

  /** Reopens an ended run (a later `run` with the same id). */
  reopen(): void {
    this.state = 'live';
    this.finalReport = undefined;
    this.hooks.changed();
  }

  /**
   * The current report (live), or the final one (ended). `omitTrackTable` leaves the per-track
   * table out of a live report (see `runState`).
   */
  report(omitTrackTable = false): Report {
    if (this.state === 'ended' && this.finalReport) return this.finalReport;
    return this.pipeline.report({
      provenanceOptions: { ...this.pipeline.options, pixelSize: this.settings.pixelSize, run: this.id },
      generated: new Date(this.scheduler.now()).toISOString(),
      omitTrackTable,
    });
  }

  /**
   * The whole state a dashboard draws. Computes the report: O(tracks × lags). For an update
   * (`forUpdate`), a live run's report leaves out its per-track table, which the dashboard does
   * not draw and which is most of the message (about 130 bytes of JSON per track, up to
   * `maxTrackTable` rows); `tracksOmitted` then says so. Snapshots, the report over HTTP and the
   * final report keep it.
   */
  runState(forUpdate = false): RunState {
    const omit = forUpdate && !(this.state === 'ended' && this.finalReport);
    const report = this.report(omit);
    this.appendHistory(report);
    const state: RunState = {
      run: this.id,
      label: this.label,
      state: this.state,
      report,
      history: this.history,
      positions: this.positions(),
      counters: this.liveCounters(report),
    };
    if (omit) state.tracksOmitted = true;
    return state;
  }

  /** The run-list row of this run. */
  listEntry(): RunListEntry {
    return { id: this.id, label: this.label, state: this.state, started: this.started, frames: this.pipeline.counts().frames, worst: this.pipeline.alerts().worst() };
  }

  /** Adds a dashboard (it gets a snapshot at once). */
  attach(channel: DashboardChannel): void {
    this.dashboards.add(channel);
    this.watchers$.next(this.dashboards.size);
    channel.send({ type: 'snapshot', ...this.runState() });
  }

  /** Removes a dashboard. */
  detach(channel: DashboardChannel): void {
    if (this.dashboards.delete(channel)) this.watchers$.next(this.dashboards.size);
    channel.dispose();
  }

  /** Flushes the recording and stops the chain (server shutdown). */
  dispose(): void {
    this.flush();
    for (const s of this.subscriptions) s.unsubscribe();
    for (const d of this.dashboards) d.dispose();
    this.dashboards.clear();
  }

  /**
   * Runs one step and keeps the chain alive when it throws (a disk error, a bug): the failure is
   * logged and counted, and the run goes on — one bad input never ends a run or the process.
   */
  private guarded<T>(action: () => T, fallback: T): T {
    try {
      return action();
    } catch (error) {
      this.failures++;
      this.options.log(`jostle: run ${this.id}: ${(error as { code?: string }).code ?? 'JOSTLE_E_INTERNAL'} ${(error as Error)?.message}`);
      return fallback;
    }
  }

  /** Steps that failed (see `guarded`). */
  failures = 0;

  private apply(input: RunInput): readonly AlertChange[] {
    const p = this.pipeline;
    switch (input.kind) {
      case 'frame': {
        p.push(input.frame);
        this.lastIndex = this.lastIndex === null ? input.frame.index : Math.max(this.lastIndex, input.frame.index);
        this.keepTrail(input.frame);
        return p.lastAlertChanges();
      }
      case 'temperature':
        p.pushTemperature(input.t, input.celsius);
        return [];
      case 'tag':
        p.pushTag(input.tag);
        if (!this.restoring) this.recorder.writeTag(this.id, input.tag);
        if (this.state === 'ended' && !this.restoring) {
          // a tag on an ended run: its segments change, so its stored final report is renewed
          this.finalReport = undefined;
          this.finalReport = this.report();
          this.recorder.endRun(this.id, JSON.stringify(this.finalReport), new Date(this.scheduler.now()).toISOString());
        }
        return [];
      case 'ack':
        p.alerts().acknowledge(input.alert);
        return [];
      case 'end': {
        p.finish();
        const changes = p.lastAlertChanges().slice();
        this.flush();
        this.state = 'ended';
        const report = this.report();
        this.finalReport = report;
        this.recorder.endRun(this.id, JSON.stringify(report), new Date(this.scheduler.now()).toISOString());
        this.hooks.changed();
        queueMicrotask(() => this.broadcastUpdate());
        return changes;
      }
    }
  }

  private row(input: RunInput): RecordRow | undefined {
    if (input.kind === 'temperature') return { kind: 'temperature', run: this.id, t: input.t, celsius: input.celsius };
    if (input.kind !== 'frame') return undefined;
    const row: FrameRow = this.recorder.frameRow(this.id, input.frame);
    const quota = this.options.quotaBytes;
    if (this.counters.recordedBytes + row.bytes > quota) {
      this.recording = false;
      this.raiseRecording('stop', input.frame.t, `recording stopped: the run reached its quota of ${quota} bytes; analysis goes on, frames are no longer kept`);
      return undefined;
    }
    this.counters.recordedBytes += row.bytes;
    if (!this.quotaWarned && this.counters.recordedBytes >= QUOTA_WARN_FRACTION * quota) {
      this.quotaWarned = true;
      this.raiseRecording('warn', input.frame.t, `recording is at ${Math.round((100 * this.counters.recordedBytes) / quota)} % of its quota of ${quota} bytes: start a new run soon`);
    }
    if (++this.pendingRows >= MAX_BATCH_ROWS) this.flush();
    return row;
  }

  private raiseRecording(level: AlertLevel, t: number, message: string): void {
    const condition: Condition = {
      key: 'recording:quota',
      kind: 'recording',
      level,
      t,
      message,
      statistic: { name: 'recorded bytes', value: this.counters.recordedBytes, threshold: level === 'stop' ? this.options.quotaBytes : QUOTA_WARN_FRACTION * this.options.quotaBytes },
      falseAlarm: {},
      effect: null,
    };
    for (const change of this.pipeline.alerts().push([condition])) this.publishAlert(change);
  }

  private publishAlert(change: AlertChange): void {
    if (this.restoring) return;
    const message: AlertMessage = { type: 'alert', run: this.id, change: change.change, ...change.alert };
    this.recorder.writeAlert(this.id, change.alert, this.pipeline.alerts().worst());
    this.rigSocket?.sendAlert(message);
    for (const d of this.dashboards) d.send(message);
    this.hooks.changed();
  }

  private broadcastUpdate(): void {
    if (this.dashboards.size === 0) return;
    const state = this.runState(true);
    for (const d of this.dashboards) d.update(state);
  }

  private recordSummary(): void {
    const report = this.report(true); // a summary row does not need the per-track table
    this.appendHistory(report);
    this.recorder.writeSummary(this.id, new Date(this.scheduler.now()).toISOString(), (report.input.end as number | undefined) ?? null, this.pipeline.counts().frames, report.diffusion.coefficient, this.pipeline.alerts().worst());
  }

  private keepTrail(frame: Frame): void {
    if (this.restoring) return;
    // Frames closer than the spacing to the newest kept one are passed over (a frame earlier than
    // it, from a rig clock going backwards, is kept, as every frame was before the spacing).
    const newest = this.trail[0];
    const spacing = this.options.trailSpacingMs / 1000;
    if (newest !== undefined && frame.t >= newest.t && frame.t - newest.t < spacing * (1 - 1e-9)) return;
    const n = frame.count;
    const slot: TrailFrame = this.spareTrail.pop() ?? { t: 0, count: 0, x: new Float64Array(0), y: new Float64Array(0), id: new Uint32Array(0), hasId: false, entry: undefined };
    slot.entry = undefined;
    if (slot.x.length < n) {
      slot.x = new Float64Array(n);
      slot.y = new Float64Array(n);
      slot.id = new Uint32Array(n);
    }
    slot.t = frame.t;
    slot.count = n;
    slot.x.set(frame.x.subarray(0, n));
    slot.y.set(frame.y.subarray(0, n));
    slot.hasId = frame.id !== undefined;
    if (frame.id) slot.id.set(frame.id.subarray(0, n));
    this.trail.unshift(slot);
    if (this.trail.length > this.options.trailFrames) this.spareTrail.push(this.trail.pop()!);
  }

  /**
   * The kept frames as plain arrays, each frame's built once and shared by every later state that
   * still carries it (the arrays are never changed afterwards; a JSON update also encodes each
   * frame's part once: `positionsJson` in encodeUpdate.ts).
   */
  private positions(): RunPositions {
    return {
      t: this.trail[0]?.t ?? null,
      frames: this.trail.map((f) => (f.entry ??= trailEntry(f))),
    };
  }

  private appendHistory(report: Report): void {
    const t = report.input.end as number | undefined;
    if (t === undefined || !Number.isFinite(t)) return;
    const h = this.history;
    const last = h.t.length > 0 ? h.t[h.t.length - 1] : -Infinity;
    if (t - last < HISTORY_MIN_SECONDS) return;
    const implied = report.temperature.implied;
    const velocity = report.drift.velocity?.value ?? null;
    const dtSeconds = Number.isFinite(last) ? t - last : 0;
    const prevX = h.driftX.length > 0 ? h.driftX[h.driftX.length - 1] : 0;
    const prevY = h.driftY.length > 0 ? h.driftY[h.driftY.length - 1] : 0;
    h.t.push(t);
    h.reportedCelsius.push(report.temperature.reported);
    h.impliedCelsius.push(implied?.value ?? null);
    h.impliedLow.push(implied?.ci95[0] ?? null);
    h.impliedHigh.push(implied?.ci95[1] ?? null);
    h.driftVx.push(velocity ? velocity[0] : null);
    h.driftVy.push(velocity ? velocity[1] : null);
    h.driftX.push(prevX + (velocity ? velocity[0] * dtSeconds : 0));
    h.driftY.push(prevY + (velocity ? velocity[1] * dtSeconds : 0));
    const excess = h.t.length - HISTORY_POINTS;
    if (excess > 0) for (const column of Object.values(h)) (column as unknown[]).splice(0, excess);
  }

  private liveCounters(report: Report): RunCounters {
    const now = this.scheduler.now();
    const frames = this.pipeline.counts().frames;
    if (now - this.rate.at >= RATE_WINDOW_MS / 4) {
      const seconds = (now - this.rate.at) / 1000;
      this.rate = { at: now, frames, value: seconds > 0 ? (frames - this.rate.frames) / seconds : 0 };
    }
    let dropped = 0;
    for (const d of this.dashboards) dropped += d.coalesced;
    return {
      frames,
      centroids: this.pipeline.counts().centroids,
      framesPerSecond: this.rate.value,
      particles: this.trail[0]?.count ?? 0,
      tracks: report.input.tracks,
      rejectedMessages: this.counters.rejectedMessages,
      resentFrames: this.counters.resentFrames,
      droppedUpdates: dropped,
      recordedBytes: this.counters.recordedBytes,
      recording: this.recording,
    };
  }
}

/** One kept frame of the trail: reused typed arrays, and its plain-array form once built. */
interface TrailFrame {
  t: number;
  count: number;
  x: Float64Array;
  y: Float64Array;
  id: Uint32Array;
  hasId: boolean;
  entry: RunPositions['frames'][number] | undefined;
}

function trailEntry(f: TrailFrame): RunPositions['frames'][number] {
  return {
    t: f.t,
    x: Array.from(f.x.subarray(0, f.count)),
    y: Array.from(f.y.subarray(0, f.count)),
    id: f.hasId ? Array.from(f.id.subarray(0, f.count)) : null,
  };
}
