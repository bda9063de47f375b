import type { Medium } from '../physics/medium.js';
import { mediumViscosity } from '../physics/mediumViscosity.js';
import { parseMedium } from '../physics/parseMedium.js';
import { stokesEinsteinDiffusion } from '../physics/stokesEinsteinDiffusion.js';
import type { DriftFault, JumpFault, SimulationOptions, SimulationTag, VibrationFault } from './simulationOptions.js';

/** Error code carried by every option error of the simulator. */
export const SIMULATION_OPTION_ERROR_CODE = 'JOSTLE_E_SIMULATION_OPTION';

/**
 * Simulation options with every default filled in, validated and normalised (lists sorted by
 * start time). Produced by {@link resolveSimulationOptions}; JSON-serialisable apart from the
 * parsed `medium` object, which is plain data too. Units as in {@link SimulationOptions}.
 */
export interface ResolvedSimulationOptions {
  seed: number;
  frames: number;
  frameInterval: number;
  exposure: number;
  subSteps: number;
  alwaysSubStep: boolean;
  particles: number;
  field: { width: number; height: number };
  depthOfField: number | null;
  reportZ: boolean;
  /** 'fixed': D given in µm²/s; 'stokes-einstein': D from radius, temperature and medium. */
  diffusionMode: 'fixed' | 'stokes-einstein';
  /** D at the reported temperature (Stokes–Einstein) or the given D, µm²/s. */
  diffusion: number;
  radius: number | null;
  /** Reported temperature, °C (null with a fixed D). */
  reportedCelsius: number | null;
  medium: Medium | null;
  mediumSpec: string | null;
  diffusionSpread: number;
  localizationError: number;
  missProbability: number;
  spuriousPerFrame: number;
  ids: boolean;
  intensity: { mean: number; cv: number };
  minSeparation: number;
  minResolvable: number;
  positionUnit: number;
  temperatureLogInterval: number;
  temperatureSensorNoise: number;
  tags: SimulationTag[];
  badRows: { probability: number } | null;
  drift: DriftFault[];
  jump: JumpFault[];
  rotation: { start: number; omega: number } | null;
  flow: { start: number; fraction: number; velocity: [number, number] } | null;
  vibration: Required<VibrationFault>[];
  heating: { start: number; ratePerMinute: number; step: number } | null;
  temperatureMismatch: number;
  clumping: { start: number; stickProbability: number; contactDistance: number } | null;
  focus: { start: number; localizationError: number } | null;
  droppedFrames: { probability: number; burst: number } | null;
  duplicatedFrames: { probability: number } | null;
  timestampJitter: number;
  clockJump: { t: number; by: number } | null;
  oscillator: { amplitude: number; frequency: number; axis: 'x' | 'y' } | null;
}

function fail(message: string): never {
  const error = new RangeError(message) as RangeError & { code: string };
  error.code = SIMULATION_OPTION_ERROR_CODE;
  throw error;
}

function finite(value: unknown, name: string): number {
  const number = typeof value === 'number' ? value : Number.NaN;
  if (!Number.isFinite(number)) fail(`simulate requires ${name} to be a finite number`);
  return number;
}

function atLeast(value: unknown, min: number, name: string, unit: string): number {
  const number = finite(value, name);
  if (!(number >= min)) fail(`simulate requires ${name} >= ${min}${unit}`);
  return number;
}

function positive(value: unknown, name: string, unit: string): number {
  const number = finite(value, name);
  if (!(number > 0)) fail(`simulate requires ${name} > 0${unit}`);
  return number;
}

function probability(value: unknown, name: string): number {
  const number = finite(value, name);
  if (!(number >= 0 && number <= 1)) fail(`simulate requires ${name} in [0, 1]`);
  return number;
}

function list<T>(value: T | T[] | undefined): T[] {
  if (value === undefined) return [];
  return Array.isArray(value) ? value : [value];
}

/**
 * Validates simulation options and fills in the defaults ("options at the door"). Throws a
 * `RangeError` (with `code = 'JOSTLE_E_SIMULATION_OPTION'`) naming the first bad option, and for
 * contradictions such as `exposure > frameInterval` or `heating` with a fixed D. The medium
 * string is read by `parseMedium` (its `MediumError` passes through).
 *
 * Complexity: O(number of fault entries).
 *
 * @param options the caller's options (not mutated)
 * @returns a fresh, complete, normalised copy
 * @example
 * resolveSimulationOptions({ seed: 1, frames: 10 }).diffusion // → 0.4287... (µm²/s, 0.5 µm radius bead in water at 20 °C)
 * resolveSimulationOptions({ seed: 1, frames: 10, exposure: 1 }) // throws RangeError: simulate requires exposure <= frameInterval (s)
 */
export function resolveSimulationOptions(options: SimulationOptions): ResolvedSimulationOptions {
  if (options === null || typeof options !== 'object') fail('simulate requires an options object');
  const seed = finite(options.seed, 'seed');
  if (!Number.isInteger(seed)) fail('simulate requires seed to be an integer');
  const frames = atLeast(options.frames, 1, 'frames', '');
  if (!Number.isInteger(frames)) fail('simulate requires frames to be an integer');
  const frameInterval = positive(options.frameInterval ?? 0.05, 'frameInterval', ' (s)');
  const exposure = atLeast(options.exposure ?? frameInterval, 0, 'exposure', ' (s)');
  if (exposure > frameInterval * (1 + 1e-12)) fail('simulate requires exposure <= frameInterval (s)');
  const subSteps = atLeast(options.subSteps ?? 20, 20, 'subSteps', '');
  if (!Number.isInteger(subSteps)) fail('simulate requires subSteps to be an integer');
  const particles = atLeast(options.particles ?? 20, 0, 'particles', '');
  const field = options.field ?? { width: 50, height: 50 };
  positive(field.width, 'field.width', ' (µm)');
  positive(field.height, 'field.height', ' (µm)');
  const depthOfField = options.depthOfField === undefined ? null : positive(options.depthOfField, 'depthOfField', ' (µm)');
  const reportZ = options.reportZ ?? false;
  if (reportZ && depthOfField === null) fail('simulate requires depthOfField when reportZ is set');

  const given = options.diffusion ?? { radius: 0.5, celsius: 20, medium: 'water' };
  let diffusionMode: ResolvedSimulationOptions['diffusionMode'];
  let diffusion: number;
  let radius: number | null = null;
  let reportedCelsius: number | null = null;
  let medium: Medium | null = null;
  let mediumSpec: string | null = null;
  if (typeof given === 'number') {
    diffusionMode = 'fixed';
    diffusion = positive(given, 'diffusion', ' (µm²/s)');
  } else {
    diffusionMode = 'stokes-einstein';
    radius = positive(given.radius, 'diffusion.radius', ' (µm)');
    reportedCelsius = finite(given.celsius, 'diffusion.celsius');
    mediumSpec = given.medium ?? 'water';
    medium = parseMedium(mediumSpec);
    diffusion = stokesEinsteinDiffusion(reportedCelsius, mediumViscosity(medium, reportedCelsius), radius);
    if (!(diffusion > 0)) fail('simulate requires diffusion.celsius inside the medium validity range');
  }

  const intensity = options.intensity ?? { mean: 1000, cv: 0.2 };
  positive(intensity.mean, 'intensity.mean', '');
  atLeast(intensity.cv, 0, 'intensity.cv', '');

  const drift = list(options.drift).map((d, i) => {
    finite(d.start, `drift[${i}].start`);
    if (!Array.isArray(d.velocity) || d.velocity.length !== 2) fail(`simulate requires drift[${i}].velocity as [vx, vy] (µm/s)`);
    finite(d.velocity[0], `drift[${i}].velocity[0]`);
    finite(d.velocity[1], `drift[${i}].velocity[1]`);
    return { start: d.start, velocity: [d.velocity[0], d.velocity[1]] as [number, number] };
  });
  drift.sort((a, b) => a.start - b.start);
  const jump = list(options.jump).map((j, i) => ({
    t: finite(j.t, `jump[${i}].t`),
    dx: finite(j.dx, `jump[${i}].dx`),
    dy: finite(j.dy, `jump[${i}].dy`),
  }));
  jump.sort((a, b) => a.t - b.t);
  const vibration = list(options.vibration).map((v, i) => {
    if (v.axis !== 'x' && v.axis !== 'y') fail(`simulate requires vibration[${i}].axis to be 'x' or 'y'`);
    return {
      start: finite(v.start, `vibration[${i}].start`),
      frequency: positive(v.frequency, `vibration[${i}].frequency`, ' (Hz)'),
      amplitude: atLeast(v.amplitude, 0, `vibration[${i}].amplitude`, ' (µm)'),
      axis: v.axis,
      phase: finite(v.phase ?? 0, `vibration[${i}].phase`),
    };
  });
  const rotation = options.rotation
    ? { start: finite(options.rotation.start, 'rotation.start'), omega: finite(options.rotation.omega, 'rotation.omega') }
    : null;
  let flow: ResolvedSimulationOptions['flow'] = null;
  if (options.flow) {
    const v = options.flow.velocity;
    if (!Array.isArray(v) || v.length !== 2) fail('simulate requires flow.velocity as [vx, vy] (µm/s)');
    flow = {
      start: finite(options.flow.start, 'flow.start'),
      fraction: probability(options.flow.fraction, 'flow.fraction'),
      velocity: [finite(v[0], 'flow.velocity[0]'), finite(v[1], 'flow.velocity[1]')],
    };
  }
  let heating: ResolvedSimulationOptions['heating'] = null;
  if (options.heating) {
    heating = {
      start: finite(options.heating.start, 'heating.start'),
      ratePerMinute: finite(options.heating.ratePerMinute ?? 0, 'heating.ratePerMinute'),
      step: finite(options.heating.step ?? 0, 'heating.step'),
    };
  }
  const temperatureMismatch = finite(options.temperatureMismatch ?? 0, 'temperatureMismatch');
  if ((heating || temperatureMismatch !== 0) && diffusionMode === 'fixed') {
    fail('simulate requires diffusion as { radius, celsius, medium } with heating or temperatureMismatch');
  }
  const clumping = options.clumping
    ? {
        start: finite(options.clumping.start, 'clumping.start'),
        stickProbability: probability(options.clumping.stickProbability, 'clumping.stickProbability'),
        contactDistance: positive(options.clumping.contactDistance, 'clumping.contactDistance', ' (µm)'),
      }
    : null;
  const focus = options.focus
    ? {
        start: finite(options.focus.start, 'focus.start'),
        localizationError: atLeast(options.focus.localizationError, 0, 'focus.localizationError', ' (µm)'),
      }
    : null;
  const droppedFrames = options.droppedFrames
    ? {
        probability: probability(options.droppedFrames.probability, 'droppedFrames.probability'),
        burst: atLeast(options.droppedFrames.burst ?? 1, 1, 'droppedFrames.burst', ' (frames)'),
      }
    : null;
  const duplicatedFrames = options.duplicatedFrames
    ? { probability: probability(options.duplicatedFrames.probability, 'duplicatedFrames.probability') }
    : null;
  const clockJump = options.clockJump
    ? { t: finite(options.clockJump.t, 'clockJump.t'), by: finite(options.clockJump.by, 'clockJump.by') }
    : null;
  let oscillator: ResolvedSimulationOptions['oscillator'] = null;
  if (options.oscillator) {
    const axis = options.oscillator.axis ?? 'x';
    if (axis !== 'x' && axis !== 'y') fail("simulate requires oscillator.axis to be 'x' or 'y'");
    oscillator = {
      amplitude: atLeast(options.oscillator.amplitude, 0, 'oscillator.amplitude', ' (µm)'),
      frequency: positive(options.oscillator.frequency, 'oscillator.frequency', ' (Hz)'),
      axis,
    };
  }
  const tags = (options.tags ?? []).map((tag, i) => ({
    label: String(tag.label),
    start: finite(tag.start, `tags[${i}].start`),
    end: tag.end === undefined || tag.end === null ? null : finite(tag.end, `tags[${i}].end`),
    note: tag.note ?? '',
  }));

  return {
    seed,
    frames,
    frameInterval,
    exposure,
    subSteps,
    alwaysSubStep: options.alwaysSubStep ?? false,
    particles,
    field: { width: field.width, height: field.height },
    depthOfField,
    reportZ,
    diffusionMode,
    diffusion,
    radius,
    reportedCelsius,
    medium,
    mediumSpec,
    diffusionSpread: atLeast(options.diffusionSpread ?? 0, 0, 'diffusionSpread', ''),
    localizationError: atLeast(options.localizationError ?? 0.02, 0, 'localizationError', ' (µm)'),
    missProbability: probability(options.missProbability ?? 0, 'missProbability'),
    spuriousPerFrame: atLeast(options.spuriousPerFrame ?? 0, 0, 'spuriousPerFrame', ''),
    ids: options.ids ?? true,
    intensity: { mean: intensity.mean, cv: intensity.cv },
    minSeparation: atLeast(options.minSeparation ?? 0, 0, 'minSeparation', ' (µm)'),
    minResolvable: atLeast(options.minResolvable ?? 0, 0, 'minResolvable', ' (µm)'),
    positionUnit: positive(options.positionUnit ?? 1, 'positionUnit', ' (µm)'),
    temperatureLogInterval: positive(options.temperatureLogInterval ?? 1, 'temperatureLogInterval', ' (s)'),
    temperatureSensorNoise: atLeast(options.temperatureSensorNoise ?? 0, 0, 'temperatureSensorNoise', ' (K)'),
    tags,
    badRows: options.badRows ? { probability: probability(options.badRows.probability, 'badRows.probability') } : null,
    drift,
    jump,
    rotation,
    flow,
    vibration,
    heating,
    temperatureMismatch,
    clumping,
    focus,
    droppedFrames,
    duplicatedFrames,
    timestampJitter: atLeast(options.timestampJitter ?? 0, 0, 'timestampJitter', ' (s)'),
    clockJump,
    oscillator,
  };
}
