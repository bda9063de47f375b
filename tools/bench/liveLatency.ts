// Live latency and memory under load (not a test; loopback only, bounded): a paced rig child
// (tools/bench/benchRig.ts) sends N particles at F frames/s with recording on and one dashboard
// watching; every k frames it sends a frame whose time goes backwards, which raises a `timing`
// alert at once. Two latencies, each the receipt time minus the rig's send time (one machine,
// one clock): every frame's arrival → the pipeline done with it (where alerts leave for the
// sockets, synchronously), and the injected alerts' arrival on the dashboard socket (few: the
// timing alert closes only after a clean block and a 5 s hold). Memory (RSS, heap, array
// buffers) and the queue are sampled every `sampleSeconds`.
// Run: node --import tsx/esm tools/bench/liveLatency.ts [particles=1000] [fps=100] [seconds=30] [sampleSeconds=5] [warmupSeconds=10]
// The 10-minute soak: node --import tsx/esm tools/bench/liveLatency.ts 1000 100 600 30 30
// A 7th argument `probe` also lists the server-side calls slower than 50 ms (push, report,
// recording batches, summary rows, dashboard updates) and the frames later than 200 ms.
import { spawn } from 'node:child_process';
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { createInterface } from 'node:readline';
import { Unpackr } from 'msgpackr';
import { WebSocket } from 'ws';
import { startServer } from '../../server/startServer.js';

/** Result of one latency run. */
export interface LiveLatencyResult {
  particles: number;
  fps: number;
  seconds: number;
  /** Frame sent → pipeline done, ms, over the frames after the first `warmupSeconds` (JIT, calibrations). */
  warmupSeconds: number;
  frames: number;
  p50Ms: number;
  p99Ms: number;
  maxMs: number;
  /** Injected alert sent → received on the dashboard socket, ms (each one). */
  alertMs: number[];
  /** Messages the dashboard received (snapshot, updates, alerts). */
  dashboardMessages: number;
  /** Memory samples: seconds since start, RSS MiB, heap used MiB, array buffers MiB, queue frames. */
  memory: { t: number; rssMiB: number; heapMiB: number; arrayBuffersMiB: number; queue: number }[];
  /** CPU time of this process (server, pipeline, recording and the dashboard client), % of one core over the run. */
  cpuPercent: number;
  /** With `probe`: server-side calls slower than 50 ms (seconds since start, what, ms), slowest first. */
  slowCalls?: string[];
  /** With `probe`: the frames whose latency exceeded 200 ms, as runs of consecutive indices. */
  spikes?: string[];
}

function quantile(sorted: number[], p: number): number {
  if (sorted.length === 0) return NaN;
  return sorted[Math.min(sorted.length - 1, Math.floor(p * sorted.length))];
}

export async function liveLatency(particles = 1000, fps = 100, seconds = 30, sampleSeconds = 5, warmupSeconds = 10, probe = false): Promise<LiveLatencyResult> {
  const data = mkdtempSync(join(tmpdir(), 'jostle-bench-'));
  const server = await startServer({ port: 0, host: '127.0.0.1', data, token: 'bench-token-123', log: () => undefined });
  const unpackr = new Unpackr({ useRecords: false, mapsAsObjects: true });
  try {
    const root = join(import.meta.dirname, '..', '..');
    // Data clock = wall clock (Δt = 1/fps); an injection every 20 s lets the timing detector's
    // clean block (1000 frames) and the alert engine's 5 s clear hold pass between them.
    const injectEvery = Math.max(10, Math.round(20 * fps));
    const child = spawn(process.execPath, ['--import', 'tsx/esm', 'tools/bench/benchRig.ts', `ws://127.0.0.1:${server.port}/rig`, server.token as string, 'msgpack', String(particles), String(seconds), String(fps), String(injectEvery), String(1 / fps)], {
      cwd: root,
      stdio: ['ignore', 'pipe', 'inherit'],
    });
    const runId = 'bench-msgpack';
    const injections: number[] = [];
    const latencies: number[] = [];
    const memory: LiveLatencyResult['memory'] = [];
    let sent = 0;
    const warmupFrames = Math.round(warmupSeconds * fps);
    const sentAt = new Map<number, number>();
    const doneAt = new Map<number, number>();
    const frameLatencies: number[] = [];
    const slow: { at: number; what: string; ms: number }[] = [];
    const spikeFrames: { i: number; ms: number }[] = [];
    const note = (i: number, ms: number): void => {
      if (probe && ms > 200) spikeFrames.push({ i, ms });
    };
    /** With `probe`, wraps `object[name]` to note calls slower than 50 ms. */
    const timeCalls = (object: Record<string, unknown>, name: string, what: string): void => {
      if (!probe) return;
      const original = (object[name] as (...args: unknown[]) => unknown).bind(object);
      object[name] = (...args: unknown[]) => {
        const a = performance.now();
        const result = original(...args);
        const ms = performance.now() - a;
        if (ms > 50) slow.push({ at: (a - began) / 1000, what, ms });
        return result;
      };
    };
    // With `probe`: gaps in a 10 ms timer (the event loop blocked, whatever blocked it).
    let tick = performance.now();
    const ticker = probe
      ? setInterval(() => {
          const now = performance.now();
          if (now - tick > 100) slow.push({ at: (tick - began) / 1000, what: 'event loop blocked', ms: now - tick });
          tick = now;
        }, 10)
      : undefined;
    const lines = createInterface({ input: child.stdout });
    lines.on('line', (line) => {
      const status = JSON.parse(line) as { sent?: number; inject?: number; i?: number; s?: number };
      if (status.i !== undefined) {
        // join with the pipeline's done time, whichever of the two arrives second
        const done = doneAt.get(status.i);
        if (done !== undefined) {
          if (status.i >= warmupFrames) frameLatencies.push(done - (status.s as number));
          note(status.i, done - (status.s as number));
          doneAt.delete(status.i);
        } else {
          sentAt.set(status.i, status.s as number);
        }
      }
      if (status.inject !== undefined) injections.push(status.inject);
      if (status.sent !== undefined) sent = status.sent;
    });
    let dashboard: WebSocket | undefined;
    let dashboardMessages = 0;
    const began = performance.now();
    const cpuBefore = process.cpuUsage();
    const sampler = setInterval(() => {
      const m = process.memoryUsage();
      const run = server.registry.get(runId);
      memory.push({
        t: Math.round((performance.now() - began) / 1000),
        rssMiB: m.rss / 2 ** 20,
        heapMiB: m.heapUsed / 2 ** 20,
        arrayBuffersMiB: m.arrayBuffers / 2 ** 20,
        queue: run ? sent - run.pipeline.counts().frames : 0,
      });
    }, sampleSeconds * 1000);
    await new Promise<void>((resolve) => {
      const poll = setInterval(() => {
        const run = server.registry.get(runId);
        if (run && !dashboard) {
          // time each frame's push (wrapping this run's pipeline instance; the bench only)
          const pipeline = run.pipeline;
          const push = pipeline.push.bind(pipeline);
          pipeline.push = (frame) => {
            const a = performance.now();
            push(frame);
            if (probe && performance.now() - a > 50) slow.push({ at: (a - began) / 1000, what: `push ${frame.index}`, ms: performance.now() - a });
            const now = performance.timeOrigin + performance.now();
            const at = sentAt.get(frame.index);
            if (at !== undefined) {
              if (frame.index >= warmupFrames) frameLatencies.push(now - at);
              note(frame.index, now - at);
              sentAt.delete(frame.index);
            } else {
              doneAt.set(frame.index, now);
            }
          };
          timeCalls(run as unknown as Record<string, unknown>, 'report', 'report');
          const recorder = (run as unknown as { recorder: Record<string, unknown> }).recorder;
          timeCalls(recorder, 'writeBatch', 'writeBatch');
          timeCalls(recorder, 'writeSummary', 'writeSummary');
          timeCalls(recorder, 'writeAlert', 'writeAlert');
          timeCalls(run as unknown as Record<string, unknown>, 'broadcastUpdate', 'dashboard update');
          timeCalls(run as unknown as Record<string, unknown>, 'recordSummary', 'summary row');
          dashboard = new WebSocket(`ws://127.0.0.1:${server.port}/watch?run=${runId}&token=${server.token}`);
          dashboard.on('message', (raw, isBinary) => {
            const message = (isBinary ? unpackr.unpack(raw as Buffer) : JSON.parse(String(raw))) as { type: string; kind?: string; change?: string };
            dashboardMessages++;
            if (message.type !== 'alert' || message.kind !== 'timing' || message.change !== 'open') return;
            const injected = injections[injections.length - 1];
            if (injected !== undefined) latencies.push(performance.timeOrigin + performance.now() - injected);
          });
        }
        if (run && run.state === 'ended') {
          clearInterval(poll);
          resolve();
        }
      }, 5);
    });
    clearInterval(sampler);
    const cpu = process.cpuUsage(cpuBefore);
    const cpuPercent = (100 * (cpu.user + cpu.system)) / 1000 / (performance.now() - began);
    if (ticker) clearInterval(ticker);
    dashboard?.close();
    await new Promise((resolve) => (child.exitCode !== null ? resolve(undefined) : child.once('exit', resolve)));
    frameLatencies.sort((a, b) => a - b);
    const spikes: string[] = [];
    for (let k = 0; k < spikeFrames.length; ) {
      let j = k;
      let worst = spikeFrames[k].ms;
      while (j + 1 < spikeFrames.length && spikeFrames[j + 1].i <= spikeFrames[j].i + 2) worst = Math.max(worst, spikeFrames[++j].ms);
      spikes.push(`frames ${spikeFrames[k].i}–${spikeFrames[j].i} (${(spikeFrames[k].i / fps).toFixed(1)} s): worst ${worst.toFixed(0)} ms`);
      k = j + 1;
    }
    slow.sort((a, b) => b.ms - a.ms);
    return {
      particles,
      fps,
      seconds,
      warmupSeconds,
      frames: frameLatencies.length,
      p50Ms: quantile(frameLatencies, 0.5),
      p99Ms: quantile(frameLatencies, 0.99),
      maxMs: frameLatencies[frameLatencies.length - 1] ?? NaN,
      alertMs: latencies,
      dashboardMessages,
      cpuPercent,
      memory,
      ...(probe ? { slowCalls: slow.slice(0, 40).map((c) => `${c.at.toFixed(1)} s ${c.what} ${c.ms.toFixed(0)} ms`), spikes } : {}),
    };
  } finally {
    await server.close();
    rmSync(data, { recursive: true, force: true });
  }
}

if (import.meta.url === `file://${process.argv[1]}`) {
  const result = await liveLatency(Number(process.argv[2] ?? 1000), Number(process.argv[3] ?? 100), Number(process.argv[4] ?? 30), Number(process.argv[5] ?? 5), Number(process.argv[6] ?? 10), process.argv[7] === 'probe');
  console.log(JSON.stringify(result));
}
