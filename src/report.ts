import type { AlertKind, AlertLevel } from './alerts/condition.js';

/** A value with its 95 % confidence interval (same unit as the value). */
export interface Estimate {
  value: number;
  ci95: [number, number];
}

/** One alert as it appears in a report and on the wire (CONTRACTS §3). */
export interface Alert {
  id: string;
  kind: AlertKind;
  level: AlertLevel;
  /** Time the condition was first declared, s (data clock). */
  start: number;
  /** Time it cleared, s, or null while open. */
  end: number | null;
  message: string;
  detail: Record<string, unknown>;
}

/** One point of the ensemble MSD curve. */
export interface MsdPoint {
  /** Lag, s. */
  lag: number;
  /** Drift-corrected ensemble MSD (sum over axes), µm². */
  value: number;
  /** Standard error, µm². */
  se: number;
  /** Number of displacements pooled. */
  count: number;
}

/** The report of CONTRACTS §3, from `analyze --json` and from the live server. */
export interface Report {
  provenance: { version: string; options: Record<string, unknown>; generated: string };
  input: {
    rows: number;
    rejectedRows: number;
    frames: number;
    tracks: number;
    rejected: { line: number; reason: string; text: string }[];
    [more: string]: unknown;
  };
  diffusion: {
    coefficient: Estimate | null;
    estimator: { name: 'cve' | 'msd-fit'; reason: string; msdPoints?: number; [more: string]: unknown } | null;
    perAxis: { x: Estimate | null; y: Estimate | null; z?: Estimate | null };
    localizationError: Estimate | null;
    exponent: Estimate | null;
    reducedError: number | null;
    driftCorrection: { method: 'fitted' | 'per-frame' | 'none'; reason: string };
    [more: string]: unknown;
  };
  msd: MsdPoint[];
  tracks: { id: number; frames: number; start: number; end: number; D: Estimate | null }[];
  heterogeneity: { alpha2: { value: number; se: number } | null; [more: string]: unknown };
  drift: {
    velocity: { value: [number, number]; ci95: [[number, number], [number, number]] } | null;
    [more: string]: unknown;
  };
  vibration: {
    peaks: { frequency: number; amplitude: number; axis: 'x' | 'y' | 'xy'; aliasesHz: number[] }[];
    [more: string]: unknown;
  };
  temperature: {
    reported: number | null;
    implied: Estimate | null;
    [more: string]: unknown;
  };
  size: { impliedRadius: Estimate | null; [more: string]: unknown };
  alerts: Alert[];
  segments: { label: string; start: number; end: number | null; note: string; diffusion: Estimate | null }[];
  [more: string]: unknown;
}
