import type { Tag } from '../../src/tag.js';

/**
 * Quotes one CSV field when needed, by RFC 4180 §2 (RFC 4180, "Common Format and MIME Type for
 * Comma-Separated Values (CSV) Files", 2005): a field holding a comma, a double quote, CR or LF is
 * put in double quotes with inner quotes doubled. We also quote fields with blanks at either end
 * (our readers trim unquoted fields) and fields starting with `#` (a comment mark at line start).
 *
 * @example
 * quoteCsvField('stage "B", left');  // → '"stage ""B"", left"'
 * quoteCsvField('plain');            // → 'plain'
 */
export function quoteCsvField(text: string): string {
  if (/[",\r\n]|^[\s#]|\s$/.test(text)) return `"${text.replaceAll('"', '""')}"`;
  return text;
}

/**
 * Formats tags as the tags CSV of CONTRACTS §2: header `label,start,end,note`, times in s written
 * with `String(number)` (exact round trip), an empty `end` for a point mark, RFC 4180 quoting for
 * labels and notes; lines end with `\n`.
 *
 * Complexity: O(total text).
 *
 * @example
 * formatTagsCsv([{ label: 'bump', start: 31.2, end: null, note: 'door, slammed' }]);
 * // → 'label,start,end,note\nbump,31.2,,"door, slammed"\n'
 */
export function formatTagsCsv(tags: readonly Tag[]): string {
  let text = 'label,start,end,note\n';
  for (const tag of tags) {
    text += `${quoteCsvField(tag.label)},${tag.start},${tag.end === null ? '' : tag.end},${quoteCsvField(tag.note)}\n`;
  }
  return text;
}

/**
 * Writes tags as the tags CSV of CONTRACTS §2 (see `formatTagsCsv`) to a stream, waiting for
 * `drain` if the stream asks. The stream is not ended.
 *
 * Complexity: O(total text).
 *
 * @example
 * await writeTagsCsv(tags, response); // → 'label,start,end,note\n...'
 */
export async function writeTagsCsv(tags: readonly Tag[], out: NodeJS.WritableStream): Promise<void> {
  if (!out.write(formatTagsCsv(tags))) await new Promise<void>((resolve) => out.once('drain', resolve));
}
