import { readFile } from 'node:fs/promises';
import type { Frame } from '../../src/frame.js';
import { createDetectors } from '../../src/detectors/createDetectors.js';
import { refreshContext } from '../../src/pipeline/refreshContext.js';
import { Pipeline } from '../../src/pipeline/pipeline.js';
import { PIPELINE_OPTION_NAMES, type PipelineOptions } from '../../src/pipeline/pipelineOptions.js';
import { parseMedium } from '../../src/physics/parseMedium.js';
import type { Report } from '../../src/report.js';
import type { Tag } from '../../src/tag.js';
import { IoError } from '../io/ioError.js';
import { progressReporter } from '../io/progressReporter.js';
import { readCentroids } from '../io/readCentroids.js';
import { readTags } from '../io/readTags.js';
import { readTemperatureLog } from '../io/readTemperatureLog.js';
import { numberOption, UsageError } from './usageError.js';

/** The flags of `jostle analyze` as commander hands them over (strings until checked). */
export interface AnalyzeFlags {
  json?: boolean;
  pixelSize?: string;
  frameInterval?: string;
  exposure?: string;
  radius?: string;
  radiusSd?: string;
  height?: string;
  medium?: string;
  temperature?: string;
  temperatureLog?: string;
  tags?: string;
  config?: string;
  /** `key=value` settings, dotted keys into the config (e.g. `detectors.drift.tolerance=0.1`). */
  set?: string[];
  progress?: boolean;
}

/** Frames buffered to estimate the frame interval from the `t` column when it is not given. */
const INTERVAL_PROBE_FRAMES = 64;

/**
 * Runs the offline pipeline over a centroid file (CONTRACTS §1, `jostle analyze`) and returns the
 * report. The frame interval, when not given, is the median of the first frames' time steps.
 * Throws UsageError for bad flags and for a file that cannot be read at all.
 */
export async function analyzeFile(
  file: string,
  flags: AnalyzeFlags,
  stderr: NodeJS.WriteStream = process.stderr,
): Promise<Report> {
  const config = applySettings(flags.config ? await readConfig(flags.config) : {}, flags.set ?? []);
  const options = mergeOptions(config, flags);
  const tags: Tag[] = [];
  let tagRejections: unknown[] = [];
  if (flags.tags) {
    const result = await wrapIo(() => readTags(flags.tags as string));
    tags.push(...result.tags);
    tagRejections = result.rejected;
  }
  let readings: { t: number; celsius: number }[] = [];
  if (flags.temperatureLog) {
    const result = await wrapIo(() => readTemperatureLog(flags.temperatureLog as string));
    readings = result.readings.slice().sort((a, b) => a.t - b.t);
  }
  const pixelSize = numberOption('--pixel-size', flags.pixelSize, (n) => n > 0) ?? 1;
  let pipeline: Pipeline | undefined;
  const probe: Frame[] = [];
  let nextReading = 0;
  const start = (frameInterval: number) => {
    pipeline = new Pipeline({ ...options, frameInterval }, createDetectors, refreshContext);
    for (const tag of tags) pipeline.pushTag(tag);
  };
  const feed = (frame: Frame) => {
    const p = pipeline as Pipeline;
    while (nextReading < readings.length && readings[nextReading].t <= frame.t) {
      p.pushTemperature(readings[nextReading].t, readings[nextReading].celsius);
      nextReading++;
    }
    p.push(frame);
  };
  const progress = flags.progress === false ? undefined : progressReporter(stderr);
  const summary = await wrapIo(() =>
    readCentroids(
      file,
      {
        pixelSize,
        frameInterval: options.frameInterval,
        onProgress: progress ? (read, total) => progress.update(read, total) : undefined,
      },
      (frame) => {
        if (pipeline) return feed(frame);
        probe.push(frame);
        if (probe.length >= INTERVAL_PROBE_FRAMES) {
          start(options.frameInterval ?? medianInterval(probe));
          for (const f of probe.splice(0)) feed(f);
        }
      },
    ),
  );
  progress?.finish();
  if (!pipeline) {
    const interval = options.frameInterval ?? medianInterval(probe);
    start(interval);
    for (const f of probe.splice(0)) feed(f);
  }
  const p = pipeline as unknown as Pipeline;
  while (nextReading < readings.length) {
    p.pushTemperature(readings[nextReading].t, readings[nextReading].celsius);
    nextReading++;
  }
  for (const row of summary.backwards) p.rejectBackwards(row.t, row.line);
  p.finish();
  return p.report({
    input: {
      rows: summary.rows,
      rejectedRows: summary.rejectedRows,
      rejected: summary.rejected,
      backwardsRows: summary.backwardsRows,
      columns: summary.columns,
      timeSource: summary.timeSource,
      bytes: summary.bytes,
      file,
      pixelSize,
      ...(tagRejections.length > 0 ? { rejectedTags: tagRejections } : {}),
    },
    // every setting, defaults included; settings left unset are null (JSON would drop undefined)
    provenanceOptions: Object.fromEntries(
      Object.entries({ ...p.options, pixelSize, file, tags: flags.tags ?? null, temperatureLog: flags.temperatureLog ?? null, config: flags.config ?? null, set: flags.set ?? [] })
        .map(([key, value]) => [key, value === undefined ? null : value]),
    ),
    generated: new Date().toISOString(),
  });
}

/** Pipeline options from a config file and the flags (flags win). */
export function mergeOptions(config: Record<string, unknown>, flags: AnalyzeFlags): Omit<PipelineOptions, 'frameInterval'> & { frameInterval?: number } {
  const positive = (n: number) => n > 0;
  const fromFlags = {
    frameInterval: numberOption('--frame-interval', flags.frameInterval, positive),
    exposure: numberOption('--exposure', flags.exposure, (n) => n >= 0),
    radius: numberOption('--radius', flags.radius, positive),
    radiusSd: numberOption('--radius-sd', flags.radiusSd, (n) => n >= 0),
    height: numberOption('--height', flags.height, positive),
    temperature: numberOption('--temperature', flags.temperature),
    medium: flags.medium,
  };
  const unknown = Object.keys(config).filter((key) => !PIPELINE_OPTION_NAMES.includes(key));
  if (unknown.length > 0) throw new UsageError(`unknown setting ${unknown.join(', ')} in --config/--set`, 'JOSTLE_E_CONFIG');
  const merged: Record<string, unknown> = { ...config };
  for (const [key, value] of Object.entries(fromFlags)) if (value !== undefined) merged[key] = value;
  if (typeof merged.medium === 'string') {
    try {
      parseMedium(merged.medium);
    } catch (error) {
      throw new UsageError((error as Error).message, 'JOSTLE_E_MEDIUM');
    }
  }
  if (merged.exposure !== undefined && merged.frameInterval !== undefined && (merged.exposure as number) > (merged.frameInterval as number)) {
    throw new UsageError('options --exposure and --frame-interval conflict: exposure exceeds the frame interval');
  }
  if (merged.radiusSd !== undefined && merged.radius === undefined) throw new UsageError('option --radius-sd needs --radius');
  return merged as Omit<PipelineOptions, 'frameInterval'> & { frameInterval?: number };
}

/**
 * Applies `--set key=value` settings to a config object (a copy): dotted keys make nested objects,
 * values are read as JSON when they parse (numbers, true/false, arrays) and as text otherwise.
 *
 * @example applySettings({}, ['detectors.drift.tolerance=0.1']) // → { detectors: { drift: { tolerance: 0.1 } } }
 */
export function applySettings(config: Record<string, unknown>, settings: readonly string[]): Record<string, unknown> {
  const out = structuredClone(config);
  for (const setting of settings) {
    const at = setting.indexOf('=');
    const key = at > 0 ? setting.slice(0, at).trim() : '';
    if (!/^[A-Za-z][A-Za-z0-9]*(\.[A-Za-z][A-Za-z0-9]*)*$/.test(key)) {
      throw new UsageError(`option --set needs key=value with a dotted key, got '${setting}'`);
    }
    const text = setting.slice(at + 1);
    let value: unknown = text;
    try {
      value = JSON.parse(text);
    } catch {
      // not JSON: keep the text (e.g. a medium spec)
    }
    const path = key.split('.');
    let node = out as Record<string, unknown>;
    for (const part of path.slice(0, -1)) {
      const next = node[part];
      if (next === undefined) node[part] = {};
      else if (next === null || typeof next !== 'object' || Array.isArray(next)) {
        throw new UsageError(`option --set ${key}: ${part} is not an object in the settings`);
      }
      node = node[part] as Record<string, unknown>;
    }
    node[path[path.length - 1]] = value;
  }
  return out;
}

async function readConfig(path: string): Promise<Record<string, unknown>> {
  let text: string;
  try {
    text = await readFile(path, 'utf8');
  } catch {
    throw new UsageError(`config file cannot be read: ${path}`, 'JOSTLE_E_CONFIG');
  }
  try {
    const value = JSON.parse(text) as unknown;
    if (value === null || typeof value !== 'object' || Array.isArray(value)) throw new Error('not an object');
    return value as Record<string, unknown>;
  } catch {
    throw new UsageError(`config file is not a JSON object: ${path}`, 'JOSTLE_E_CONFIG');
  }
}

/** Median of the positive time steps between frames, s. */
function medianInterval(frames: Frame[]): number {
  const steps: number[] = [];
  for (let i = 1; i < frames.length; i++) {
    const step = frames[i].t - frames[i - 1].t;
    if (step > 0) steps.push(step);
  }
  if (steps.length === 0) throw new UsageError('the frame interval cannot be found from the file: give --frame-interval', 'JOSTLE_E_OPTION');
  steps.sort((a, b) => a - b);
  // 12 significant digits: differences of printed times carry rounding noise (0.05 → 0.050000000000000044)
  return Number(steps[Math.floor(steps.length / 2)].toPrecision(12));
}

async function wrapIo<T>(action: () => Promise<T>): Promise<T> {
  try {
    return await action();
  } catch (error) {
    if (error instanceof IoError) throw new UsageError(error.message, error.code);
    if (error instanceof RangeError) throw new UsageError(error.message, 'JOSTLE_E_OPTION');
    throw error;
  }
}
