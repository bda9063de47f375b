// Profiling entry for the pipeline hot path (not a test):
//   node --import tsx/esm --cpu-prof --cpu-prof-dir=/tmp/prof tools/bench/profilePipeline.ts [particles] [frames] [linked|unlinked]
// then summarise the self time with `node tools/bench/summariseProfile.mjs /tmp/prof`.
import { benchFrames } from './benchFrames.js';
import { runPipeline } from './pipelineThroughput.js';

const particles = Number(process.argv[2] ?? 1000);
const frameCount = Number(process.argv[3] ?? 2000);
const frames = benchFrames({ particles, frames: frameCount, ids: process.argv[4] !== 'unlinked' });
const detectors = process.argv[5] !== "none";
for (let i = 0; i < 2; i++) runPipeline(frames, 16, detectors);
