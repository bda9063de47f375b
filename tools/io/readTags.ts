import type { Tag } from '../../src/tag.js';
import type { RejectedRow } from './centroidCsvParser.js';
import { IoError } from './ioError.js';
import { parseDecimalText } from './parseDecimalText.js';
import { readTextFile } from './readTextFile.js';
import { Rejections, smallCsvTable } from './smallCsvTable.js';

/** Tags read from a file, with the rows that could not be used. */
export interface TagReadResult {
  /** Tags in file order. */
  tags: Tag[];
  /** Data records read (header, comments and blank lines excluded). */
  rows: number;
  /** Records rejected. */
  rejectedRows: number;
  /** The first rejected records, quoted. */
  rejected: RejectedRow[];
}

/**
 * Parses the text of a tags file (CONTRACTS §2): header `label,start,end,note` (names
 * case-insensitive, any order; `label` and `start` required, `end` and `note` optional), times in
 * s. An empty `end` is a point mark (`end: null`). Notes and labels may be RFC 4180-quoted, with
 * commas, quotes (`""`) and line breaks inside. A record may stop before its optional trailing
 * fields (they count as empty).
 *
 * Rejected (counted, first `maxQuotedRejections` quoted): broken quoting, too many fields or a
 * missing required one, empty label, start or end not a finite decimal number, end before start.
 * Throws `IoError` `JOSTLE_E_EMPTY` / `JOSTLE_E_HEADER` when the file has no usable header.
 *
 * Complexity: O(text length).
 *
 * @param text the whole file
 * @param options `maxQuotedRejections` (default 20)
 * @returns tags and rejections
 *
 * @example
 * parseTags('label,start,end,note\nwarm-up,0,30,"stage heater on, 25 °C"\nbump,31.2,,\n').tags;
 * // → [{ label: 'warm-up', start: 0, end: 30, note: 'stage heater on, 25 °C' },
 * //    { label: 'bump', start: 31.2, end: null, note: '' }]
 */
export function parseTags(text: string, options: { maxQuotedRejections?: number } = {}): TagReadResult {
  const table = smallCsvTable(text, ['label', 'start'], 'header lacks a label or start column');
  const rejections = new Rejections(options.maxQuotedRejections ?? 20);
  const labelAt = table.columnIndex.get('label') as number;
  const startAt = table.columnIndex.get('start') as number;
  const endAt = table.columnIndex.get('end');
  const noteAt = table.columnIndex.get('note');
  const requiredWidth = Math.max(labelAt, startAt) + 1;
  const tags: Tag[] = [];
  for (const record of table.records) {
    const fields = record.fields;
    if (record.malformed !== undefined) {
      rejections.add(record, record.malformed);
      continue;
    }
    if (fields.length > table.width || fields.length < requiredWidth) {
      rejections.add(record, 'wrong number of fields');
      continue;
    }
    const label = fields[labelAt];
    if (label.length === 0) {
      rejections.add(record, 'label is empty');
      continue;
    }
    const start = parseDecimalText(fields[startAt]);
    if (!Number.isFinite(start)) {
      rejections.add(record, fields[startAt].trim() === '' ? 'field start is empty' : 'field start is not a finite number');
      continue;
    }
    const endText = endAt === undefined ? '' : (fields[endAt] ?? '');
    let end: number | null = null;
    if (endText.trim() !== '') {
      end = parseDecimalText(endText);
      if (!Number.isFinite(end)) {
        rejections.add(record, 'field end is not a finite number');
        continue;
      }
      if (end < start) {
        rejections.add(record, 'end is before start');
        continue;
      }
    }
    const note = noteAt === undefined ? '' : (fields[noteAt] ?? '');
    tags.push({ label, start, end, note });
  }
  return { tags, rows: table.records.length, rejectedRows: rejections.count, rejected: rejections.rows };
}

/**
 * Reads a tags file (see `parseTags`). A file that cannot be read at all rejects with an
 * `IoError`: `JOSTLE_E_FILE`, `JOSTLE_E_EMPTY` or `JOSTLE_E_HEADER`.
 *
 * Complexity: O(file size); the file is read whole (tags files are small, at most 64 MiB).
 *
 * @param path the tags CSV
 * @param options `maxQuotedRejections` (default 20)
 * @returns tags and rejections
 *
 * @example
 * const { tags, rejectedRows } = await readTags('bench-7-tags.csv');
 * tags[0]; // → { label: 'warm-up', start: 0, end: 30, note: 'stage heater on' }
 */
export async function readTags(path: string, options: { maxQuotedRejections?: number } = {}): Promise<TagReadResult> {
  const text = await readTextFile(path);
  try {
    return parseTags(text, options);
  } catch (error) {
    throw error instanceof IoError ? new IoError(error.code, error.message, { path, line: error.line }) : error;
  }
}
