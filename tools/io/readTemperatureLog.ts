import type { RejectedRow } from './centroidCsvParser.js';
import { IoError } from './ioError.js';
import { parseDecimalText } from './parseDecimalText.js';
import { readTextFile } from './readTextFile.js';
import { Rejections, smallCsvTable } from './smallCsvTable.js';

/** One sensor reading: time s (data clock), temperature °C. */
export interface TemperatureReading {
  /** Time, s. */
  t: number;
  /** Temperature, °C. */
  celsius: number;
}

/** A temperature log read from a file, with the rows that could not be used. */
export interface TemperatureLogResult {
  /** Readings in file (and time) order. */
  readings: TemperatureReading[];
  /** Data records read. */
  rows: number;
  /** Records rejected. */
  rejectedRows: number;
  /** The first rejected records, quoted. */
  rejected: RejectedRow[];
}

/** Absolute zero, °C (ITS-90 / SI definition of the kelvin: 0 K = −273.15 °C). */
const ABSOLUTE_ZERO_CELSIUS = -273.15;

/**
 * Parses the text of a temperature log (CONTRACTS §2): header `t,celsius` (case-insensitive, any
 * order, other columns ignored), t in s on the data clock, temperature in °C.
 *
 * Rejected (counted, first `maxQuotedRejections` quoted): broken quoting, wrong number of fields,
 * a field that is empty or not a finite decimal number, a temperature below absolute zero, time
 * going backwards (equal times are kept). Throws `IoError` `JOSTLE_E_EMPTY` / `JOSTLE_E_HEADER`.
 *
 * Complexity: O(text length).
 *
 * @param text the whole file
 * @param options `maxQuotedRejections` (default 20)
 * @returns readings and rejections
 *
 * @example
 * parseTemperatureLog('t,celsius\n0,21.8\n60,21.9\n').readings;
 * // → [{ t: 0, celsius: 21.8 }, { t: 60, celsius: 21.9 }]
 */
export function parseTemperatureLog(text: string, options: { maxQuotedRejections?: number } = {}): TemperatureLogResult {
  const table = smallCsvTable(text, ['t', 'celsius'], 'header lacks a t or celsius column');
  const rejections = new Rejections(options.maxQuotedRejections ?? 20);
  const tAt = table.columnIndex.get('t') as number;
  const celsiusAt = table.columnIndex.get('celsius') as number;
  const readings: TemperatureReading[] = [];
  let lastT = -Infinity;
  for (const record of table.records) {
    if (record.malformed !== undefined) {
      rejections.add(record, record.malformed);
      continue;
    }
    if (record.fields.length !== table.width) {
      rejections.add(record, 'wrong number of fields');
      continue;
    }
    const t = parseDecimalText(record.fields[tAt]);
    const celsius = parseDecimalText(record.fields[celsiusAt]);
    if (!Number.isFinite(t)) {
      rejections.add(record, record.fields[tAt].trim() === '' ? 'field t is empty' : 'field t is not a finite number');
      continue;
    }
    if (!Number.isFinite(celsius)) {
      rejections.add(record, record.fields[celsiusAt].trim() === '' ? 'field celsius is empty' : 'field celsius is not a finite number');
      continue;
    }
    if (celsius < ABSOLUTE_ZERO_CELSIUS) {
      rejections.add(record, 'celsius below absolute zero');
      continue;
    }
    if (t < lastT) {
      rejections.add(record, 'time goes backwards');
      continue;
    }
    lastT = t;
    readings.push({ t, celsius });
  }
  return { readings, rows: table.records.length, rejectedRows: rejections.count, rejected: rejections.rows };
}

/**
 * Reads a temperature log file (see `parseTemperatureLog`). A file that cannot be read at all
 * rejects with an `IoError`: `JOSTLE_E_FILE`, `JOSTLE_E_EMPTY` or `JOSTLE_E_HEADER`.
 *
 * Complexity: O(file size); the file is read whole (at most 64 MiB).
 *
 * @param path the log CSV
 * @param options `maxQuotedRejections` (default 20)
 * @returns readings and rejections
 *
 * @example
 * const { readings } = await readTemperatureLog('bench-7-temperature.csv');
 * readings[0]; // → { t: 0, celsius: 21.8 }
 */
export async function readTemperatureLog(path: string, options: { maxQuotedRejections?: number } = {}): Promise<TemperatureLogResult> {
  const text = await readTextFile(path);
  try {
    return parseTemperatureLog(text, options);
  } catch (error) {
    throw error instanceof IoError ? new IoError(error.code, error.message, { path, line: error.line }) : error;
  }
}
