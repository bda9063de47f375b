import { randomBytes } from 'node:crypto';
import { asyncScheduler, Subject, type SchedulerLike, type Subscription } from 'rxjs';
import { throttleTime } from 'rxjs/operators';
import type { DashboardChannel } from './dashboardChannel.js';
import { LiveRun } from './liveRun.js';
import type { AlertMessage, RunListEntry } from './protocol.js';
import type { Recorder } from './recorder.js';
import type { RunSettings } from './rigMessageFields.js';
import { ServerError } from './serverError.js';
import type { ResolvedServerOptions } from './serverOptions.js';
import { stopRecording } from './stopRecording.js';

/** What feeds a run: the rig connection (so a reconnect can take over from a stale one). */
export interface RunFeeder {
  close(code?: number, reason?: string): void;
  sendAlert(message: AlertMessage): void;
}

/** Server-wide counters (shown in the log and to tests). */
export interface ServerCounters {
  /** Messages closed with 1009 for exceeding maxPayloadBytes. */
  oversizedMessages: number;
  /** Rig messages rejected with `error` (all runs, and sockets without a run). */
  rejectedMessages: number;
  /** Sockets terminated by the heartbeat. */
  terminatedPeers: number;
  /** Dashboard messages (`tag`, `ack`, anything else) rejected with `error`. */
  rejectedDashboardMessages: number;
}

/**
 * The runs the server knows: live and recently ended ones in memory (each a {@link LiveRun}),
 * and every recorded one in the database (loaded on demand by replaying its frames). Keeps the
 * run-list dashboards up to date (at most 5 `runs` messages a second, `throttleTime`).
 *
 * @example
 * const registry = new RunRegistry(recorder, options);
 * registry.open(settings, feeder) // → { run, resumed: false }
 */
export class RunRegistry {
  readonly counters: ServerCounters = { oversizedMessages: 0, rejectedMessages: 0, terminatedPeers: 0, rejectedDashboardMessages: 0 };
  readonly listWatchers = new Set<DashboardChannel>();
  private readonly runs = new Map<string, LiveRun>();
  private readonly changes$ = new Subject<void>();
  private readonly subscription: Subscription;

  constructor(
    readonly recorder: Recorder,
    readonly options: ResolvedServerOptions,
    private readonly scheduler: SchedulerLike = asyncScheduler,
  ) {
    this.subscription = this.changes$
      .pipe(throttleTime(200, scheduler, { leading: true, trailing: true }))
      .subscribe(() => {
        const message = { type: 'runs' as const, runs: this.list() };
        for (const watcher of this.listWatchers) watcher.send(message);
      });
    // A full disk or an unwritable database stops the recording, never the monitoring.
    recorder.onFailure((failure) => {
      options.log(`jostle: recording stopped: ${failure.code} (${failure.message}); runs go on in memory`);
      for (const run of this.runs.values()) stopRecording(run, failure.code);
      this.changed();
    });
  }

  /** The run list: recorded runs, with live figures for those in memory. */
  list(): RunListEntry[] {
    const rows = this.recorder.listRuns();
    return rows.map((row) => this.runs.get(row.id)?.listEntry() ?? row);
  }

  /**
   * Opens a run for a rig: a new one, the same live one (resume; a stale feeder is closed with
   * 4000), an ended one in memory (reopened), or a recorded one (restored by replay).
   * @throws ServerError `JOSTLE_E_RUN_LIMIT` when maxRuns runs are already live
   */
  open(settings: RunSettings, feeder: RunFeeder): { run: LiveRun; resumed: boolean } {
    const id = settings.run ?? this.newId();
    let run = this.runs.get(id) ?? this.load(id);
    const resumed = run !== undefined;
    if (!run || run.state === 'ended') {
      if (this.liveCount() >= this.options.maxRuns) throw new ServerError('JOSTLE_E_RUN_LIMIT', 'too many live runs');
    }
    if (!run) {
      run = this.create(settings, id);
      this.recorder.openRun(id, settings.label, JSON.stringify(settings), run.started);
    } else {
      if (run.rigSocket && run.rigSocket !== feeder) run.rigSocket.close(4000, 'run taken over by a new connection');
      if (run.state === 'ended') {
        this.recorder.openRun(id, settings.label || run.label, JSON.stringify(run.settings), run.started);
        run.reopen();
      }
    }
    run.rigSocket = feeder;
    if (this.recorder.failure) stopRecording(run, this.recorder.failure.code);
    this.evictEnded();
    this.changed();
    return { run, resumed };
  }

  /** A run by id: in memory, or loaded from the recording; undefined when unknown. */
  get(id: string): LiveRun | undefined {
    return this.runs.get(id) ?? this.load(id);
  }

  /** Signals a change of the run list. */
  changed(): void {
    this.changes$.next();
  }

  /** Flushes and stops every run (server shutdown). */
  dispose(): void {
    this.subscription.unsubscribe();
    for (const run of this.runs.values()) run.dispose();
    this.runs.clear();
  }

  private liveCount(): number {
    let n = 0;
    for (const run of this.runs.values()) if (run.state === 'live') n++;
    return n;
  }

  private create(settings: RunSettings, id: string): LiveRun {
    const run = new LiveRun(settings, id, this.recorder, this.options, {
      alert: () => undefined,
      changed: () => this.changed(),
    }, this.scheduler);
    this.runs.set(id, run);
    return run;
  }

  /** Restores a recorded run into memory by replaying its frames (ended unless it was live). */
  private load(id: string): LiveRun | undefined {
    const record = this.recorder.run(id);
    if (!record) return undefined;
    const settings = JSON.parse(record.settings) as RunSettings;
    const run = this.create({ ...settings, run: id }, id);
    run.started = record.started;
    run.restore();
    if (record.state === 'ended') {
      // an interrupted run is left unfinished, so that a resuming rig continues its tracks
      if (!record.interrupted) run.pipeline.finish();
      run.state = 'ended';
    }
    this.evictEnded(run);
    return run;
  }

  /** Keeps at most maxRuns ended runs in memory (they stay recorded). */
  private evictEnded(keep?: LiveRun): void {
    const ended = [...this.runs.values()].filter((r) => r.state === 'ended' && r.dashboards.size === 0 && r !== keep);
    for (const run of ended.slice(0, Math.max(0, ended.length - this.options.maxRuns))) {
      run.dispose();
      this.runs.delete(run.id);
    }
  }

  private newId(): string {
    const stamp = new Date(this.scheduler.now()).toISOString().replace(/[-:]/g, '').replace(/\..*$/, '');
    return `run-${stamp}-${randomBytes(3).toString('hex')}`;
  }
}
