import type { PipelineOptions } from '../src/pipeline/pipelineOptions.js';
import { parseMedium } from '../src/physics/parseMedium.js';
import type { Tag } from '../src/tag.js';
import { ServerError } from './serverError.js';

/** A run id: 1–64 of `A-Za-z0-9._-`, not `.` or `..` (CONTRACTS §4). */
export const RUN_ID_PATTERN = /^[A-Za-z0-9._-]{1,64}$/;

/** True for a valid run id. @example isRunId('bench-a.0412') // → true */
export function isRunId(value: unknown): value is string {
  return typeof value === 'string' && RUN_ID_PATTERN.test(value) && value !== '.' && value !== '..';
}

/** A checked `run` message: the run id (when given), pipeline options and the rig's settings. */
export interface RunSettings {
  run: string | undefined;
  label: string;
  pixelSize: number;
  floatBits: 32 | 64;
  pipeline: PipelineOptions;
}

function optionalNumber(message: Record<string, unknown>, name: string, check: (n: number) => boolean): number | undefined {
  const value = message[name];
  if (value === undefined || value === null) return undefined;
  if (typeof value !== 'number' || !Number.isFinite(value) || !check(value)) {
    throw new ServerError('JOSTLE_E_RUN', `run ${name} is out of range`);
  }
  return value;
}

/**
 * Checks a `run` message (CONTRACTS §4) and turns it into pipeline options.
 *
 * @throws ServerError `JOSTLE_E_RUN` naming the bad field, `JOSTLE_E_MEDIUM` for a bad medium
 * @example
 * parseRunMessage({ type: 'run', frameInterval: 0.05 }).pipeline // → { frameInterval: 0.05 }
 */
export function parseRunMessage(message: Record<string, unknown>): RunSettings {
  if (message.run !== undefined && !isRunId(message.run)) throw new ServerError('JOSTLE_E_RUN', 'run id must be 1-64 of A-Za-z0-9._-');
  const positive = (n: number) => n > 0;
  const frameInterval = optionalNumber(message, 'frameInterval', positive);
  if (frameInterval === undefined) throw new ServerError('JOSTLE_E_RUN', 'run frameInterval is required');
  const exposure = optionalNumber(message, 'exposure', (n) => n >= 0 && n <= frameInterval);
  const radius = optionalNumber(message, 'radius', positive);
  const radiusSd = optionalNumber(message, 'radiusSd', (n) => n >= 0);
  if (radiusSd !== undefined && radius === undefined) throw new ServerError('JOSTLE_E_RUN', 'run radiusSd needs radius');
  const height = optionalNumber(message, 'height', positive);
  const temperature = optionalNumber(message, 'temperature', (n) => n > -50 && n < 200);
  const pixelSize = optionalNumber(message, 'pixelSize', positive) ?? 1;
  const floatBits = message.floatBits ?? 64;
  if (floatBits !== 32 && floatBits !== 64) throw new ServerError('JOSTLE_E_RUN', 'run floatBits must be 32 or 64');
  if (message.label !== undefined && (typeof message.label !== 'string' || message.label.length > 200)) {
    throw new ServerError('JOSTLE_E_RUN', 'run label must be text of at most 200 characters');
  }
  let medium: string | undefined;
  if (message.medium !== undefined) {
    if (typeof message.medium !== 'string') throw new ServerError('JOSTLE_E_RUN', 'run medium must be text');
    try {
      parseMedium(message.medium);
    } catch {
      throw new ServerError('JOSTLE_E_MEDIUM', 'run medium is not understood');
    }
    medium = message.medium;
  }
  const pipeline: PipelineOptions = { frameInterval };
  const extra = { exposure, radius, radiusSd, height, temperature, medium };
  for (const [key, value] of Object.entries(extra)) if (value !== undefined) (pipeline as unknown as Record<string, unknown>)[key] = value;
  return { run: message.run as string | undefined, label: (message.label as string | undefined) ?? '', pixelSize, floatBits, pipeline };
}

/**
 * Checks a `tag` message (from a rig, a dashboard or `POST /api/runs/<id>/tags`).
 *
 * @throws ServerError `JOSTLE_E_TAG`
 * @example
 * parseTagMessage({ label: 'pump-on', start: 4 }) // → { label: 'pump-on', start: 4, end: null, note: '' }
 */
export function parseTagMessage(message: Record<string, unknown>): Tag {
  const { label, start, end, note } = message;
  if (typeof label !== 'string' || label.length === 0 || label.length > 200) throw new ServerError('JOSTLE_E_TAG', 'tag label must be text of 1-200 characters');
  if (typeof start !== 'number' || !Number.isFinite(start)) throw new ServerError('JOSTLE_E_TAG', 'tag start must be a finite number');
  if (end !== undefined && end !== null && (typeof end !== 'number' || !Number.isFinite(end) || end < start)) {
    throw new ServerError('JOSTLE_E_TAG', 'tag end must be a finite number not before start');
  }
  if (note !== undefined && note !== null && (typeof note !== 'string' || note.length > 2000)) {
    throw new ServerError('JOSTLE_E_TAG', 'tag note must be text of at most 2000 characters');
  }
  return { label, start, end: (end as number | null | undefined) ?? null, note: (note as string | null | undefined) ?? '' };
}

/**
 * Checks a `temperature` message.
 *
 * @throws ServerError `JOSTLE_E_TEMPERATURE`
 * @example
 * parseTemperatureMessage({ t: 2, celsius: 21.5 }) // → { t: 2, celsius: 21.5 }
 */
export function parseTemperatureMessage(message: Record<string, unknown>): { t: number; celsius: number } {
  const { t, celsius } = message;
  if (typeof t !== 'number' || !Number.isFinite(t) || typeof celsius !== 'number' || !Number.isFinite(celsius)) {
    throw new ServerError('JOSTLE_E_TEMPERATURE', 'temperature needs finite t and celsius');
  }
  return { t, celsius };
}
