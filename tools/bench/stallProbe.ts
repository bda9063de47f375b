// Stall probe (not a test): the live run's work without the network — N particles at F frames/s
// of data time pushed one by one, a full report every `reportEvery` frames (the dashboard's
// 10 Hz update) — timing every push and every report, to find the slow ones and whether the
// report's cost grows with the run's length.
// Run: node --import tsx/esm tools/bench/stallProbe.ts [particles=1000] [fps=100] [dataSeconds=300] [reportEvery=10]
import { createDetectors } from '../../src/detectors/createDetectors.js';
import { Pipeline } from '../../src/pipeline/pipeline.js';
import { refreshContext } from '../../src/pipeline/refreshContext.js';
import { CycledField } from './benchFrames.js';

const particles = Number(process.argv[2] ?? 1000);
const fps = Number(process.argv[3] ?? 100);
const dataSeconds = Number(process.argv[4] ?? 300);
const reportEvery = Number(process.argv[5] ?? 10);
const dt = 1 / fps;
const pipeline = new Pipeline({ frameInterval: dt, exposure: 0.0008, radius: 0.5, temperature: 22 }, createDetectors, refreshContext);
const synthetic = new CycledField(particles, dt);
const { x, y, id } = synthetic;
const slow: { i: number; t: number; ms: number; what: string }[] = [];
const reportMs: number[] = [];
let pushTotal = 0;
let reportTotal = 0;
const frames = Math.round(dataSeconds * fps);
for (let i = 0; i < frames; i++) {
  synthetic.advance();
  const a = performance.now();
  pipeline.push({ index: i, t: i * dt, count: particles, x, y, id });
  const b = performance.now();
  pushTotal += b - a;
  if (b - a > 20) slow.push({ i, t: i * dt, ms: b - a, what: 'push' });
  if (i % reportEvery === 0) {
    pipeline.report();
    const c = performance.now();
    reportTotal += c - b;
    reportMs.push(c - b);
    if (c - b > 40) slow.push({ i, t: i * dt, ms: c - b, what: 'report' });
  }
  if (i > 0 && i % (10 * fps) === 0) {
    const last = reportMs.slice(-fps);
    last.sort((u, v) => u - v);
    console.log(JSON.stringify({ dataS: i * dt, pushMsPerFrame: +(pushTotal / i).toFixed(3), reportMedianMs: +last[last.length >> 1].toFixed(2), reportMaxMs: +last[last.length - 1].toFixed(2) }));
  }
}
slow.sort((u, v) => v.ms - u.ms);
console.log(JSON.stringify({ pushMsPerFrame: pushTotal / frames, reportMsMean: reportTotal / reportMs.length, slowest: slow.slice(0, 30).map((s) => `${s.what}@${s.t.toFixed(2)}s:${s.ms.toFixed(0)}ms`) }));
