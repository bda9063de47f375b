import { scenarios } from '../../src/simulate/scenarios.js';
import { simulationEvents } from '../rig/simulationEvents.js';
import { simulationRunMessage } from '../rig/simulationRunMessage.js';
import { startFromFlags, untilSignal } from './serve.js';
import { streamRun } from './replay.js';

/** Flags of `jostle demo`. */
export interface DemoFlags {
  port: string;
  data: string;
  token?: string;
  speed?: string;
}

/**
 * `jostle demo` (`npm start`): starts the server on loopback with the data folder (default
 * `./jostle-data`), prints the dashboard URL with its token, and streams the built-in `demo`
 * scenario (10 minutes on the invented Brackenfield bench: drift, vibration, heating, clumping
 * in turn) into it in real time, in-process, as a new run each time round, until SIGINT/SIGTERM.
 */
export async function runDemo(flags: DemoFlags, stdout: NodeJS.WritableStream, stderr: NodeJS.WritableStream): Promise<void> {
  const port = Number(flags.port);
  const speed = flags.speed === undefined ? 1 : Number(flags.speed);
  const server = await startFromFlags({ port, data: flags.data, token: flags.token ?? process.env.JOSTLE_TOKEN });
  const started = new Date().toISOString().replace(/[-:]/g, '').replace(/\..*$/, '');
  const idFor = (round: number) => `demo-${started}-${round}`;
  // The printed URL opens the page on the demo's first run (the run list is one key away: g).
  stdout.write(`${server.url}${server.url.includes('?') ? '&' : '?'}run=${idFor(1)}\n`);
  stderr.write('jostle demo: streaming the demo scenario (Brackenfield bench, lot BF-PS-1188) in real time; Ctrl-C stops\n');
  let stopped = false;
  const signal = untilSignal().then(() => {
    stopped = true;
  });
  const scenario = scenarios.demo;
  const loop = (async () => {
    for (let round = 1; !stopped; round++) {
      const id = idFor(round);
      try {
        await streamRun(`ws://127.0.0.1:${server.port}/rig`, server.token, simulationRunMessage(scenario, id, `demo round ${round}`), simulationEvents(scenario), {
          speed,
          fast: false,
          stopped: () => stopped,
        });
      } catch (error) {
        if (!stopped) stderr.write(`jostle demo: the simulated rig stopped: ${(error as Error).message}\n`);
        break;
      }
    }
  })();
  await signal;
  await server.close();
  await loop.catch(() => undefined);
}
