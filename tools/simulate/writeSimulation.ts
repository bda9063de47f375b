import { createWriteStream, type WriteStream } from 'node:fs';
import { once } from 'node:events';
import { simulate } from '../../src/simulate/simulate.js';
import type { SimulationOptions } from '../../src/simulate/simulationOptions.js';
import type { SimulationTruth } from '../../src/simulate/simulationTruth.js';
import { Random } from '../../src/stats/random.js';

/** Where `writeSimulation` writes, and what it injects. */
export interface SimulationFiles {
  /** Centroid CSV (CONTRACTS §2): `frame,t,id?,x,y,z?,intensity`. */
  csvPath: string;
  /** Truth JSON: the run's `SimulationTruth` plus the resolved `options`. */
  truthPath: string;
  /** Reported temperature log CSV `t,celsius` (written only for a Stokes–Einstein run). */
  temperatureLogPath?: string;
  /** Tags CSV `label,start,end,note` (written only when the options hold tags). */
  tagsPath?: string;
  /** Malformed rows to inject; overrides `options.badRows`. */
  badRows?: { probability: number };
}

/** What `writeSimulation` wrote. */
export interface SimulationWriteSummary {
  /** Data rows written to the centroid CSV (good and malformed). */
  rows: number;
  /** Malformed rows among them. */
  badRows: number;
  /** Frame events written (frames with no detection write no row). */
  frames: number;
  /** Readings written to the temperature log. */
  temperatureReadings: number;
  /** Tags written. */
  tags: number;
  /** The truth written to `truthPath`. */
  truth: SimulationTruth;
}

/** Buffers lines into ~64 KiB chunks and honours the stream's backpressure. */
class LineSink {
  private buffer = '';
  /** Number of lines pushed so far (so the next line's 1-based number is `lines + 1`). */
  lines = 0;

  constructor(private readonly stream: WriteStream) {}

  push(line: string): void {
    this.buffer += line;
    this.buffer += '\n';
    this.lines++;
  }

  get full(): boolean {
    return this.buffer.length >= 65536;
  }

  async flush(): Promise<void> {
    if (this.buffer.length === 0) return;
    const chunk = this.buffer;
    this.buffer = '';
    if (!this.stream.write(chunk)) await once(this.stream, 'drain');
  }

  async close(): Promise<void> {
    await this.flush();
    this.stream.end();
    await once(this.stream, 'finish');
  }
}

function open(path: string): LineSink {
  return new LineSink(createWriteStream(path, { encoding: 'utf8' }));
}

function csvField(text: string): string {
  return /[",\r\n]/.test(text) ? `"${text.replace(/"/g, '""')}"` : text;
}

const BAD_KINDS = ['non-numeric', 'missing-field', 'nan', 'infinite'] as const;

/**
 * Runs a simulation and streams it to files: the centroid CSV, the truth JSON, and when they
 * apply the reported temperature log and the tags. The CSV is written in chunks with
 * backpressure (never as one string). Positions are divided by `options.positionUnit` (pixel
 * size, µm; default 1, i.e. µm). With `badRows`, a malformed row (non-numeric x, a missing
 * field, NaN, or an infinite value) follows a good row with that probability; their 1-based
 * line numbers and kinds are recorded in the truth file as `badRows`.
 *
 * The first lines of the CSV are `#` comments naming the seed and the position unit.
 *
 * Complexity: the cost of the run, O(frames · particles · subSteps); memory O(particles).
 *
 * @param options simulation options (a scenario from `scenarios`, for example)
 * @param files output paths
 * @returns counts of what was written, and the truth
 * @example
 * const summary = await writeSimulation(scenarios.clean, { csvPath: 'clean.csv', truthPath: 'clean.truth.json' });
 * summary.rows; // → about 40 × 1200
 */
export async function writeSimulation(options: SimulationOptions, files: SimulationFiles): Promise<SimulationWriteSummary> {
  const run = simulate(options);
  const o = run.options;
  const badRows = files.badRows ?? o.badRows ?? null;
  if (badRows && !(badRows.probability >= 0 && badRows.probability <= 1)) {
    throw new RangeError('writeSimulation requires badRows.probability in [0, 1]');
  }
  const bad = new Random((o.seed ^ 0x2c1b3c6d) >>> 0);
  const unit = o.positionUnit;
  const csv = open(files.csvPath);
  const temperatureLog = files.temperatureLogPath && o.reportedCelsius !== null ? open(files.temperatureLogPath) : null;
  const badLines: { line: number; kind: string }[] = [];
  let rows = 0;
  let frames = 0;
  let readings = 0;

  csv.push(`# simulated centroids, seed ${o.seed}`);
  csv.push(`# positions in units of ${unit} um, frame interval ${o.frameInterval} s, exposure ${o.exposure} s`);
  const columns = ['frame', 't'];
  if (o.ids) columns.push('id');
  columns.push('x', 'y');
  if (o.reportZ) columns.push('z');
  columns.push('intensity');
  csv.push(columns.join(','));
  temperatureLog?.push('t,celsius');

  for (const event of run) {
    if (event.type === 'temperature') {
      if (temperatureLog) {
        temperatureLog.push(`${event.t.toFixed(6)},${event.celsius.toFixed(4)}`);
        readings++;
        if (temperatureLog.full) await temperatureLog.flush();
      }
      continue;
    }
    const { frame } = event;
    frames++;
    const head = `${frame.index},${frame.t.toFixed(6)}`;
    for (let i = 0; i < frame.count; i++) {
      let line = head;
      if (frame.id) line += `,${frame.id[i]}`;
      line += `,${(frame.x[i] / unit).toFixed(5)},${(frame.y[i] / unit).toFixed(5)}`;
      if (frame.z) line += `,${(frame.z[i] / unit).toFixed(5)}`;
      line += `,${frame.intensity ? frame.intensity[i].toFixed(2) : ''}`;
      csv.push(line);
      rows++;
      if (badRows && bad.uniform() < badRows.probability) {
        const kind = BAD_KINDS[bad.integer(BAD_KINDS.length)];
        const fields = line.split(',');
        const xAt = columns.indexOf('x');
        if (kind === 'non-numeric') fields[xAt] = 'blurred';
        else if (kind === 'nan') fields[xAt] = 'NaN';
        else if (kind === 'infinite') fields[xAt + 1] = 'Infinity';
        else fields.length = xAt; // missing fields: cut before x
        csv.push(fields.join(','));
        badLines.push({ line: csv.lines, kind });
        rows++;
      }
      if (csv.full) await csv.flush();
    }
  }
  await csv.close();
  if (temperatureLog) await temperatureLog.close();

  let tags = 0;
  if (files.tagsPath && o.tags.length > 0) {
    const sink = open(files.tagsPath);
    sink.push('label,start,end,note');
    for (const tag of o.tags) {
      sink.push(`${csvField(tag.label)},${tag.start},${tag.end ?? ''},${csvField(tag.note ?? '')}`);
      tags++;
    }
    await sink.close();
  }

  const truth: SimulationTruth = { ...run.truth() };
  if (badRows) truth.badRows = badLines;
  const truthSink = open(files.truthPath);
  truthSink.push(JSON.stringify({ ...truth, options: o }, null, 1));
  await truthSink.close();

  return { rows, badRows: badLines.length, frames, temperatureReadings: readings, tags, truth };
}
