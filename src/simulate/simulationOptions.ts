/**
 * Options of the physically honest simulator (`simulate`, `simulationTruth`, `writeSimulation`).
 *
 * Every quantity carries its unit in its name or beside it: µm, s, µm²/s, °C, K, Hz, rad/s.
 * Only `seed` and `frames` are needed; every other option has a documented default. Options are
 * validated once, at the door, by {@link resolveSimulationOptions}: a bad value throws a
 * `RangeError` whose message names the option (code `JOSTLE_E_SIMULATION_OPTION`).
 *
 * Fault times (`start`, `t`) are on the simulator's true clock: frame k is exposed from
 * t = k·frameInterval to t + exposure.
 *
 * @example
 * const options: SimulationOptions = {
 *   seed: 7, frames: 200, frameInterval: 0.05, exposure: 0.01, particles: 30,
 *   field: { width: 60, height: 45 },
 *   diffusion: { radius: 0.5, celsius: 21.5, medium: 'water' },
 *   localizationError: 0.03,
 *   drift: { start: 5, velocity: [0.2, 0] },
 * };
 */
export interface SimulationOptions {
  /** Seed of the pseudo-random generator (any 32-bit integer): the same seed gives the same run. */
  seed: number;
  /** Number of frame slots to simulate (camera frames, including any that are dropped). */
  frames: number;
  /** Frame interval Δt, s. Default 0.05 s (20 frames/s). */
  frameInterval?: number;
  /** Exposure t_E, s, 0 ≤ t_E ≤ Δt. Default: equal to `frameInterval` (continuous illumination). */
  exposure?: number;
  /** Sub-steps of the path per exposure window (≥ 20, detectors.md §7). Default 20. */
  subSteps?: number;
  /**
   * Average the path over `subSteps` sub-windows even when nothing inside the exposure needs it.
   * By default the sub-steps are used only with rotation or heating (where the image or D changes
   * within the exposure); otherwise the exposure mean is drawn exactly in one window, which has the
   * same distribution (the limit of infinitely many sub-steps) at 1/20 of the cost. Default false.
   */
  alwaysSubStep?: boolean;
  /** Mean number of particles in the field of view (and in focus). Default 20. */
  particles?: number;
  /** Field of view, µm; it spans [0, width] × [0, height]. Default 50 µm × 50 µm. */
  field?: { width: number; height: number };
  /**
   * Depth of field, µm. When set, each particle also walks in z inside a periodic slab of
   * thickness 3·depthOfField and is detected only while |z| < depthOfField/2. Default: none (2-D).
   */
  depthOfField?: number;
  /** Report the z position (µm) of each detection (needs `depthOfField`). Default false. */
  reportZ?: boolean;
  /**
   * Diffusion coefficient, µm²/s, or the particle and liquid that give it through Stokes–Einstein:
   * radius µm, the reported temperature °C and the medium (as the `--medium` option, default
   * `water`). Default `{ radius: 0.5, celsius: 20, medium: 'water' }` (0.429 µm²/s).
   */
  diffusion?: number | { radius: number; celsius: number; medium?: string };
  /** Coefficient of variation of the per-particle D (log-normal, mean preserved). Default 0. */
  diffusionSpread?: number;
  /** Localization error σ per axis, µm (Gaussian). Default 0.02 µm. */
  localizationError?: number;
  /** Probability that a particle in view is not detected in a frame. Default 0. */
  missProbability?: number;
  /** Mean number of spurious detections per frame (Poisson, uniform over the field). Default 0. */
  spuriousPerFrame?: number;
  /** Write track ids (`id` column / `frame.id`). Default true. */
  ids?: boolean;
  /** Per-particle integrated intensity: log-normal with this mean (a.u.) and CV. Default { mean: 1000, cv: 0.2 }. */
  intensity?: { mean: number; cv: number };
  /** Hard-core diameter, µm: moves that bring two centres closer than this are rejected. Default 0 (off). */
  minSeparation?: number;
  /** Optical resolution, µm: two detections closer than this are reported as one centroid. Default 0 (off). */
  minResolvable?: number;
  /** Size of one written position unit, µm (pixel size): the CSV writer divides by it. Default 1. */
  positionUnit?: number;
  /** Interval of the reported temperature log, s. Default 1 s. */
  temperatureLogInterval?: number;
  /** SD of the temperature sensor noise, K. Default 0. */
  temperatureSensorNoise?: number;
  /** Tags written to the tags CSV (times in s). Default none. */
  tags?: SimulationTag[];
  /**
   * Malformed rows for the CSV writer to inject (after a good row, with this probability per row):
   * non-numeric, missing field, NaN, infinite. Ignored by `simulate` itself. Default none.
   */
  badRows?: { probability: number };

  // ---- faults (any of them may start mid-run) ----
  /** Stage drift: from `start` the stage moves at `velocity` [vx, vy] µm/s; a list gives velocity steps. */
  drift?: DriftFault | DriftFault[];
  /** Stage bump: at time `t` every position jumps by (dx, dy) µm; a list gives several bumps. */
  jump?: JumpFault | JumpFault[];
  /** Rotation of the sample about the field centre at `omega` rad/s from `start`. */
  rotation?: { start: number; omega: number };
  /** Convection: from `start`, a `fraction` of the particles moves at `velocity` [vx, vy] µm/s. */
  flow?: { start: number; fraction: number; velocity: [number, number] };
  /** Common-mode sine A·sin(2πf(t − start) + phase) along one axis, 0-to-peak amplitude µm. */
  vibration?: VibrationFault | VibrationFault[];
  /**
   * The true temperature rises from `start`: by `step` K at once and/or `ratePerMinute` K/min,
   * while the reported log stays flat. Needs `diffusion` as { radius, celsius, medium }.
   */
  heating?: { start: number; ratePerMinute?: number; step?: number };
  /** True temperature minus reported temperature, K, all run. Needs the Stokes–Einstein form. Default 0. */
  temperatureMismatch?: number;
  /**
   * Aggregation from `start`: two free particles whose centres come within `contactDistance` µm
   * stick with `stickProbability` per frame and then move rigidly as a dimer at 0.718·D.
   */
  clumping?: { start: number; stickProbability: number; contactDistance: number };
  /** Focus change: from `start` the localization error is `localizationError` µm. */
  focus?: { start: number; localizationError: number };
  /** Dropped frames: each slot starts a drop with `probability`; `burst` is the mean run length (default 1). */
  droppedFrames?: { probability: number; burst?: number };
  /** Duplicated frames: after a frame, the same frame (index, t, positions) is sent again with `probability`. */
  duplicatedFrames?: { probability: number };
  /** SD of the frame timestamps around their true time, s. Default 0. */
  timestampJitter?: number;
  /** Clock jump: from true time `t` the frame timestamps are set back by `by` s (time goes backwards when by > 0). */
  clockJump?: { t: number; by: number };
  /**
   * One extra particle, held at the field centre, oscillating alone along `axis` (default 'x'):
   * A·sin(2πf t), amplitude µm 0-to-peak, frequency Hz. A negative control for vibration.
   */
  oscillator?: { amplitude: number; frequency: number; axis?: 'x' | 'y' };
}

/** One step of stage drift: from `start` s the velocity is `velocity` [vx, vy] µm/s. */
export interface DriftFault {
  start: number;
  velocity: [number, number];
}

/** A stage bump at time `t` s by (dx, dy) µm. */
export interface JumpFault {
  t: number;
  dx: number;
  dy: number;
}

/** A common-mode vibration: frequency Hz, amplitude µm (0-to-peak), axis, optional phase rad. */
export interface VibrationFault {
  start: number;
  frequency: number;
  amplitude: number;
  axis: 'x' | 'y';
  phase?: number;
}

/** A tag as in CONTRACTS §2 (`label,start,end,note`): times in s, `end` null for a point mark. */
export interface SimulationTag {
  label: string;
  start: number;
  end?: number | null;
  note?: string;
}
