import type { Alert } from '../report.js';
import type { AlertLevel, Condition } from './condition.js';

/** What changed about an alert on one call: it opened, changed level, or closed. */
export interface AlertChange {
  change: 'open' | 'level' | 'close';
  alert: Alert;
}

/** Options of the alert engine. */
export interface AlertEngineOptions {
  /**
   * A condition must stay clear this long (s, data clock) before its alert closes; if it is raised
   * again within that time the same alert continues. Default 5 s.
   */
  clearHoldSeconds?: number;
  /** Alerts kept in the report, newest last; older closed alerts are dropped beyond it. Default 1000. */
  maxAlerts?: number;
}

const LEVEL_RANK: Record<AlertLevel, number> = { info: 0, warn: 1, stop: 2 };

interface OpenAlert {
  alert: Alert;
  clearSince: number | null;
  /** Level changes so far, oldest first (bounded), kept in `detail.levels`. */
  levels: { t: number; level: AlertLevel }[];
}

/** Level changes kept per alert in `detail.levels`. */
const MAX_LEVEL_CHANGES = 32;

/**
 * Turns detectors' condition reports into alerts with ids, opening and closing times, and
 * hysteresis: one condition (one `key`) gives one alert, whose `start` is the time the condition
 * was first declared and whose `end` is set once it has stayed clear for `clearHoldSeconds`.
 * The level of an open alert follows the condition (up at once, down when the condition says so);
 * `detail.levels` keeps its level changes with their times (at most 32), so the time an alert
 * first reached `warn` can be read even when it opened as `info`.
 *
 * Pure: time comes in with each condition (`Condition.t`). O(1) per condition.
 *
 * @example
 * const engine = new AlertEngine();
 * engine.push([{ key: 'drift:x+', kind: 'drift', level: 'warn', t: 12.5, message: 'stage drifting',
 *   statistic: { name: 'cusum', value: 20, threshold: 18 }, falseAlarm: {}, effect: null }]);
 * // → [{ change: 'open', alert: { id: 'drift-1', kind: 'drift', level: 'warn', start: 12.5, end: null, ... } }]
 */
export class AlertEngine {
  private readonly clearHoldSeconds: number;
  private readonly maxAlerts: number;
  private readonly open = new Map<string, OpenAlert>();
  private readonly all: Alert[] = [];
  private readonly acknowledged = new Set<string>();
  private sequence = 0;
  private dropped = 0;

  constructor(options: AlertEngineOptions = {}) {
    const merged = { clearHoldSeconds: 5, maxAlerts: 1000, ...options };
    if (!(merged.clearHoldSeconds >= 0)) throw new RangeError('AlertEngine requires clearHoldSeconds >= 0');
    if (!(Number.isInteger(merged.maxAlerts) && merged.maxAlerts >= 1)) {
      throw new RangeError('AlertEngine requires an integer maxAlerts >= 1');
    }
    this.clearHoldSeconds = merged.clearHoldSeconds;
    this.maxAlerts = merged.maxAlerts;
  }

  /** Feed the conditions decided on one frame; returns the alert changes they cause. */
  push(conditions: readonly Condition[]): AlertChange[] {
    const changes: AlertChange[] = [];
    for (const condition of conditions) this.apply(condition, changes);
    return changes;
  }

  /**
   * Advance the clock to `t` (s) without new conditions: closes alerts whose condition has been
   * clear for the hold time. Call once per frame.
   */
  tick(t: number): AlertChange[] {
    const changes: AlertChange[] = [];
    for (const [key, entry] of this.open) {
      if (entry.clearSince !== null && t - entry.clearSince >= this.clearHoldSeconds) {
        entry.alert.end = entry.clearSince;
        this.open.delete(key);
        changes.push({ change: 'close', alert: entry.alert });
      }
    }
    return changes;
  }

  /** Close every open alert at time `t` (end of run). */
  closeAll(t: number): AlertChange[] {
    const changes: AlertChange[] = [];
    for (const [key, entry] of this.open) {
      entry.alert.end = entry.clearSince ?? t;
      this.open.delete(key);
      changes.push({ change: 'close', alert: entry.alert });
    }
    return changes;
  }

  /** Mark an alert as acknowledged by an operator; returns false for an unknown id. */
  acknowledge(id: string): boolean {
    const known = this.all.some((alert) => alert.id === id);
    if (known) {
      this.acknowledged.add(id);
      const alert = this.all.find((a) => a.id === id);
      if (alert) alert.detail = { ...alert.detail, acknowledged: true };
    }
    return known;
  }

  /** All alerts so far (open and closed), oldest first. */
  alerts(): Alert[] {
    return this.all;
  }

  /** The worst level among all alerts so far, or null. */
  worst(): AlertLevel | null {
    let worst: AlertLevel | null = null;
    for (const alert of this.all) {
      if (worst === null || LEVEL_RANK[alert.level] > LEVEL_RANK[worst]) worst = alert.level;
    }
    return worst;
  }

  /** Number of old closed alerts dropped to keep within maxAlerts. */
  droppedCount(): number {
    return this.dropped;
  }

  private apply(condition: Condition, changes: AlertChange[]): void {
    const entry = this.open.get(condition.key);
    if (condition.level === null) {
      if (entry && entry.clearSince === null) entry.clearSince = condition.t;
      return;
    }
    const detail = {
      statistic: condition.statistic,
      falseAlarm: condition.falseAlarm,
      effect: condition.effect,
      key: condition.key,
      ...(condition.detail ?? {}),
    };
    if (!entry) {
      this.sequence++;
      const alert: Alert = {
        id: `${condition.kind}-${this.sequence}`,
        kind: condition.kind,
        level: condition.level,
        start: condition.t,
        end: null,
        message: condition.message,
        detail: { ...detail, levels: [{ t: condition.t, level: condition.level }] },
      };
      this.open.set(condition.key, { alert, clearSince: null, levels: [{ t: condition.t, level: condition.level }] });
      this.all.push(alert);
      this.trim();
      changes.push({ change: 'open', alert });
      return;
    }
    entry.clearSince = null;
    const levelChanged = entry.alert.level !== condition.level;
    if (levelChanged && entry.levels.length < MAX_LEVEL_CHANGES) entry.levels.push({ t: condition.t, level: condition.level });
    entry.alert.level = condition.level;
    entry.alert.message = condition.message;
    entry.alert.detail = {
      ...detail,
      levels: entry.levels.slice(),
      ...(this.acknowledged.has(entry.alert.id) ? { acknowledged: true } : {}),
    };
    if (levelChanged) changes.push({ change: 'level', alert: entry.alert });
  }

  private trim(): void {
    while (this.all.length > this.maxAlerts) {
      const index = this.all.findIndex((alert) => alert.end !== null);
      if (index < 0) return;
      this.all.splice(index, 1);
      this.dropped++;
    }
  }
}
