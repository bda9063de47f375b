import type { SimulationOptions } from './simulationOptions.js';
import { simulate } from './simulate.js';

/**
 * The ground truth of one simulated run (JSON-serialisable): what an honest monitor should
 * find. Units: µm, s, µm²/s, °C, K, Hz, rad/s. Collected while the run is generated.
 */
export interface SimulationTruth {
  seed: number;
  /** Frame slots simulated, and frames emitted (dropped ones removed, duplicates counted). */
  frames: { slots: number; emitted: number; frameInterval: number; exposure: number };
  /** Motion-blur coefficient R = t_E/(6Δt) (estimators.md §1). */
  blur: number;
  /** Anomalous exponent α of the motion: 1 (free diffusion). */
  alpha: 1;
  /** Localization error σ per axis at the start, µm. */
  localizationError: number;
  /** Reduced localization error x = σ²/(DΔt) at the start (blur not subtracted). */
  reducedError: number;
  diffusion: {
    mode: 'fixed' | 'stokes-einstein';
    /** D at the reported temperature (what Stokes–Einstein predicts from the log), µm²/s. */
    expected: number;
    /** Ensemble mean D of free particles at the start, at the true temperature, µm²/s. */
    ensemble: number;
    /** D of each particle (index = truth id) at the start, at the true temperature, µm²/s. */
    perParticle: number[];
    /** CV of the per-particle D (log-normal). */
    spread: number;
    radius: number | null;
    medium: string | null;
    /** D of a dimer over the mean D of its two members. */
    dimerRatio: number;
  };
  particles: { inBox: number; boxSide: number; meanInField: number; field: { width: number; height: number } };
  temperature: {
    /** Reported temperature, °C (flat log), or null with a fixed D. */
    reported: number | null;
    /** True minus reported temperature at the start, K. */
    mismatch: number;
    /** True temperature and ensemble D at each log time. */
    profile: { t: number; celsius: number; diffusion: number }[];
    heating: { start: number; ratePerMinute: number; step: number } | null;
  };
  drift: { start: number; velocity: [number, number] }[];
  jumps: { t: number; dx: number; dy: number }[];
  rotation: { start: number; omega: number } | null;
  flow: { start: number; fraction: number; velocity: [number, number]; particles: number[] } | null;
  /** Vibration with its exposure-averaged amplitude A·|sinc(ωt_E/2)| (estimators.md §10), µm. */
  vibration: { start: number; frequency: number; amplitude: number; effectiveAmplitude: number; axis: 'x' | 'y'; phase: number }[];
  clumping: {
    start: number;
    /** Time of the first sticking event, s, or null if none happened. */
    onset: number | null;
    events: { t: number; a: number; b: number }[];
  } | null;
  focus: { start: number; localizationError: number } | null;
  timing: {
    droppedSlots: number[];
    duplicatedSlots: number[];
    timestampJitter: number;
    clockJump: { t: number; by: number } | null;
  };
  oscillator: { amplitude: number; frequency: number; axis: 'x' | 'y'; truthId: number } | null;
  /** Every fault with its start time, s, in time order. */
  faults: { kind: string; start: number }[];
  /** Malformed rows injected by the CSV writer (line numbers 1-based), when any. */
  badRows?: { line: number; kind: string }[];
}

/**
 * Runs the simulation to the end and returns its ground truth (the same run as iterating
 * `simulate(options)`, since both are seeded).
 *
 * Complexity: the cost of the whole run, O(frames · particles · subSteps).
 *
 * @param options simulation options (validated as by `resolveSimulationOptions`)
 * @returns the truth of the run
 * @example
 * simulationTruth({ seed: 1, frames: 100, diffusion: 1, exposure: 0.05 }).blur // → 0.16666666666666666
 */
export function simulationTruth(options: SimulationOptions): SimulationTruth {
  const run = simulate(options);
  for (const _event of run) {
    // drain: the truth is collected as the events are generated
  }
  return run.truth();
}
