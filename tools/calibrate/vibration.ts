/**
 * Calibration of the stage-vibration detector at its default setting: false warns per hour over
 * ≥ 15 simulated hours of null data, and the detection probability, 90 %-detection amplitude and
 * delays of injected common-mode sines. Prints Markdown tables on stdout, progress on stderr.
 *
 * Run: npx tsx tools/calibrate/vibration.ts [--quick]
 * Bounded: about 4 minutes on one core (--quick: a tenth of the work).
 */
import { clopperPearson } from '../../src/stats/quantiles.js';
import { VibrationDetector } from '../../src/detectors/vibration/vibrationDetector.js';
import { SimulatedStream, contextFor, type StreamSettings } from '../../test/detectors/vibration/simulateSteps.js';

const quick = process.argv.includes('--quick');
const frameInterval = 0.01;
const framesPerHour = 3600 / frameInterval;

function log(message: string): void {
  process.stderr.write(`${message}\n`);
}

/** Null run: returns windows, windows with any line, warns (warn or stop raised), hours. */
function nullRun(hours: number, settings: Partial<StreamSettings>): { windows: number; flagged: number; warns: number; hours: number } {
  const stream = new SimulatedStream(settings);
  const context = contextFor(stream.settings);
  const detector = new VibrationDetector();
  const frames = Math.round(hours * framesPerHour);
  let warns = 0;
  let flagged = 0;
  let windows = 0;
  const chunk = Math.round(framesPerHour / 4);
  for (let i = 0; i < frames; i++) {
    const frame = stream.next();
    const conditions = detector.push(frame, context);
    for (const c of conditions) if (c.level === 'warn' || c.level === 'stop') warns++;
    if (detector.windowsTested !== windows) {
      windows = detector.windowsTested;
      if (detector.summary().current.length > 0) flagged++;
    }
    if (i % chunk === chunk - 1) log(`  null ${((i + 1) / framesPerHour).toFixed(2)} h of ${hours} h, windows ${windows}, flagged ${flagged}, warns ${warns}`);
  }
  return { windows, flagged, warns, hours };
}

interface Trial {
  detected: boolean;
  correctBin: boolean;
  delay: number;
  covered: boolean;
}

/** One injected sine: vibration from `onset` (s); runs until detection or 2 windows after onset. */
function trial(seed: number, amplitude: number, frequency: number, exposure: number, onset: number): Trial {
  const stream = new SimulatedStream({ seed, vibrationAmplitude: amplitude, vibrationFrequency: frequency, exposure, vibrationOnset: onset });
  const context = contextFor(stream.settings);
  const detector = new VibrationDetector();
  const L = detector.options.segmentLength;
  const K = detector.options.segments;
  const limit = Math.ceil(onset / frameInterval) + (K + 2) * L + 1;
  const fs = 1 / frameInterval;
  const alias = Math.abs(frequency - fs * Math.round(frequency / fs));
  const sinc = (f: number): number => (f * exposure === 0 ? 1 : Math.abs(Math.sin(Math.PI * f * exposure) / (Math.PI * f * exposure)));
  // The detector corrects exposure at the baseband frequency; compare with what it should say.
  const expected = (amplitude * sinc(frequency)) / sinc(alias);
  for (let i = 0; i < limit; i++) {
    const frame = stream.next();
    const conditions = detector.push(frame, context);
    const raised = conditions.find((c) => c.key === 'vibration:x' && c.level !== null);
    if (raised) {
      const peak = detector.summary().current.find((p) => p.axis === 'x');
      const binHz = 1 / (L * frameInterval);
      return {
        detected: true,
        correctBin: peak !== undefined && Math.abs(peak.frequency - alias) <= binHz,
        delay: frame.t - onset,
        covered: peak !== undefined && peak.amplitudeCi95[0] <= expected && expected <= peak.amplitudeCi95[1],
      };
    }
  }
  return { detected: false, correctBin: false, delay: Number.NaN, covered: false };
}

function quantile(sorted: number[], p: number): number {
  if (sorted.length === 0) return Number.NaN;
  const index = Math.min(sorted.length - 1, Math.max(0, Math.ceil(p * sorted.length) - 1));
  return sorted[index];
}

const started = Date.now();
const probe = new VibrationDetector();
const window = probe.options.segments * probe.options.segmentLength * frameInterval;
const hop = probe.options.hopSegments * probe.options.segmentLength * frameInterval;
log(`vibration calibration: L = ${probe.options.segmentLength}, K = ${probe.options.segments}, share ${probe.options.falseWarnsPerHour}/h`);

// 1. Null streams: N = 20, D = 0.5 µm²/s ×U(0.3, 1.7), σ = 30 nm, Δt = 10 ms, τ_e = Δt, drift 0.05 µm/s.
const nullBase: Partial<StreamSettings> = { particles: 20, diffusionSpread: 0.7, driftVelocity: [0.05, -0.03] };
const nulls = [
  { label: 'clean, heterogeneous D, constant drift (F-test)', hours: quick ? 1.5 : 15, settings: { ...nullBase, seed: 11 } },
  { label: '1 % dropped frames (Lomb–Scargle fallback)', hours: quick ? 0.2 : 1, settings: { ...nullBase, seed: 12, dropProbability: 0.01 } },
];
const nullRows: string[] = [];
for (const n of nulls) {
  log(`null: ${n.label}`);
  const r = nullRun(n.hours, n.settings);
  const rate = r.warns / r.hours;
  const [low, high] = clopperPearson(r.warns, Math.max(r.warns, r.windows));
  const perWindowToHour = Math.max(r.warns, r.windows) / r.hours;
  const bound = r.warns === 0 ? `≤ ${(3 / r.hours).toFixed(2)} (zero in ${r.hours} h)` : `[${(low * perWindowToHour).toFixed(2)}, ${(high * perWindowToHour).toFixed(2)}]`;
  nullRows.push(`| ${n.label} | ${r.hours} | ${r.windows} | ${r.flagged} | ${r.warns} | ${rate.toFixed(3)} | ${bound} |`);
}

// 2. Injected sines: N = 40, D = 0.5 µm²/s, σ = 30 nm, Δt = 10 ms, 8 × 256 frames.
const seeds = quick ? 10 : 30;
const sweeps: { frequency: number; exposure: number; amplitudes: number[] }[] = [
  { frequency: 5, exposure: 0.01, amplitudes: [0.008, 0.012, 0.016, 0.02, 0.025] },
  { frequency: 13.7, exposure: 0.01, amplitudes: [0.004, 0.005, 0.006, 0.007, 0.008] },
  { frequency: 45, exposure: 0.01, amplitudes: [0.002, 0.003, 0.004, 0.005, 0.006] },
  { frequency: 130, exposure: 0.01, amplitudes: [0.01, 0.015, 0.02, 0.025, 0.03] },
];
const powerRows: string[] = [];
const delayRows: string[] = [];
for (const sweep of sweeps) {
  let a90 = Number.NaN;
  let a90Grid = Number.NaN;
  let previous = { amplitude: 0, p: 0 };
  for (const amplitude of sweep.amplitudes) {
    let detected = 0;
    let correct = 0;
    let covered = 0;
    for (let s = 0; s < seeds; s++) {
      const r = trial(5000 + s, amplitude, sweep.frequency, sweep.exposure, 0);
      if (r.detected) detected++;
      if (r.correctBin) correct++;
      if (r.covered) covered++;
    }
    const p = detected / seeds;
    if (Number.isNaN(a90) && p >= 0.9) {
      // A_90 by linear interpolation between the grid amplitudes that bracket P = 0.9
      a90 = previous.amplitude + ((0.9 - previous.p) / (p - previous.p)) * (amplitude - previous.amplitude);
      a90Grid = amplitude;
    }
    previous = { amplitude, p };
    const ci = clopperPearson(detected, seeds);
    powerRows.push(`| ${sweep.frequency} | ${sweep.exposure * 1000} | ${(amplitude * 1000).toFixed(1)} | ${p.toFixed(2)} [${ci[0].toFixed(2)}, ${ci[1].toFixed(2)}] | ${(correct / seeds).toFixed(2)} | ${detected > 0 ? (covered / detected).toFixed(2) : '–'} |`);
    log(`  ${sweep.frequency} Hz, ${(amplitude * 1000).toFixed(1)} nm: P(detect) ${p.toFixed(2)}`);
  }
  // Delay at A_90 (or the largest amplitude tried): onset at a random time after the first window.
  const amplitude = Number.isNaN(a90) ? sweep.amplitudes[sweep.amplitudes.length - 1] : a90Grid;
  const delays: number[] = [];
  let detected = 0;
  const delaySeeds = quick ? 6 : 20;
  for (let s = 0; s < delaySeeds; s++) {
    const onset = window + hop * ((s * 0.618) % 1) + 0.37;
    const r = trial(9000 + s, amplitude, sweep.frequency, sweep.exposure, onset);
    if (r.detected) {
      detected++;
      delays.push(r.delay);
    }
  }
  delays.sort((a, b) => a - b);
  delayRows.push(`| ${sweep.frequency} | ${(amplitude * 1000).toFixed(1)} | ${Number.isNaN(a90) ? '> largest tried' : (a90 * 1000).toFixed(1)} | ${(detected / delaySeeds).toFixed(2)} | ${quantile(delays, 0.5).toFixed(1)} | ${quantile(delays, 0.95).toFixed(1)} | ${(window + hop).toFixed(2)} |`);
}

const out: string[] = [];
out.push(`Default setting: L = ${probe.options.segmentLength}, K = ${probe.options.segments}, hop ${probe.options.hopSegments}, share ${probe.options.falseWarnsPerHour} false warns/h, Δt = 10 ms (α per window ${(probe.options.falseWarnsPerHour / (3600 / hop)).toExponential(2)}).`);
out.push('');
out.push('| null stream (N = 20, D 0.5 µm²/s ×U(0.3,1.7), σ 30 nm, drift 0.06 µm/s) | hours | windows | windows with a line | warns | warns per hour | 95 % bound |');
out.push('|---|---|---|---|---|---|---|');
out.push(...nullRows);
out.push('');
out.push(`| f_v Hz (N = 40, D 0.5, σ 30 nm, Δt 10 ms) | τ_e ms | A nm | detection probability [95 % CI], ${seeds} seeds | correct bin | CI covers A |`);
out.push('|---|---|---|---|---|---|');
out.push(...powerRows);
out.push('');
out.push('| f_v Hz | A nm used (grid value ≥ A_90) | A_90 nm (interpolated) | detected | median delay s | 95th pct delay s | window + hop s |');
out.push('|---|---|---|---|---|---|---|');
out.push(...delayRows);
out.push('');
out.push(`(${((Date.now() - started) / 1000).toFixed(0)} s)`);
process.stdout.write(`${out.join('\n')}\n`);
