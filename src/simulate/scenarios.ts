import type { SimulationOptions } from './simulationOptions.js';

/**
 * The bench every scenario is set on: an invented lab, the "Brackenfield soft-matter bench",
 * imaging its in-house tracer lot BF-PS-1188 (polystyrene-like beads, 1 µm diameter, so radius
 * 0.5 µm) in water at a reported 21.0 °C, 20 frames/s with a 10 ms exposure, 80 µm × 60 µm
 * field, σ = 30 nm.
 */
const bench = {
  frameInterval: 0.05,
  exposure: 0.01,
  particles: 40,
  field: { width: 80, height: 60 },
  diffusion: { radius: 0.5, celsius: 21.0, medium: 'water' },
  localizationError: 0.03,
  intensity: { mean: 1800, cv: 0.25 },
  ids: true,
} satisfies Partial<SimulationOptions>;

/**
 * Named, seeded scenarios for demos, pipeline tests and detector calibration, all set on the
 * invented Brackenfield bench (see src/simulate/README.md for what each one shows). Times in s.
 *
 * - `clean`: 60 s of free beads, no fault (the null case).
 * - `drift`: the stage starts to creep at 0.15 µm/s in x and −0.05 µm/s in y at 20 s.
 * - `vibration`: a 7.3 Hz, 80 nm (0-to-peak) shake along y from 120 s (4 minutes in all).
 * - `heating`: the sample warms by 3 K/min from 150 s while the sensor log stays at 21.0 °C (6 minutes).
 * - `mismatch`: the sample is 5 K warmer than reported, all run (3 minutes).
 * - `clumping`: a dense lot (BF-PS-1188-R, re-suspended) whose beads start to stick at 90 s, after
 *   the clumping detector's 60 s baseline (3 minutes).
 * - `focus`: the focus slips at 120 s and σ rises from 30 nm to 120 nm (D unchanged; 3 minutes).
 * - `dropped-frames`: dropped bursts, duplicates, timestamp jitter and a clock set back at 45 s.
 * - `crowded`: a dense hard-core suspension (no sticking): a negative control for clumping.
 * - `oscillator`: one trapped bead driven at 4 Hz among free beads: a negative control for vibration.
 * - `bad-rows`: the clean run, with 0.5 % malformed rows in its CSV.
 * - `demo`: 10 minutes that turn on drift, vibration, heating and clumping one after the other.
 *
 * @example
 * simulate(scenarios.drift) // → a 60 s run whose stage starts drifting at t = 20 s
 */
export const scenarios: Record<string, SimulationOptions> = {
  clean: { ...bench, seed: 1188, frames: 1200 },
  drift: { ...bench, seed: 2201, frames: 1200, drift: { start: 20, velocity: [0.15, -0.05] } },
  vibration: { ...bench, seed: 2202, frames: 4800, vibration: { start: 120, frequency: 7.3, amplitude: 0.08, axis: 'y' } },
  heating: { ...bench, seed: 2203, frames: 7200, heating: { start: 150, ratePerMinute: 3 } },
  mismatch: { ...bench, seed: 2204, frames: 3600, temperatureMismatch: 5 },
  clumping: {
    ...bench,
    seed: 2205,
    frames: 3600,
    particles: 120,
    field: { width: 60, height: 60 },
    clumping: { start: 90, stickProbability: 0.3, contactDistance: 1.0 },
    minResolvable: 1.1,
  },
  focus: { ...bench, seed: 2206, frames: 3600, focus: { start: 120, localizationError: 0.12 } },
  'dropped-frames': {
    ...bench,
    seed: 2207,
    frames: 1200,
    droppedFrames: { probability: 0.01, burst: 3 },
    duplicatedFrames: { probability: 0.005 },
    timestampJitter: 0.0002,
    clockJump: { t: 45, by: 0.5 },
  },
  crowded: {
    ...bench,
    seed: 2208,
    frames: 1200,
    particles: 300,
    field: { width: 60, height: 60 },
    minSeparation: 1.0,
    minResolvable: 0.8,
  },
  oscillator: { ...bench, seed: 2209, frames: 1200, oscillator: { amplitude: 0.3, frequency: 4, axis: 'x' } },
  'bad-rows': { ...bench, seed: 2210, frames: 600, badRows: { probability: 0.005 } },
  demo: {
    ...bench,
    seed: 2211,
    frames: 12000,
    particles: 30,
    temperatureSensorNoise: 0.02,
    drift: [
      { start: 120, velocity: [0.1, 0.04] },
      { start: 200, velocity: [0, 0] },
    ],
    vibration: { start: 240, frequency: 6.1, amplitude: 0.06, axis: 'x' },
    heating: { start: 360, ratePerMinute: 2 },
    clumping: { start: 450, stickProbability: 0.5, contactDistance: 1.0 },
    minResolvable: 1.1,
    tags: [
      { label: 'stage-creep', start: 120, end: 200, note: 'stage lock released by hand' },
      { label: 'pump-on', start: 240, end: null, note: 'chiller pump switched on next to the bench' },
      { label: 'lamp-warm', start: 360, end: null, note: 'lamp housing left open' },
      { label: 'salt-added', start: 450, end: null, note: 'a drop of buffer from lot BF-SALT-07' },
    ],
  },
};

/** One line on what each named scenario shows (for `jostle simulate --list`). */
export const scenarioDescriptions: Record<string, string> = {
  clean: '60 s of free beads, no fault (the null case)',
  drift: 'the stage starts to creep at (0.15, −0.05) µm/s at 20 s',
  vibration: 'a 7.3 Hz, 80 nm shake along y from 120 s',
  heating: 'the sample warms by 3 K/min from 150 s while the sensor stays at 21.0 °C',
  mismatch: 'the sample is 5 K warmer than reported, all run',
  clumping: 'a dense re-suspended lot whose beads start to stick at 90 s',
  focus: 'the focus slips at 120 s: σ from 30 nm to 120 nm, D unchanged',
  'dropped-frames': 'dropped bursts, duplicates, timestamp jitter and a clock set back at 45 s',
  crowded: 'a dense hard-core suspension, no sticking (a clumping negative control)',
  oscillator: 'one trapped bead driven at 4 Hz among free beads (a vibration negative control)',
  'bad-rows': 'the clean run with 0.5 % malformed rows in its CSV',
  demo: '10 minutes: drift, vibration, heating and clumping one after the other, with tags',
};
