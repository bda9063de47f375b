import type { Frame } from '../../src/frame.js';
import { Recorder } from '../../server/recorder.js';
import type { RigRunMessage } from '../../server/protocol.js';
import type { RunSettings } from '../../server/rigMessageFields.js';
import { IoError } from '../io/ioError.js';
import { createReadStream } from 'node:fs';
import { CentroidCsvParser } from '../io/centroidCsvParser.js';
import { readTags } from '../io/readTags.js';
import { readTemperatureLog } from '../io/readTemperatureLog.js';
import { RigClient } from '../rig/rigClient.js';
import { streamToServer, type RigEvent } from '../rig/streamToServer.js';
import { numberOption, UsageError } from './usageError.js';

/** The flags of `jostle replay`. */
export interface ReplayFlags {
  url: string;
  token?: string;
  speed?: string;
  fast?: boolean;
  data?: string;
  run?: string;
  as?: string;
  label?: string;
  pixelSize?: string;
  frameInterval?: string;
  exposure?: string;
  radius?: string;
  temperature?: string;
  medium?: string;
  temperatureLog?: string;
  tags?: string;
  json?: boolean;
}

function medianStep(frames: Frame[]): number | undefined {
  const steps: number[] = [];
  for (let i = 1; i < Math.min(frames.length, 64); i++) if (frames[i].t > frames[i - 1].t) steps.push(frames[i].t - frames[i - 1].t);
  steps.sort((a, b) => a - b);
  // 12 significant digits: differences of printed times carry rounding noise (0.05 → 0.050000000000000044)
  return steps.length > 0 ? Number(steps[Math.floor(steps.length / 2)].toPrecision(12)) : undefined;
}

/**
 * Merges frames, readings and tags into one data-clock stream (tags first, readings before a frame
 * at the same t). Frames may come from an async source, so a CSV streams in bounded memory.
 */
async function* mergeEvents(
  frames: Iterable<Frame> | AsyncIterable<Frame>,
  readings: { t: number; celsius: number }[],
  tags: RigEvent[],
): AsyncGenerator<RigEvent> {
  yield* tags;
  let next = 0;
  for await (const frame of frames) {
    while (next < readings.length && readings[next].t <= frame.t) yield { type: 'temperature', ...readings[next++] };
    yield { type: 'frame', frame };
  }
  while (next < readings.length) yield { type: 'temperature', ...readings[next++] };
}

/**
 * Frames of a centroid CSV, read in 1 MiB chunks and parsed as they come (each frame owns its
 * arrays): memory stays at one chunk plus the frames of that chunk, whatever the file size.
 */
async function* csvFrames(file: string, pixelSize: number, frameInterval: number | undefined): AsyncGenerator<Frame> {
  const ready: Frame[] = [];
  try {
    const parser = new CentroidCsvParser({ pixelSize, frameInterval }, (frame) => ready.push(frame));
    for await (const chunk of createReadStream(file, { highWaterMark: 1 << 20 })) {
      parser.push(chunk as Buffer);
      yield* ready.splice(0);
    }
    parser.finish();
    yield* ready.splice(0);
  } catch (error) {
    if (error instanceof IoError) throw new UsageError(error.message, error.code);
    if ((error as NodeJS.ErrnoException).code !== undefined && !(error instanceof UsageError)) {
      throw new UsageError(`file cannot be read: ${file}`, 'JOSTLE_E_FILE');
    }
    throw error;
  }
}

async function fromCsv(file: string, flags: ReplayFlags): Promise<{ run: RigRunMessage; events: AsyncIterable<RigEvent> }> {
  const pixelSize = numberOption('--pixel-size', flags.pixelSize, (n) => n > 0) ?? 1;
  let frameInterval = numberOption('--frame-interval', flags.frameInterval, (n) => n > 0);
  // Read the first frames to find the frame interval (the `run` message goes first), then stream on.
  const source = csvFrames(file, pixelSize, frameInterval);
  const head: Frame[] = [];
  let done = false;
  while (head.length < 64) {
    const next = await source.next();
    if (next.done) {
      done = true;
      break;
    }
    head.push(next.value);
  }
  frameInterval ??= medianStep(head);
  if (frameInterval === undefined) throw new UsageError('the frame interval cannot be found from the file: give --frame-interval', 'JOSTLE_E_OPTION');
  async function* frames(): AsyncGenerator<Frame> {
    yield* head;
    if (!done) yield* { [Symbol.asyncIterator]: () => source };
  }
  const readings = flags.temperatureLog ? (await readTemperatureLog(flags.temperatureLog)).readings.slice().sort((a, b) => a.t - b.t) : [];
  const tags: RigEvent[] = flags.tags ? (await readTags(flags.tags)).tags.map((tag) => ({ type: 'tag' as const, tag })) : [];
  const run: RigRunMessage = { type: 'run', frameInterval, label: flags.label ?? file };
  const extra = {
    exposure: numberOption('--exposure', flags.exposure, (n) => n >= 0),
    radius: numberOption('--radius', flags.radius, (n) => n > 0),
    temperature: numberOption('--temperature', flags.temperature),
    medium: flags.medium,
    run: flags.as,
  };
  for (const [k, v] of Object.entries(extra)) if (v !== undefined) (run as unknown as Record<string, unknown>)[k] = v;
  return { run, events: mergeEvents(frames(), readings, tags) };
}

function fromRecording(flags: ReplayFlags): { run: RigRunMessage; events: AsyncIterable<RigEvent>; close: () => void } {
  let recorder: Recorder;
  try {
    recorder = new Recorder(flags.data as string, { readonly: true });
  } catch {
    throw new UsageError(`no recording in ${flags.data}`, 'JOSTLE_E_FILE');
  }
  const record = recorder.run(flags.run as string);
  if (!record) {
    recorder.close();
    throw new UsageError(`no run '${flags.run}' in ${flags.data}`, 'JOSTLE_E_UNKNOWN_RUN');
  }
  const settings = JSON.parse(record.settings) as RunSettings;
  const run: RigRunMessage = { type: 'run', ...settings.pipeline, label: flags.label ?? record.label, run: flags.as };
  if (flags.as === undefined) delete run.run;
  const tags: RigEvent[] = recorder.tags(record.id).map((tag) => ({ type: 'tag', tag }));
  const events = mergeEvents(recorder.frames(record.id), recorder.temperatures(record.id), tags);
  return { run, events, close: () => recorder.close() };
}

/**
 * `jostle replay`: streams a centroid CSV (CONTRACTS §2) or a recorded run (`--data <folder>
 * --run <id>`) to a server as a rig would, at real speed (`--speed k`: k× faster) or `--fast`.
 * Tags are sent at the start of the stream. Prints the run id and what was sent.
 */
export async function runReplay(file: string | undefined, flags: ReplayFlags, stdout: NodeJS.WritableStream): Promise<void> {
  const speed = numberOption('--speed', flags.speed, (n) => n > 0) ?? 1;
  if (flags.speed !== undefined && flags.fast) throw new UsageError('options --speed and --fast conflict');
  if ((flags.data === undefined) !== (flags.run === undefined)) throw new UsageError('options --data and --run go together');
  if (file === undefined && flags.run === undefined) throw new UsageError('give a centroid CSV, or --data <folder> --run <id>');
  if (file !== undefined && flags.run !== undefined) throw new UsageError('give either a centroid CSV or --data/--run, not both');
  const source = file !== undefined ? { ...(await fromCsv(file, flags)), close: () => undefined } : fromRecording(flags);
  try {
    const summary = await streamRun(flags.url, flags.token, source.run, source.events, { speed, fast: flags.fast === true });
    stdout.write(flags.json ? `${JSON.stringify(summary)}\n` : `run ${summary.run}: ${summary.frames} frames, ${summary.centroids} centroids sent, ${summary.alerts} alerts, ${summary.errors} rejected\n`);
  } finally {
    source.close();
  }
}

/** The rig URL and token from `--url` (a `?token=` there is used when `--token` is absent). */
export function rigEndpoint(url: string, token: string | undefined): { url: string; token: string | undefined } {
  let parsed: URL;
  try {
    parsed = new URL(url);
  } catch {
    throw new UsageError(`option --url needs a ws:// address, got '${url}'`);
  }
  if (parsed.protocol !== 'ws:' && parsed.protocol !== 'wss:') throw new UsageError(`option --url needs a ws:// address, got '${url}'`);
  const fromUrl = parsed.searchParams.get('token') ?? undefined;
  parsed.search = '';
  if (parsed.pathname === '/' || parsed.pathname === '') parsed.pathname = '/rig';
  return { url: parsed.toString(), token: token ?? process.env.JOSTLE_TOKEN ?? fromUrl };
}

/** Connects, opens the run, streams the events, ends the run and closes. */
export async function streamRun(
  url: string,
  token: string | undefined,
  run: RigRunMessage,
  events: Iterable<RigEvent> | AsyncIterable<RigEvent>,
  pacing: { speed: number; fast: boolean; stopped?: () => boolean },
): Promise<{ run: string; frames: number; centroids: number; alerts: number; errors: number }> {
  const endpoint = rigEndpoint(url, token);
  let rig: RigClient;
  try {
    rig = await RigClient.connect(endpoint.url, { token: endpoint.token });
  } catch (error) {
    throw new UsageError(`cannot connect to ${endpoint.url}: ${(error as Error).message}`, 'JOSTLE_E_CONNECT');
  }
  try {
    const accepted = await rig.open(run);
    const sent = await streamToServer(events, rig, pacing);
    await rig.end();
    return { run: accepted.run, ...sent, alerts: rig.alerts.length, errors: rig.errors.length };
  } finally {
    await rig.close();
  }
}
