// End-to-end throughput of the live server over loopback (not a test): a rig child process
// (tools/bench/benchRig.ts) → ws → decode → pipeline → recording on → one dashboard watching,
// both cores (the rig included). Reports centroids/s over the run, and the queue: frames sent
// by the rig minus frames the pipeline has taken, sampled every second (flat = keeping up).
// Run: npx tsx tools/bench/endToEnd.ts [msgpack|json] [particles=1000] [seconds=20] [thread|event-loop]
// (the last: where the recording's batches are written, the server's `recordingThread` option)
import { spawn } from 'node:child_process';
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { createInterface } from 'node:readline';
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
}

export async function endToEnd(encoding: 'msgpack' | 'json', particles = 1000, seconds = 20, recordingThread = true): Promise<EndToEndResult> {
  const data = mkdtempSync(join(tmpdir(), 'jostle-bench-'));
  const server = await startServer({ port: 0, host: '127.0.0.1', data, token: 'bench-token-123', log: () => undefined, quotaBytes: 64 * 2 ** 30, recordingThread });
  try {
    const root = join(import.meta.dirname, '..', '..');
    const child = spawn(process.execPath, ['--import', 'tsx', 'tools/bench/benchRig.ts', `ws://127.0.0.1:${server.port}/rig`, server.token as string, encoding, String(particles), String(seconds)], {
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
    };
  } finally {
    await server.close();
    rmSync(data, { recursive: true, force: true });
  }
}

if (import.meta.url === `file://${process.argv[1]}`) {
  const encoding = process.argv[2] === 'json' ? 'json' : 'msgpack';
  const result = await endToEnd(encoding, Number(process.argv[3] ?? 1000), Number(process.argv[4] ?? 20), process.argv[5] !== 'event-loop');
  console.log(JSON.stringify(result));
}
