// Calibration of the clumping detector at its default setting: ≥ 15 simulated hours of null data
// (false warns per hour with the exact Poisson 95 % upper bound, and each sign's false-look rate)
// and an injected-aggregation sweep (detection probability, median and 95th-percentile delay).
// Prints a Markdown table on stdout, progress on stderr. Run: npx tsx tools/calibrate/clumping.ts
// Simulated lab: 1 µm beads (r = 0.5 µm) in water at 20 °C (D = 0.43 µm²/s), 20 frames/s, σ = 20 nm,
// a 40 µm field inside a 50 µm periodic box (the invented "Harbour Street colloid bench").
import { ClumpingDetector, type SignalName } from '../../src/detectors/clumping/clumpingDetector.js';
import { chiSquareQuantile } from '../../src/stats/quantiles.js';
import { ClumpingSteps, makeContext, type ClumpingStepsOptions } from '../../test/detectors/clumping/clumpingSteps.js';

const D = 0.43;
const DT = 0.05;
const SIGMA = 0.02;
const context = makeContext(D, SIGMA, 0.5);
const started = Date.now();

function quantile(values: number[], p: number): number {
  if (values.length === 0) return Number.NaN;
  const sorted = values.slice().sort((a, b) => a - b);
  return sorted[Math.min(sorted.length - 1, Math.floor(p * sorted.length))];
}

/** Exact Poisson 95 % upper bound on a rate from k events in T hours (one-sided 97.5 %). */
function poissonUpper(k: number, hours: number): number {
  return chiSquareQuantile(0.975, 2 * (k + 1)) / 2 / hours;
}

interface NullCase { label: string; gen: Partial<ClumpingStepsOptions>; hours: number; streams: number }
const nullCases: NullCase[] = [
  { label: 'CSR, 30 particles in the box (≈ 19 in view)', gen: { particles: 30 }, hours: 15, streams: 5 },
  { label: 'heterogeneous D (CV 0.3), 1 % dropped frames', gen: { particles: 30, diffusionCv: 0.3, dropProbability: 0.01 }, hours: 2, streams: 2 },
  { label: 'hard-core crowding, 20 % area fraction', gen: { particles: 100, box: 20, field: 16, hardCore: 1, burnIn: 2400 }, hours: 1, streams: 1 },
];

const rows: string[] = [];
rows.push('| null case | hours | warns | false warns / h (exact Poisson upper 97.5 %) | false looks per sign: NN / pairs / merges / slow (looks) |');
rows.push('| --- | --- | --- | --- | --- |');
let designAlpha = 0, designL = 0;
for (const c of nullCases) {
  let warns = 0;
  const sig: Record<SignalName, number> = { nearestNeighbour: 0, persistentPairs: 0, merges: 0, slowTracks: 0 };
  const looks: Record<SignalName, number> = { nearestNeighbour: 0, persistentPairs: 0, merges: 0, slowTracks: 0 };
  const framesPerStream = Math.round((c.hours / c.streams) * 3600 / DT);
  for (let s = 0; s < c.streams; s++) {
    const gen = new ClumpingSteps({ seed: 4000 + s + 100 * rows.length, particles: 30, box: 50, field: 40, diffusion: D, frameInterval: DT, sigma: SIGMA, ...c.gen });
    const detector = new ClumpingDetector();
    for (let k = 0; k < framesPerStream; k++) {
      for (const cond of detector.push(gen.next(), context)) if (cond.level === 'warn' || cond.level === 'stop') warns++;
      if (k % 100000 === 0) process.stderr.write(`null ${c.label}: stream ${s + 1}/${c.streams}, frame ${k}/${framesPerStream}, ${((Date.now() - started) / 1000).toFixed(0)} s\n`);
    }
    const summary = detector.summary();
    for (const name of Object.keys(sig) as SignalName[]) { sig[name] += summary.looks[name].significant; looks[name] += summary.looks[name].looks; }
    designAlpha = summary.design.signalAlpha ?? 0;
    if (c === nullCases[0]) designL = summary.design.persistenceFrames ?? 0;
  }
  const names: SignalName[] = ['nearestNeighbour', 'persistentPairs', 'merges', 'slowTracks'];
  rows.push(`| ${c.label} | ${c.hours} | ${warns} | ${(warns / c.hours).toFixed(3)} (≤ ${poissonUpper(warns, c.hours).toFixed(2)}) | ${names.map((n) => sig[n]).join(' / ')} (${looks.nearestNeighbour}) |`);
}

const faultRows: string[] = [];
faultRows.push('| injected fault | seeds | detected (warn) | median delay s | 95th pct delay s | first pair look, median delay s |');
faultRows.push('| --- | --- | --- | --- | --- | --- |');
const seeds = 8;
const runSeconds = 600;
const faults: { label: string; gen: (seed: number, onset: number) => Partial<ClumpingStepsOptions> }[] = [
  ...[0.05, 0.1, 0.2, 0.3].map((fraction) => ({
    label: `${Math.round(100 * fraction)} % of particles in resolved dimers (contact 1 µm)`,
    gen: (_seed: number, onset: number) => ({ injected: { onset, fraction, contact: 1.0 } }),
  })),
  { label: 'unresolved sticking on contact (0.9 µm), p = 0.5 per frame', gen: (_seed: number, onset: number) => ({ sticking: { onset, probability: 0.5, contact: 0.9, unresolved: true } }) },
];
for (const fault of faults) {
  const delays: number[] = [], pairDelays: number[] = [];
  let detected = 0;
  for (let s = 0; s < seeds; s++) {
    const onset = 80 + 10 * ((s * 0.618) % 1);
    const gen = new ClumpingSteps({ seed: 7000 + s + 37 * faultRows.length, particles: 60, box: 50, field: 40, diffusion: D, frameInterval: DT, sigma: SIGMA, ...fault.gen(s, onset) });
    const detector = new ClumpingDetector();
    let first: number | null = null;
    for (let k = 0; k < runSeconds / DT; k++) {
      for (const cond of detector.push(gen.next(), context)) if (first === null && (cond.level === 'warn' || cond.level === 'stop')) first = cond.t;
    }
    if (first !== null) { detected++; delays.push(first - onset); }
    const pairLook = detector.summary().looks.persistentPairs.firstSignificant;
    if (pairLook !== null) pairDelays.push(pairLook - onset);
  }
  process.stderr.write(`fault ${fault.label}: ${detected}/${seeds}, ${((Date.now() - started) / 1000).toFixed(0)} s\n`);
  faultRows.push(`| ${fault.label} | ${seeds} | ${detected}/${seeds} | ${quantile(delays, 0.5).toFixed(1)} | ${quantile(delays, 0.95).toFixed(1)} | ${pairDelays.length ? quantile(pairDelays, 0.5).toFixed(1) : 'n/a'} |`);
}

console.log(`Default setting: falseWarnsPerHour 0.15, blockSeconds 10 (200 frames at 20 frames/s), per-look α = ${designAlpha.toExponential(2)}, persistence L = ${designL} frames (${(designL * DT).toFixed(1)} s) in the CSR case; runs of ${runSeconds} s with onset at 80–90 s (baseline 60 s).\n`);
console.log(rows.join('\n'));
console.log('');
console.log(faultRows.join('\n'));
process.stderr.write(`done in ${((Date.now() - started) / 1000).toFixed(0)} s\n`);
