// A benchmark rig (child process of tools/bench/endToEnd.ts; loopback only): connects to the
// server's /rig endpoint, sends `run`, then frames of N Brownian particles (ids given) as fast as
// the socket takes them, for a fixed wall time, and `end`. Prints one JSON line per second:
// { sent, t } (frames sent so far, wall ms), then { done: true, sent }.
// With a pace (frames/s) it sends at that rate; with injectEvery = k it sends, every k frames,
// one frame whose time goes backwards (which raises a `timing` alert at once) and prints
// { inject: <epoch ms> } just before sending it; paced, it prints { i, s } (frame index, epoch ms
// when sent) for every frame, for the latency figures.
// Encodings: msgpack (columns of bins), json (the contract's JSON: one array of numbers per
// field), json-rows (a JSON row-wise rig: one record per particle, the server's `rows` extension).
// Usage: tsx tools/bench/benchRig.ts <ws url> <token> <msgpack|json|json-rows> <particles> <seconds> [pace=0] [injectEvery=0] [frameInterval=0.001]
import { CycledField } from './benchFrames.js';
import { RigClient } from '../rig/rigClient.js';

const [url, token, encoding, particlesText, secondsText] = process.argv.slice(2);
if (!url?.startsWith('ws://127.0.0.1:')) throw new Error('benchRig talks to loopback only');
const particles = Number(particlesText);
const seconds = Number(secondsText);
const pace = Number(process.argv[7] ?? 0);
const injectEvery = Number(process.argv[8] ?? 0);
const frameInterval = Number(process.argv[9] ?? 0.001);
const rig = await RigClient.connect(url, {
  token,
  encoding: encoding === 'json' || encoding === 'json-rows' ? 'json' : 'msgpack',
  layout: encoding === 'json-rows' ? 'rows' : 'columns',
});
await rig.open({ type: 'run', run: `bench-${encoding}`, frameInterval, exposure: 0.0008, radius: 0.5, temperature: 22, label: 'benchmark rig' });
// Precomputed steps, cycled (so that generating them does not load the rig's core).
const synthetic = new CycledField(particles, frameInterval);
const { x, y, id } = synthetic;
const start = performance.now();
let sent = 0;
let nextIndex = 0;
let nextPrint = start + 1000;
while (performance.now() - start < seconds * 1000) {
  synthetic.advance();
  if (injectEvery > 0 && sent > 0 && sent % injectEvery === 0) {
    process.stdout.write(`${JSON.stringify({ inject: performance.timeOrigin + performance.now() })}\n`);
    await rig.frame({ index: nextIndex++, t: (sent - 1.5) * frameInterval, count: particles, x, y, id });
  }
  if (pace > 0) process.stdout.write(`${JSON.stringify({ i: nextIndex, s: performance.timeOrigin + performance.now() })}\n`);
  await rig.frame({ index: nextIndex++, t: sent * frameInterval, count: particles, x, y, id });
  sent++;
  if (pace > 0) {
    // paced: wait until this frame's wall time
    const due = start + (sent * 1000) / pace;
    const wait = due - performance.now();
    if (wait > 0) await new Promise((resolve) => setTimeout(resolve, wait));
  } else if ((sent & 15) === 0) {
    // yield to the event loop now and then so the socket drains and acks arrive
    await new Promise((resolve) => setImmediate(resolve));
  }
  const now = performance.now();
  if (now >= nextPrint) {
    process.stdout.write(`${JSON.stringify({ sent, t: Math.round(now - start) })}\n`);
    nextPrint += 1000;
  }
}
await rig.end();
process.stdout.write(`${JSON.stringify({ done: true, sent })}\n`);
await rig.close();
