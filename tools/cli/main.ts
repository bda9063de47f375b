import { Command, CommanderError, Option } from 'commander';
import { mkdir } from 'node:fs/promises';
import { dirname, join } from 'node:path';
import { scenarioDescriptions, scenarios } from '../../src/simulate/scenarios.js';
import type { SimulationOptions } from '../../src/simulate/simulationOptions.js';
import { writeSimulation } from '../simulate/writeSimulation.js';
import { analyzeFile, type AnalyzeFlags } from './analyze.js';
import { formatReport } from './formatReport.js';
import { runDemo, type DemoFlags } from './demo.js';
import { runReplay, streamRun, type ReplayFlags } from './replay.js';
import { runServe, type ServeFlags } from './serve.js';
import { simulationEvents } from '../rig/simulationEvents.js';
import { simulationRunMessage } from '../rig/simulationRunMessage.js';
import { numberOption, UsageError } from './usageError.js';

/** Package version, for `--version`. */
const VERSION = '0.1.0';

interface Io {
  stdout: NodeJS.WritableStream;
  stderr: NodeJS.WriteStream;
}

/**
 * The command line (CONTRACTS §1). Returns the exit status: 0 on success, 2 for a usage error or
 * a file that cannot be read at all (one line `jostle: <message>` on stderr), 1 for anything
 * unexpected.
 */
export async function main(argv: string[], io: Io = { stdout: process.stdout, stderr: process.stderr }): Promise<number> {
  const program = buildProgram(io);
  try {
    await program.parseAsync(argv);
    return 0;
  } catch (error) {
    if (error instanceof CommanderError) {
      if (error.code === 'commander.helpDisplayed' || error.code === 'commander.version' || error.exitCode === 0) return 0;
      io.stderr.write(`jostle: ${error.message.replace(/^error: /, '')}\n`);
      return 2;
    }
    if (error instanceof UsageError || isCoded(error)) {
      io.stderr.write(`jostle: ${(error as Error).message}\n`);
      return 2;
    }
    io.stderr.write(`jostle: unexpected failure: ${(error as Error)?.stack ?? String(error)}\n`);
    return 1;
  }
}

function isCoded(error: unknown): boolean {
  const code = (error as { code?: unknown })?.code;
  return typeof code === 'string' && code.startsWith('JOSTLE_E_');
}

function buildProgram(io: Io): Command {
  const program = new Command('jostle')
    .description('live quality monitor for particle-tracking microscopy')
    .version(VERSION)
    .exitOverride()
    .configureOutput({
      writeOut: (text) => io.stdout.write(text),
      writeErr: () => undefined,
    })
    .showHelpAfterError(false);

  program
    .command('analyze')
    .description('run the pipeline offline over a centroid CSV and print the report')
    .argument('<file>', 'centroid CSV (CONTRACTS §2)')
    .option('--json', 'print the report as one JSON object on stdout')
    .option('--pixel-size <um>', 'size of one position unit, µm (default 1)')
    .option('--frame-interval <s>', 'frame interval, s (needed without a t column; t wins)')
    .option('--exposure <s>', 'camera exposure per frame, s (default: the frame interval)')
    .option('--radius <um>', 'nominal particle radius, µm (a 1 µm bead is 0.5); enables Stokes-Einstein')
    .option('--radius-sd <um>', 'standard uncertainty of the radius, µm (default 2 % of the radius)')
    .option('--height <um>', 'particle centre above the coverslip, µm (Faxén wall correction)')
    .option('--medium <m>', 'water, glycerol-water:<mass fraction>, or viscosity:<mPa·s>', 'water')
    .option('--temperature <celsius>', 'reported sample temperature, °C')
    .option('--temperature-log <csv>', 'sensor log with columns t,celsius (overrides --temperature)')
    .option('--tags <csv>', 'tags label,start,end,note: segments of the report')
    .option('--config <file>', 'JSON settings (detector thresholds and more); flags win')
    .option('--set <key=value>', 'one setting, dotted key (repeatable), e.g. detectors.drift.tolerance=0.1; wins over --config', (value: string, previous: string[]) => [...previous, value], [] as string[])
    .option('--no-progress', 'no progress line on stderr')
    .action(async (file: string, flags: AnalyzeFlags) => {
      const report = await analyzeFile(file, flags, io.stderr);
      io.stdout.write(flags.json ? `${JSON.stringify(report)}\n` : formatReport(report));
    });

  program
    .command('simulate')
    .description('write a physically simulated run (centroid CSV, truth JSON, temperature log, tags)')
    .argument('[scenario]', `named scenario: ${Object.keys(scenarios).join(', ')}`, 'clean')
    .option('--out <csv>', 'centroid CSV to write', 'jostle-sim.csv')
    .option('--truth <json>', 'truth JSON to write (default: beside the CSV, .truth.json)')
    .option('--temperature-log <csv>', 'temperature log CSV to write (default: beside the CSV, .temperature.csv)')
    .option('--tags <csv>', 'tags CSV to write when the scenario has tags (default: beside the CSV, .tags.csv)')
    .option('--seed <n>', 'random seed (default: the scenario\'s)')
    .option('--frames <n>', 'number of frames (default: the scenario\'s)')
    .option('--particles <n>', 'mean number of particles in the field (default: the scenario\'s)')
    .option('--no-ids', 'write no track ids (the analysis must link)')
    .option('--url <ws>', 'stream to a server as a rig would (ws://host:port/rig) instead of writing files')
    .option('--token <secret>', 'access token for --url (default JOSTLE_TOKEN, or ?token= in the URL)')
    .option('--speed <k>', 'with --url: stream k times faster than real time (default 1)')
    .option('--fast', 'with --url: stream as fast as the server takes it')
    .option('--run-id <id>', 'with --url: the run id to send (default: the server makes one)')
    .addOption(new Option('--list', 'list the scenarios and exit'))
    .action(async (name: string, flags: SimulateFlags) => {
      if (flags.list) {
        for (const [key, value] of Object.entries(scenarios)) {
          const seconds = value.frames * (value.frameInterval ?? 0.05);
          io.stdout.write(`${key}\t${value.frames} frames (${seconds.toFixed(0)} s)\t${scenarioDescriptions[key] ?? ''}\n`);
        }
        return;
      }
      if (flags.url !== undefined) {
        const options = simulationOptionsFor(name, flags);
        const speed = numberOption('--speed', flags.speed, (n) => n > 0) ?? 1;
        const sent = await streamRun(flags.url, flags.token, simulationRunMessage(options, flags.runId, `simulated ${name}`), simulationEvents(options), { speed, fast: flags.fast === true });
        io.stdout.write(`run ${sent.run}: ${sent.frames} frames, ${sent.centroids} centroids sent, ${sent.alerts} alerts, ${sent.errors} rejected\n`);
        return;
      }
      const summary = await simulateToFiles(name, flags);
      io.stdout.write(`${summary.rows} rows in ${summary.frames} frames written to ${summary.csv} (truth: ${summary.truthPath})\n`);
    });

  program
    .command('serve')
    .description('start the live server: rig endpoint /rig, dashboards /watch, the web page and /api')
    .option('--host <address>', 'interface to bind (loopback unless --allow-remote)', '127.0.0.1')
    .option('--port <n>', 'TCP port (0: a free one)', '7311')
    .option('--data <folder>', 'data folder: recording and token', './jostle-data')
    .option('--token <secret>', 'access token (default JOSTLE_TOKEN, else one kept in the data folder)')
    .option('--allow-remote', 'allow a non-loopback --host (prints a warning)')
    .option('--max-payload <bytes>', 'largest WebSocket message (default 16 MiB)')
    .option('--quota <bytes>', 'recorded frame bytes per run (default 2 GiB)')
    .option('--heartbeat <ms>', 'ping interval (default 15000)')
    .action(async (flags: ServeFlags) => {
      await runServe(flags, io.stdout);
    });

  program
    .command('replay')
    .description('stream a centroid CSV or a recorded run to a server as a rig would')
    .argument('[file]', 'centroid CSV (CONTRACTS §2); or use --data and --run')
    .requiredOption('--url <ws>', 'server rig endpoint, ws://host:port/rig')
    .option('--token <secret>', 'access token (default JOSTLE_TOKEN, or ?token= in the URL)')
    .option('--speed <k>', 'k times faster than real time (default 1)')
    .option('--fast', 'as fast as the server takes it')
    .option('--data <folder>', 'data folder of a recording (with --run)')
    .option('--run <id>', 'recorded run to replay (with --data)')
    .option('--as <id>', 'run id to send (default: the server makes one)')
    .option('--label <text>', 'run label')
    .option('--pixel-size <um>', 'CSV: size of one position unit, µm (default 1)')
    .option('--frame-interval <s>', 'CSV: frame interval, s (default: from the t column)')
    .option('--exposure <s>', 'CSV: exposure, s')
    .option('--radius <um>', 'CSV: particle radius, µm')
    .option('--temperature <celsius>', 'CSV: reported temperature, °C')
    .option('--medium <m>', 'CSV: medium (as analyze --medium)')
    .option('--temperature-log <csv>', 'CSV: temperature log t,celsius to send along')
    .option('--tags <csv>', 'CSV: tags label,start,end,note to send along')
    .option('--json', 'print the summary as JSON')
    .action(async (file: string | undefined, flags: ReplayFlags) => {
      await runReplay(file, flags, io.stdout);
    });

  program
    .command('demo')
    .description('start the server and stream the demo scenario into it in real time (npm start)')
    .option('--port <n>', 'TCP port', '7311')
    .option('--data <folder>', 'data folder', './jostle-data')
    .option('--token <secret>', 'access token (default JOSTLE_TOKEN, else the kept one)')
    .option('--speed <k>', 'k times faster than real time (default 1)')
    .action(async (flags: DemoFlags) => {
      await runDemo(flags, io.stdout, io.stderr);
    });

  return program;
}

interface SimulateFlags {
  out: string;
  truth?: string;
  temperatureLog?: string;
  tags?: string;
  seed?: string;
  frames?: string;
  particles?: string;
  ids: boolean;
  list?: boolean;
  url?: string;
  token?: string;
  speed?: string;
  fast?: boolean;
  runId?: string;
}

function simulationOptionsFor(name: string, flags: SimulateFlags): SimulationOptions {
  const scenario = scenarios[name];
  if (!scenario) throw new UsageError(`unknown scenario '${name}': choose one of ${Object.keys(scenarios).join(', ')}`);
  const integer = (n: number) => Number.isInteger(n) && n >= 0;
  return {
    ...scenario,
    ...(flags.seed !== undefined ? { seed: numberOption('--seed', flags.seed, integer) as number } : {}),
    ...(flags.frames !== undefined ? { frames: numberOption('--frames', flags.frames, (n) => integer(n) && n > 0) as number } : {}),
    ...(flags.particles !== undefined ? { particles: numberOption('--particles', flags.particles, (n) => n > 0) as number } : {}),
    ...(flags.ids === false ? { ids: false } : {}),
  };
}

async function simulateToFiles(name: string, flags: SimulateFlags) {
  const scenario = scenarios[name];
  if (!scenario) throw new UsageError(`unknown scenario '${name}': choose one of ${Object.keys(scenarios).join(', ')}`);
  const integer = (n: number) => Number.isInteger(n) && n >= 0;
  const options: SimulationOptions = {
    ...scenario,
    ...(flags.seed !== undefined ? { seed: numberOption('--seed', flags.seed, integer) as number } : {}),
    ...(flags.frames !== undefined ? { frames: numberOption('--frames', flags.frames, (n) => integer(n) && n > 0) as number } : {}),
    ...(flags.particles !== undefined ? { particles: numberOption('--particles', flags.particles, (n) => n > 0) as number } : {}),
    ...(flags.ids === false ? { ids: false } : {}),
  };
  const base = flags.out.replace(/\.csv$/i, '');
  const truthPath = flags.truth ?? `${base}.truth.json`;
  await mkdir(dirname(join(process.cwd(), flags.out)), { recursive: true });
  const summary = await writeSimulation(options, {
    csvPath: flags.out,
    truthPath,
    temperatureLogPath: flags.temperatureLog ?? `${base}.temperature.csv`,
    tagsPath: flags.tags ?? `${base}.tags.csv`,
  });
  return { ...summary, csv: flags.out, truthPath };
}
