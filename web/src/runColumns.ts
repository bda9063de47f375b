import type { RunState } from '../../server/protocol.js';
import { boundColumns, type Columns } from './boundColumns.js';

/** Most points any time chart is given (history is bounded to this many rows). */
export const MAX_CHART_POINTS = 1500;

const num = (v: unknown): number | null => (typeof v === 'number' && Number.isFinite(v) ? v : null);

/** Expected D of the run (Stokes-Einstein at the reported temperature), µm²/s, or null. */
export function expectedDiffusionOf(state: RunState): { value: number; sd: number } | null {
  const e = (state.report.temperature as { expectedDiffusion?: { value: number; sd: number } | null }).expectedDiffusion;
  return e && Number.isFinite(e.value) ? { value: e.value, sd: Number.isFinite(e.sd) ? e.sd : 0 } : null;
}

/**
 * D over time: `[t s, D, low, high, expected, expectedLow, expectedHigh]` (µm²/s), from
 * `report.series.diffusion` (the estimate with its 95 % CI) and the Stokes-Einstein
 * expectation ± 1.96·sd, bounded to {@link MAX_CHART_POINTS}. Complexity O(rows).
 *
 * @example
 * diffusionColumns(state)[1].at(-1) // → latest D, µm²/s
 */
export function diffusionColumns(state: RunState): Columns {
  const s = (state.report.series as { diffusion?: { t: number[]; value: number[]; low: number[]; high: number[] } } | undefined)?.diffusion;
  const t = s?.t ?? [];
  const e = expectedDiffusionOf(state);
  const fill = (v: number | null) => t.map(() => v);
  return boundColumns([
    t, (s?.value ?? []).map(num), (s?.low ?? []).map(num), (s?.high ?? []).map(num),
    fill(e ? e.value : null), fill(e ? e.value - 1.96 * e.sd : null), fill(e ? e.value + 1.96 * e.sd : null),
  ], MAX_CHART_POINTS);
}

/**
 * Temperature over time: `[t s, reported °C, implied °C, impliedLow, impliedHigh]` from the
 * server's chart history. Complexity O(rows).
 *
 * @example
 * temperatureColumns(state)[2] // → implied temperature per summary, °C (null gaps)
 */
export function temperatureColumns(state: RunState): Columns {
  const h = state.history;
  return boundColumns([h.t, h.reportedCelsius, h.impliedCelsius, h.impliedLow, h.impliedHigh], MAX_CHART_POINTS);
}

/**
 * Drift velocity over time: `[t s, vx µm/s, vy µm/s]` from the chart history. O(rows).
 *
 * @example
 * driftVelocityColumns(state)[1].at(-1) // → latest vx, µm/s
 */
export function driftVelocityColumns(state: RunState): Columns {
  const h = state.history;
  return boundColumns([h.t, h.driftVx, h.driftVy], MAX_CHART_POINTS);
}

/**
 * Drift path (x, y of the common-mode motion, µm) in time order: the report's per-frame
 * `drift.path` when it has one, else the history's integrated drift path; at most
 * `maxPoints` points. O(rows).
 *
 * @example
 * driftPathPoints(state).x.length // ≤ 800
 */
export function driftPathPoints(state: RunState, maxPoints = 800): { t: number[]; x: number[]; y: number[] } {
  const p = (state.report.drift as { path?: { t: number[]; x: number[]; y: number[] } }).path;
  const src = p && p.t.length > 1 ? p : { t: state.history.t, x: state.history.driftX, y: state.history.driftY };
  const [t, x, y] = boundColumns([src.t, src.x, src.y], maxPoints);
  const out = { t: [] as number[], x: [] as number[], y: [] as number[] };
  for (let i = 0; i < t.length; i++) {
    if (x[i] === null || y[i] === null) continue;
    out.t.push(t[i] as number);
    out.x.push(x[i] as number);
    out.y.push(y[i] as number);
  }
  return out;
}

/**
 * Common-mode spectrum: `[frequency Hz, statistic, threshold]` (the statistic and its detection
 * threshold are dimensionless), ascending in frequency, plus the detected peaks. O(bins).
 *
 * @example
 * spectrumColumns(state).columns[0] // → frequencies, Hz
 */
export function spectrumColumns(state: RunState): { columns: Columns; peaks: { frequency: number; axis: string; amplitude: number }[]; threshold: number | null } {
  const v = state.report.vibration as { spectrum?: { frequency: number[]; statistic: number[]; threshold: number | null } };
  const f = v.spectrum?.frequency ?? [];
  const s = v.spectrum?.statistic ?? [];
  const threshold = num(v.spectrum?.threshold);
  const order = f.map((_, i) => i).sort((a, b) => f[a] - f[b]);
  const columns = boundColumns([order.map((i) => f[i]), order.map((i) => { const v = num(s[i]); return v !== null && v > 0 ? v : null; }), order.map(() => (threshold !== null && threshold > 0 ? threshold : null))], 2000);
  return { columns, peaks: state.report.vibration.peaks ?? [], threshold };
}
