/** One record of a small CSV file, as split by `parseCsvRecords`. */
export interface CsvRecord {
  /** 1-based line number where the record starts. */
  line: number;
  /** Field values: unquoted fields trimmed, quoted fields exactly as written (quotes undoubled). */
  fields: string[];
  /** The record as written, cut to 120 characters, for quoting in a report. */
  text: string;
  /** Set when the quoting is broken (the record cannot be used): a fixed phrase. */
  malformed?: string;
}

const QUOTE_CHARS = 120;

/**
 * Splits the text of a small CSV file into records, with RFC 4180 quoting (RFC 4180,
 * "Common Format and MIME Type for Comma-Separated Values (CSV) Files", 2005, §2): a field in
 * double quotes may hold commas, line breaks and doubled quotes `""`. Line ends may be LF or
 * CRLF; a UTF-8 byte order mark is dropped; blank lines and lines starting with `#` (outside a
 * quoted field) are skipped, as in CONTRACTS §2. Blanks around a quoted field are allowed.
 *
 * For tags and temperature logs, which are small: the whole text is in memory. The centroid
 * reader has its own streaming byte parser.
 *
 * Complexity: O(text length).
 *
 * @param text the whole file
 * @returns the records in order; a record with broken quoting has `malformed` set
 *
 * @example
 * parseCsvRecords('label,start\n"a, b",1.5\n');
 * // → [{ line: 1, fields: ['label', 'start'], text: 'label,start' },
 * //    { line: 2, fields: ['a, b', '1.5'], text: '"a, b",1.5' }]
 */
export function parseCsvRecords(text: string): CsvRecord[] {
  const records: CsvRecord[] = [];
  const n = text.length;
  let i = text.charCodeAt(0) === 0xfeff ? 1 : 0;
  let line = 1;
  while (i < n) {
    // Record start: skip blank lines and comments.
    let j = i;
    while (j < n && (text[j] === ' ' || text[j] === '\t' || text[j] === '\r')) j++;
    if (j >= n) break;
    if (text[j] === '\n' || text[j] === '#') {
      const newline = text.indexOf('\n', j);
      if (newline < 0) break;
      i = newline + 1;
      line++;
      continue;
    }
    const recordStart = i;
    const recordLine = line;
    const fields: string[] = [];
    let malformed: string | undefined;
    let atRecordEnd = false;
    while (!atRecordEnd) {
      // One field, starting at i.
      let k = i;
      while (k < n && (text[k] === ' ' || text[k] === '\t')) k++;
      if (k < n && text[k] === '"') {
        let value = '';
        k++;
        let closed = false;
        while (k < n) {
          const c = text[k];
          if (c === '"') {
            if (text[k + 1] === '"') {
              value += '"';
              k += 2;
              continue;
            }
            closed = true;
            k++;
            break;
          }
          if (c === '\n') line++;
          value += c;
          k++;
        }
        if (!closed) {
          malformed ??= 'unterminated quoted field';
          fields.push(value);
          i = n;
          break;
        }
        while (k < n && (text[k] === ' ' || text[k] === '\t' || text[k] === '\r')) k++;
        if (k < n && text[k] !== ',' && text[k] !== '\n') {
          malformed ??= 'text after a closing quote';
          while (k < n && text[k] !== ',' && text[k] !== '\n') k++;
        }
        fields.push(value);
      } else {
        let end = k;
        while (end < n && text[end] !== ',' && text[end] !== '\n') end++;
        const value = text.slice(k, end).trim();
        if (value.includes('"')) malformed ??= 'quote inside an unquoted field';
        fields.push(value);
        k = end;
      }
      if (k >= n) {
        atRecordEnd = true;
        i = n;
      } else if (text[k] === '\n') {
        atRecordEnd = true;
        line++;
        i = k + 1;
      } else {
        i = k + 1; // past the comma
      }
    }
    let raw = text.slice(recordStart, Math.min(i, recordStart + QUOTE_CHARS + 2)).replace(/\r?\n$/, '');
    if (raw.length > QUOTE_CHARS) raw = raw.slice(0, QUOTE_CHARS);
    const record: CsvRecord = { line: recordLine, fields, text: raw };
    if (malformed !== undefined) record.malformed = malformed;
    records.push(record);
  }
  return records;
}
