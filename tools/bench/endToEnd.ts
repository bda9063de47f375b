// End-to-end throughput of the live server over loopback (not a test): a rig child process
// (tools/bench/benchRig.ts) → ws → decode → pipeline → recording on → one dashboard watching,
// both cores (the rig included). Reports centroids/s over the run, and the queue: frames sent
// by the rig minus frames the pipeline has taken, sampled every second (flat = keeping up).
// Encodings: msgpack bins, json (the contract's JSON columns), json-rows (a JSON row-wise rig).
// Run: node --import tsx/esm tools/bench/endToEnd.ts [msgpack|json|json-rows] [particles=1000] [seconds=20] [thread|event-loop]
// (the last: where the recording's batches are written, the server's `recordingThread` option)
import { spawn } from 'node:child_process';
import { mkdtempSync, readFileSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { createInterface } from 'node:readline';
import { type EventLoopUtilization, performance } from 'node:perf_hooks';
import { WebSocket } from 'ws';
import { startServer } from '../../server/startServer.js';

/** Result of one end-to-end run. */
export interface EndToEndResult {
  encoding: string;
  particles: number;
  seconds: number;
  centroidsPerSecond: number;
  framesPerSecond: number;
  /** Rig frames sent minus pipeline frames taken, each second. */
  queue: number[];
  dashboardMessages: number;
  recordedFrames: number | undefined;
  /**
   * Where the CPU went over the measured span, in % of one core: the server's main thread busy
   * (event-loop utilisation), the server process (main thread, recording thread and the rest),
   * and the rig process (from /proc; null where that is not readable).
   */
  cpu: { serverMainThread: number; serverProcess: number; rig: number | null };
}

/** CPU seconds (user + system) of process `pid` so far, from /proc (Linux), or null. */
function processCpuSeconds(pid: number | undefined): number | null {
  if (pid === undefined) return null;
  try {
    const stat = readFileSync(`/proc/${pid}/stat`, 'utf8');
    // fields after the command name (which may hold spaces) : state is field 3, utime 14, stime 15
    const fields = stat.slice(stat.lastIndexOf(')') + 2).split(' ');
    return (Number(fields[11]) + Number(fields[12])) / CLOCK_TICKS;
  } catch {
    return null;
  }
}
const CLOCK_TICKS = 100; // USER_HZ on Linux

/** The rig's wire form: MessagePack bins, the contract's JSON columns, or JSON rows. */
export type BenchEncoding = 'msgpack' | 'json' | 'json-rows';

export async function endToEnd(encoding: BenchEncoding, particles = 1000, seconds = 20, recordingThread = true): Promise<EndToEndResult> {
  const data = mkdtempSync(join(tmpdir(), 'jostle-bench-'));
  const server = await startServer({ port: 0, host: '127.0.0.1', data, token: 'bench-token-123', log: () => undefined, quotaBytes: 64 * 2 ** 30, recordingThread });
  try {
    const root = join(import.meta.dirname, '..', '..');
    const child = spawn(process.execPath, ['--import', 'tsx/esm', 'tools/bench/benchRig.ts', `ws://127.0.0.1:${server.port}/rig`, server.token as string, encoding, String(particles), String(seconds)], {
      cwd: root,
      stdio: ['ignore', 'pipe', 'inherit'],
    });
    const runId = `bench-${encoding}`;
    const queue: number[] = [];
    let dashboard: WebSocket | undefined;
    let dashboardMessages = 0;
    let firstAt: number | undefined;
    let firstCentroids = 0;
    let firstFrames = 0;
    let firstElu: EventLoopUtilization | undefined;
    let firstCpu: NodeJS.CpuUsage | undefined;
    let firstRigCpu: number | null = null;
    const lines = createInterface({ input: child.stdout });
    lines.on('line', (line) => {
      const status = JSON.parse(line) as { sent: number; done?: boolean };
      const run = server.registry.get(runId);
      if (!status.done && run) queue.push(status.sent - run.pipeline.counts().frames);
    });
    await new Promise<void>((resolve) => {
      const poll = setInterval(() => {
        const run = server.registry.get(runId);
        if (run && firstAt === undefined && run.pipeline.counts().frames > 0) {
          firstAt = performance.now();
          firstCentroids = run.pipeline.counts().centroids;
          firstFrames = run.pipeline.counts().frames;
          firstElu = performance.eventLoopUtilization();
          firstCpu = process.cpuUsage();
          firstRigCpu = processCpuSeconds(child.pid);
          dashboard = new WebSocket(`ws://127.0.0.1:${server.port}/watch?run=${runId}&token=${server.token}`);
          dashboard.on('message', () => dashboardMessages++);
        }
        if (run && run.state === 'ended') {
          clearInterval(poll);
          resolve();
        }
      }, 2);
    });
    const endedAt = performance.now();
    const elu = performance.eventLoopUtilization(firstElu);
    const cpu = process.cpuUsage(firstCpu);
    const rigCpu = processCpuSeconds(child.pid);
    const run = server.registry.get(runId)!;
    const elapsed = (endedAt - (firstAt as number)) / 1000;
    const counts = run.pipeline.counts();
    dashboard?.close();
    await new Promise((resolve) => (child.exitCode !== null ? resolve(undefined) : child.once('exit', resolve)));
    return {
      encoding,
      particles,
      seconds: elapsed,
      centroidsPerSecond: (counts.centroids - firstCentroids) / elapsed,
      framesPerSecond: (counts.frames - firstFrames) / elapsed,
      queue,
      dashboardMessages,
      recordedFrames: server.registry.recorder.run(runId)?.frames,
      cpu: {
        serverMainThread: 100 * elu.utilization,
        serverProcess: (100 * (cpu.user + cpu.system)) / 1e6 / elapsed,
        rig: rigCpu !== null && firstRigCpu !== null ? (100 * (rigCpu - firstRigCpu)) / elapsed : null,
      },
    };
  } finally {
    await server.close();
    rmSync(data, { recursive: true, force: true });
  }
}

if (import.meta.url === `file://${process.argv[1]}`) {
  const encoding: BenchEncoding = process.argv[2] === 'json' || process.argv[2] === 'json-rows' ? process.argv[2] : 'msgpack';
  const result = await endToEnd(encoding, Number(process.argv[3] ?? 1000), Number(process.argv[4] ?? 20), process.argv[5] !== 'event-loop');
  console.log(JSON.stringify(result));
}
