/** Kinds of alert, exactly as CONTRACTS §3. */
export type AlertKind =
  | 'drift'
  | 'vibration'
  | 'temperature'
  | 'clumping'
  | 'timing'
  | 'sparse'
  | 'noise'
  | 'tracks'
  | 'recording';

/** Alert levels, in increasing severity. */
export type AlertLevel = 'info' | 'warn' | 'stop';

/** An effect size with its 95 % confidence interval and unit. */
export interface Effect {
  name: string;
  value: number;
  ci95: [number, number] | null;
  unit: string;
}

/**
 * What a detector says about one condition at one frame. A detector reports a condition with
 * a stable `key` (for example `drift:x+`) every time its state is decided; the alert engine
 * turns a run of reports into one alert with an id, an opening time and a closing time
 * (hysteresis lives there, not in the detector).
 *
 * `level: null` means the condition is clear now.
 */
export interface Condition {
  /** Stable key of the condition within its detector, e.g. `drift:cusum:x+`. */
  key: string;
  kind: AlertKind;
  level: AlertLevel | null;
  /** Time of the frame at which this was decided, s (data clock). */
  t: number;
  /** Plain-language message with numbers, likely cause and remedy. No trailing full stop needed. */
  message: string;
  /** The test statistic and the threshold it crossed. */
  statistic: { name: string; value: number; threshold: number };
  /** False-alarm figure for this test at its setting: ARL0 in frames, or a per-test p-value. */
  falseAlarm: { arl0Frames?: number; pValue?: number; perHour?: number };
  /** Effect size with CI (e.g. drift velocity µm/s, MSD bias %). */
  effect: Effect | null;
  /** Any further detail (pairs by track id, candidate frequencies, ...): JSON-serialisable. */
  detail?: Record<string, unknown>;
}
