import type { Frame } from '../frame.js';

/**
 * What the simulator knows about one emitted frame and its detections (never shown to the
 * pipeline; used by tests and calibration scripts). Arrays are parallel to the frame's arrays
 * (first `frame.count` entries).
 */
export interface FrameTruth {
  /** True frame slot k (the frame was exposed from k·Δt), counting dropped frames. */
  slot: number;
  /** True exposure start time, s (the frame's `t` before jitter and clock faults). */
  trueTime: number;
  /** True sample temperature at this frame, °C (null with a fixed D). */
  celsius: number | null;
  /** Localization error σ in force, µm per axis. */
  localizationError: number;
  /** True particle index of each detection; −1 for a spurious detection. */
  truthId: Int32Array;
  /** For a centroid merged from two unresolved particles, the other particle's index; else −1. */
  mergedWith: Int32Array;
  /** True when this event repeats the previous frame (a duplicated-frame fault). */
  duplicate: boolean;
}

/**
 * One event of a simulated run, in stream order.
 *
 * - `frame`: one camera frame (CONTRACTS §4 `frame`), positions in µm, with its truth. Every
 *   event carries freshly allocated arrays: a consumer may keep them (a duplicated frame shares
 *   the arrays of the frame it repeats; do not mutate them).
 * - `temperature`: one reading of the reported sensor log, `t` s (true clock), `celsius` °C.
 *   The log shows the reported temperature (plus sensor noise), not the true one.
 *
 * @example
 * const event: SimulationEvent = { type: 'temperature', t: 2, celsius: 21.5 };
 */
export type SimulationEvent =
  | { type: 'frame'; frame: Frame; truth: FrameTruth }
  | { type: 'temperature'; t: number; celsius: number };
