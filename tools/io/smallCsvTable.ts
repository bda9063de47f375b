import { IoError } from './ioError.js';
import { parseCsvRecords, type CsvRecord } from './parseCsvRecords.js';
import type { RejectedRow } from './centroidCsvParser.js';

/** A small CSV split into a header map and data records, with the rejection bookkeeping. */
export interface SmallCsvTable {
  /** Column name (lower case) → field index. */
  columnIndex: Map<string, number>;
  /** Number of header fields. */
  width: number;
  /** Data records (header excluded), comments and blank lines already skipped. */
  records: CsvRecord[];
}

/**
 * Splits a small CSV text and maps its header (case-insensitive names, any order), checking that
 * the required columns are there. Throws `IoError` `JOSTLE_E_EMPTY` when there is no header and
 * `JOSTLE_E_HEADER` when a required column is missing or one is named twice.
 *
 * Complexity: O(text length).
 *
 * @param text the whole file
 * @param required column names that must be present, lower case
 * @param missingMessage the fixed phrase for a missing required column
 * @returns header map and data records
 *
 * @example
 * smallCsvTable('T,Celsius\n0,21\n', ['t', 'celsius'], 'header lacks a t or celsius column').columnIndex.get('celsius'); // → 1
 */
export function smallCsvTable(text: string, required: string[], missingMessage: string): SmallCsvTable {
  const records = parseCsvRecords(text);
  if (records.length === 0) throw new IoError('JOSTLE_E_EMPTY', text.length === 0 ? 'file is empty' : 'file holds no header line');
  const header = records[0];
  if (header.malformed !== undefined) throw new IoError('JOSTLE_E_HEADER', 'header quoting is broken', { line: header.line });
  const columnIndex = new Map<string, number>();
  header.fields.forEach((name, k) => {
    const key = name.trim().toLowerCase();
    if (columnIndex.has(key)) throw new IoError('JOSTLE_E_HEADER', 'header names a column twice', { line: header.line });
    columnIndex.set(key, k);
  });
  for (const name of required) {
    if (!columnIndex.has(name)) throw new IoError('JOSTLE_E_HEADER', missingMessage, { line: header.line });
  }
  return { columnIndex, width: header.fields.length, records: records.slice(1) };
}

/**
 * Collects rejected rows: counts all, quotes the first `maxQuoted`.
 *
 * @example
 * const rejections = new Rejections(20);
 * rejections.add({ line: 3, fields: ['a'], text: 'a' }, 'wrong number of fields');
 * rejections.count; // → 1
 */
export class Rejections {
  /** Rows rejected. */
  count: number;
  /** The first rejected rows, quoted. */
  readonly rows: RejectedRow[];
  private readonly maxQuoted: number;

  /** @param maxQuoted how many rows to quote (non-negative integer) */
  constructor(maxQuoted: number) {
    if (!(Number.isInteger(maxQuoted) && maxQuoted >= 0)) throw new RangeError('maxQuotedRejections must be a non-negative integer');
    this.count = 0;
    this.rows = [];
    this.maxQuoted = maxQuoted;
  }

  /** Counts one rejected record, quoting it while there is room. */
  add(record: CsvRecord, reason: string): void {
    this.count++;
    if (this.rows.length < this.maxQuoted) this.rows.push({ line: record.line, reason, text: record.text });
  }
}
