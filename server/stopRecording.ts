import type { Condition } from '../src/alerts/condition.js';
import type { LiveRun } from './liveRun.js';
import type { AlertMessage } from './protocol.js';

/**
 * Stops one live run's recording after a storage failure (disk full, database unwritable): the
 * run goes on being analysed in memory, and a `recording` alert at `stop` is raised through the
 * run's own alert engine and sent to its rig and dashboards (CONTRACTS §3 `recording`). Called
 * by the run registry when the {@link Recorder} reports a failure; idempotent per run (the alert
 * engine keeps one alert per key). The dashboards also get a fresh state (recording off) at once.
 * O(dashboards) plus two reports (the data time, the state).
 *
 * @param run the run (state live)
 * @param code the storage error code, e.g. `SQLITE_FULL`
 * @example
 * stopRecording(run, 'SQLITE_FULL'); // run.recording → false; an alert { kind: 'recording', level: 'stop' } goes out
 */
export function stopRecording(run: LiveRun, code: string): void {
  if (run.state !== 'live') return;
  run.recording = false;
  const end = run.pipeline.report().input.end as number | undefined;
  const condition: Condition = {
    key: 'recording:storage',
    kind: 'recording',
    level: 'stop',
    t: typeof end === 'number' && Number.isFinite(end) ? end : 0,
    message: `recording stopped: the database cannot be written (${code}); analysis goes on in memory, frames from now on are not kept`,
    statistic: { name: 'storage failure', value: 1, threshold: 0 },
    falseAlarm: {},
    effect: null,
  };
  for (const change of run.pipeline.alerts().push([condition])) {
    const message: AlertMessage = { type: 'alert', run: run.id, change: change.change, ...change.alert };
    run.rigSocket?.sendAlert(message);
    for (const dashboard of run.dashboards) dashboard.send(message);
  }
  // The dashboards' state shows the recording off at once, not only with the next frame's update
  // (the failure may be learned after the last frame, from the recording thread).
  if (run.dashboards.size > 0) {
    const state = run.runState(true);
    for (const dashboard of run.dashboards) dashboard.update(state);
  }
}
