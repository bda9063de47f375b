// End-to-end throughput of the live server over loopback (not a test): a rig child process
// (`jostle simulate <scenario> --url … --fast`) → ws → decode → pipeline → recording → one
// dashboard watching. Prints centroids/s from the first frame received to the run's end.
// Run: npx tsx tools/bench/endToEnd.ts [scenario=crowded] [frames=600]
import { spawn } from 'node:child_process';
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { WebSocket } from 'ws';
import { startServer } from '../../server/startServer.js';

const scenario = process.argv[2] ?? 'crowded';
const frames = process.argv[3] ?? '600';
const data = mkdtempSync(join(tmpdir(), 'jostle-bench-'));
const server = await startServer({ port: 0, data, token: 'bench-token-123', log: () => undefined });
const root = join(import.meta.dirname, '..', '..');
const child = spawn(process.execPath, ['tools/jostle.js', 'simulate', scenario, '--frames', frames, '--url', `ws://127.0.0.1:${server.port}/rig`, '--token', server.token, '--fast', '--run-id', 'bench'], { cwd: root, stdio: ['ignore', 'pipe', 'inherit'] });
let updates = 0;
let firstAt: number | undefined;
let endedAt: number | undefined;
let dashboard: WebSocket | undefined;
await new Promise<void>((resolve) => {
  const poll = setInterval(() => {
    const run = server.registry.get('bench');
    if (run && firstAt === undefined && run.pipeline.counts().frames > 0) {
      firstAt = performance.now();
      dashboard = new WebSocket(`ws://127.0.0.1:${server.port}/watch?run=bench&token=${server.token}`);
      dashboard.on('message', () => updates++);
    }
    if (run && run.state === 'ended') {
      endedAt = performance.now();
      clearInterval(poll);
      resolve();
    }
  }, 2);
});
const run = server.registry.get('bench')!;
const centroids = run.pipeline.counts().centroids;
const seconds = ((endedAt as number) - (firstAt as number)) / 1000;
process.stdout.write(
  `endToEnd ${scenario}: ${run.pipeline.counts().frames} frames, ${centroids} centroids in ${seconds.toFixed(2)} s → ` +
    `${Math.round(centroids / seconds)} centroids/s, ${Math.round(run.pipeline.counts().frames / seconds)} frames/s; ` +
    `${updates} dashboard messages; recorded ${server.registry.recorder.run('bench')?.frames} frames\n`,
);
dashboard?.close();
await new Promise((r) => child.once('exit', r));
await server.close();
rmSync(data, { recursive: true, force: true });
