// Calibration of the temperature detector at its default setting: ≥ 15 simulated hours of null
// data (false warns per hour, with the exact Poisson 95 % upper bound) and an injected-fault sweep
// (detection probability, median and 95th-percentile delay). Prints a Markdown table on stdout,
// progress on stderr. Run: npx tsx tools/calibrate/temperature.ts
// Simulated lab: 1 µm beads (r = 0.5 µm) in water at a reported 25 °C, 30 frames/s, σ = 20 nm.
import type { Condition } from '../../src/alerts/condition.js';
import { TemperatureDetector, type TemperatureDetectorOptions } from '../../src/detectors/temperature/temperatureDetector.js';
import { expectedDiffusion } from '../../src/physics/expectedDiffusion.js';
import { chiSquareQuantile } from '../../src/stats/quantiles.js';
import { BrownianSteps, type BrownianStepsOptions, quantilesOf } from '../../test/detectors/temperature/brownianSteps.js';

const DT = 0.033;
const RADIUS = 0.5;
const WATER = { kind: 'water' } as const;
const seDiffusion = (celsius: number): number => expectedDiffusion({ celsius, radius: RADIUS, medium: WATER }).value;
const D25 = seDiffusion(25);
const PARTICLES = 50;
const started = Date.now();
const progress = (text: string): void => {
  process.stderr.write(`[${((Date.now() - started) / 1000).toFixed(0)} s] ${text}\n`);
};

// --- null: 16 streams of one hour each, half with heterogeneous D, 1 % dropped frames in a quarter
const hours = 16;
const framesPerHour = Math.round(3600 / DT);
let nullWarns = 0;
const nullWarnKeys: Record<string, number> = {};
const signalsByKind = { clean: 0, heterogeneous: 0 };
let nullInfos = 0;
let chartSignals = 0;
let armedFrames = 0;
let arl0 = Number.NaN;
for (let stream = 0; stream < hours; stream++) {
  const generator = new BrownianSteps({
    seed: 10_000 + stream, particles: 30, diffusion: D25, frameInterval: DT, reportedTemperature: 25, radius: RADIUS,
    diffusionCv: stream % 2 === 1 ? 0.3 : 0, dropProbability: stream % 4 === 3 ? 0.01 : 0,
  });
  const detector = new TemperatureDetector({});
  for (let f = 0; f < framesPerHour; f++) {
    const { steps, context } = generator.next();
    for (const condition of detector.push(steps, context)) {
      if (condition.level === 'warn') {
        nullWarns++;
        nullWarnKeys[condition.key] = (nullWarnKeys[condition.key] ?? 0) + 1;
      }
      if (condition.level === 'info') nullInfos++;
    }
  }
  chartSignals += detector.signals.rise + detector.signals.fall;
  signalsByKind[stream % 2 === 1 ? 'heterogeneous' : 'clean'] += detector.signals.rise + detector.signals.fall;
  armedFrames += detector.armedFrames;
  arl0 = detector.chartArl0Frames;
  progress(`null hour ${stream + 1}/${hours}: warns so far ${nullWarns}`);
}
// exact Poisson upper 95 % bound on the count: χ²_{0.95}(2k + 2)/2 (3.0 for k = 0)
const upperCount = chiSquareQuantile(0.95, 2 * nullWarns + 2) / 2;

// --- faults
interface Scenario {
  name: string;
  stream: Partial<BrownianStepsOptions>;
  options?: TemperatureDetectorOptions;
  onset: number;
  frames: number;
  hit: (c: Condition) => boolean;
}
const onset = 2500 * DT;
const rise = (c: Condition): boolean => c.level === 'warn' && c.key === 'temperature:cusum:rise';
const fall = (c: Condition): boolean => c.level === 'warn' && c.key === 'temperature:cusum:fall';
const absolute = (c: Condition): boolean => c.level === 'warn' && c.key === 'temperature:absolute';
const anyD = (c: Condition): boolean => c.level !== null && c.key.startsWith('temperature:cusum');
const scenarios: Scenario[] = [];
for (const kelvin of [1, 2, 3, 6]) {
  const factor = seDiffusion(25 + kelvin) / D25;
  scenarios.push({ name: `heating step +${kelvin} K`, stream: { diffusionFactor: (t) => (t >= onset ? factor : 1) }, onset, frames: 2500 + 8000, hit: rise });
}
for (const perMinute of [0.5, 1]) {
  scenarios.push({
    name: `heating ramp ${perMinute} K/min`,
    stream: { diffusionFactor: (t) => seDiffusion(25 + (perMinute * Math.max(0, t - onset)) / 60) / D25 },
    onset, frames: 2500 + 12000, hit: rise,
  });
}
scenarios.push({ name: 'aggregation: 40 % dimers (D × 0.72)', stream: { aggregation: { onset, fraction: 0.4, ratio: 0.72 } }, onset, frames: 2500 + 6000, hit: fall });
scenarios.push({ name: 'σ-only change 20 → 40 nm (must not fire)', stream: { sigma: (t) => (t >= onset ? 0.04 : 0.02) }, onset, frames: 2500 + 6000, hit: anyD });
for (const kelvin of [2, 3, 4, 6]) {
  scenarios.push({ name: `absolute: sample ${kelvin} K warmer than reported`, stream: { diffusion: seDiffusion(25 + kelvin) }, onset: 0, frames: Math.round(600 / DT), hit: absolute });
}

const seeds = 30;
const rows: string[] = [];
for (const scenario of scenarios) {
  const delays: number[] = [];
  for (let seed = 0; seed < seeds; seed++) {
    const generator = new BrownianSteps({
      seed: 20_000 + 97 * seed + rows.length, particles: PARTICLES, diffusion: D25, frameInterval: DT,
      reportedTemperature: 25, radius: RADIUS, ...scenario.stream,
    });
    const detector = new TemperatureDetector(scenario.options ?? {});
    let found = false;
    for (let f = 0; f < scenario.frames && !found; f++) {
      const { steps, context } = generator.next();
      for (const condition of detector.push(steps, context)) {
        if (!found && condition.t >= scenario.onset && scenario.hit(condition)) {
          found = true;
          delays.push(condition.t - scenario.onset);
        }
      }
    }
  }
  const q = delays.length > 0 ? quantilesOf(delays) : null;
  rows.push(
    `| ${scenario.name} | ${seeds} | ${(delays.length / seeds).toFixed(2)} | ${q ? q.median.toFixed(1) : '–'} | ${q ? q.p95.toFixed(1) : '–'} | ${(scenario.frames * DT / 60).toFixed(1)} min |`,
  );
  progress(`${scenario.name}: ${delays.length}/${seeds}`);
}

const lines = [
  `Temperature detector, default options; ${PARTICLES} particles (null: 30), Δt = ${DT} s, σ = 20 nm, R = 0, r = 0.5 µm in water, reported 25 °C.`,
  '',
  '| null data | hours | false warns | per hour | 95 % upper bound per hour | info | chart signals (design) |',
  '|---|---|---|---|---|---|---|',
  `| clean / heterogeneous D (CV 0.3) / 1 % drops | ${hours} | ${nullWarns} | ${(nullWarns / hours).toFixed(3)} | ${(upperCount / hours).toFixed(3)} | ${nullInfos} | ${chartSignals} (${((2 * armedFrames) / arl0).toFixed(1)}) |`,
  '',
  `False warns by condition: ${JSON.stringify(nullWarnKeys)}; chart signals by stream: ${JSON.stringify(signalsByKind)} (design ${(arl0 > 0 ? (2 * armedFrames) / arl0 / 2 : 0).toFixed(1)} each).`,
  '',
  '| injected fault | runs | detection probability | median delay (s) | 95th-percentile delay (s) | horizon |',
  '|---|---|---|---|---|---|',
  ...rows,
  '',
  `Delays are from the onset to the warn (chart signal plus the 1e5-step confirmation window). Run time ${((Date.now() - started) / 1000).toFixed(0)} s.`,
];
process.stdout.write(`${lines.join('\n')}\n`);
