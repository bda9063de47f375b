import { describe, expect, it, beforeAll, afterAll } from 'vitest';
import { mkdtemp, rm, writeFile } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import fc from 'fast-check';
import { parseTags, readTags } from '../../tools/io/readTags.js';
import { parseTemperatureLog, readTemperatureLog } from '../../tools/io/readTemperatureLog.js';
import { parseCsvRecords } from '../../tools/io/parseCsvRecords.js';
import { formatTagsCsv, quoteCsvField } from '../../tools/io/writeTagsCsv.js';
import { IoError } from '../../tools/io/ioError.js';
import type { Tag } from '../../src/tag.js';

describe('parseCsvRecords', () => {
  it('parseCsvRecords(text) follows the RFC 4180 §2 examples', () => {
    // RFC 4180 §2 rules 5–7 and their examples (quoted fields, line breaks in quotes, "" escape),
    // recalled from memory.
    const records = parseCsvRecords('"aaa","b\r\nbb","ccc"\r\nzzz,yyy,xxx\r\n"aaa","b""bb","ccc"\r\n');
    expect(records.map((r) => [r.line, r.fields])).toEqual([
      [1, ['aaa', 'b\r\nbb', 'ccc']],
      [3, ['zzz', 'yyy', 'xxx']],
      [4, ['aaa', 'b"bb', 'ccc']],
    ]);
  });

  it('parseCsvRecords(text) flags broken quoting and keeps counting lines', () => {
    // RFC 4180 §2 rule 5: a quote may appear only in a quoted field, doubled.
    const records = parseCsvRecords('a,b\n"x"y,1\nq"r,2\nok,3\n"open,4\n5,6\n');
    expect(records.map((r) => [r.line, r.malformed])).toEqual([
      [1, undefined],
      [2, 'text after a closing quote'],
      [3, 'quote inside an unquoted field'],
      [4, undefined],
      [5, 'unterminated quoted field'],
    ]);
  });
});

describe('parseTags', () => {
  it('parseTags(text) reads segments, point marks and quoted notes with commas', () => {
    // CONTRACTS.md §2 (label,start,end,note; empty end = point mark); RFC 4180 §2 quoting.
    const text = '\ufeffLabel,Start,End,Note\r\n# bench 7 (invented)\r\nwarm-up,0,30,"stage heater on, 25 °C"\r\n' +
      'bump,31.2,,\r\n"pipette ""B""",40,55.5,"two\nlines"\r\nshort,60\r\n';
    const { tags, rows, rejectedRows } = parseTags(text);
    expect(tags).toEqual([
      { label: 'warm-up', start: 0, end: 30, note: 'stage heater on, 25 °C' },
      { label: 'bump', start: 31.2, end: null, note: '' },
      { label: 'pipette "B"', start: 40, end: 55.5, note: 'two\nlines' },
      { label: 'short', start: 60, end: null, note: '' },
    ]);
    expect([rows, rejectedRows]).toEqual([4, 0]);
  });

  it('parseTags(text) rejects bad rows with their line numbers and keeps the rest', () => {
    // CONTRACTS.md §2: same rejection policy as centroids (rejected, counted, quoted).
    const text = 'label,start,end,note\nok,1,2,fine\n,1,2,no label\nx,abc,2,\ny,5,4,backwards\nz,1,2,a,b\n' +
      'w,1,inf,\nv,1,2,"unterminated\n';
    const { tags, rows, rejectedRows, rejected } = parseTags(text);
    expect(tags.map((t) => t.label)).toEqual(['ok']);
    expect(rows).toBe(7);
    expect(rejectedRows).toBe(6);
    expect(rejected.map((r) => [r.line, r.reason])).toEqual([
      [3, 'label is empty'],
      [4, 'field start is not a finite number'],
      [5, 'end is before start'],
      [6, 'wrong number of fields'],
      [7, 'field end is not a finite number'],
      [8, 'unterminated quoted field'],
    ]);
    expect(rejected[3].text).toBe('z,1,2,a,b');
  });

  it('parseTags(text) throws JOSTLE_E_HEADER without label or start, JOSTLE_E_EMPTY without a header', () => {
    // CONTRACTS.md §2 tags header; codes per STYLE.md §9.
    expect(() => parseTags('name,start\n')).toThrow(expect.objectContaining({ code: 'JOSTLE_E_HEADER' }));
    expect(() => parseTags('label,end\n')).toThrow(expect.objectContaining({ code: 'JOSTLE_E_HEADER' }));
    expect(() => parseTags('')).toThrow(expect.objectContaining({ code: 'JOSTLE_E_EMPTY', message: 'file is empty' }));
    expect(() => parseTags('# only\n\n')).toThrow(expect.objectContaining({ code: 'JOSTLE_E_EMPTY' }));
  });

  it('parseTags(formatTagsCsv(tags)) gives the tags back for any labels and notes', () => {
    // RFC 4180 §2 quoting must round-trip; String(number) is exact (ECMA-262 Number::toString).
    const text = fc.string({ unit: fc.constantFrom('a', 'B', ' ', ',', '"', '\n', '\r\n', '#', 'é', '\t', '1'), maxLength: 12 });
    const tag = fc.record({
      label: text.filter((s) => s.trim().length > 0),
      start: fc.double({ noNaN: true, noDefaultInfinity: true, min: -1e6, max: 1e6 }),
      length: fc.option(fc.double({ noNaN: true, min: 0, max: 1e6 }), { nil: null }),
      note: text,
    }).map((r): Tag => ({ label: r.label, start: r.start, end: r.length === null ? null : r.start + r.length, note: r.note }))
      .filter((t) => t.end === null || t.end >= t.start);
    fc.assert(
      fc.property(fc.array(tag, { maxLength: 6 }), (tags) => {
        const back = parseTags(formatTagsCsv(tags));
        expect(back.rejectedRows).toBe(0);
        // -0 is written as "0" (ECMA-262 Number::toString(-0) is "0"), so compare with ==.
        expect(back.tags.map((t) => ({ ...t, start: t.start + 0 }))).toEqual(tags.map((t) => ({ ...t, start: t.start + 0 })));
      }),
      { numRuns: 2000, seed: 31 },
    );
  });
});

describe('quoteCsvField', () => {
  it('quoteCsvField(text) quotes by RFC 4180 §2 and only when needed', () => {
    // RFC 4180 §2 rules 6–7: fields with commas, quotes or line breaks are quoted, quotes doubled.
    expect(quoteCsvField('plain note')).toBe('plain note');
    expect(quoteCsvField('a,b')).toBe('"a,b"');
    expect(quoteCsvField('say "hi"')).toBe('"say ""hi"""');
    expect(quoteCsvField('two\nlines')).toBe('"two\nlines"');
    expect(quoteCsvField('#first')).toBe('"#first"');
    expect(quoteCsvField(' padded')).toBe('" padded"');
  });

  it('formatTagsCsv(tags) writes the CONTRACTS §2 header and an empty end for a point mark', () => {
    // CONTRACTS.md §2: label,start,end,note; empty end is a point mark.
    expect(formatTagsCsv([{ label: 'bump', start: 31.2, end: null, note: 'door, slammed' }, { label: 'run', start: 0, end: 1e-7, note: '' }]))
      .toBe('label,start,end,note\nbump,31.2,,"door, slammed"\nrun,0,1e-7,\n');
  });
});

describe('parseTemperatureLog', () => {
  it('parseTemperatureLog(text) reads t,celsius in any order and case', () => {
    // CONTRACTS.md §2: temperature log t,celsius.
    const { readings, rows, rejectedRows } = parseTemperatureLog('Celsius,T\r\n21.8,0\r\n21.9,60\r\n21.9,60\r\n');
    expect(readings).toEqual([{ t: 0, celsius: 21.8 }, { t: 60, celsius: 21.9 }, { t: 60, celsius: 21.9 }]);
    expect([rows, rejectedRows]).toEqual([3, 0]);
  });

  it('parseTemperatureLog(text) rejects bad rows, time going backwards and sub-absolute-zero values', () => {
    // CONTRACTS.md §2 rejection policy; absolute zero −273.15 °C (SI Brochure, 9th ed., §2.3.1: T/°C = T/K − 273.15).
    const text = 't,celsius\n0,21\n10,\n20,warm\n30,21\n5,21\n40,-300\n50,-273.15\n60,21,extra\n70,22\n';
    const { readings, rejected, rejectedRows } = parseTemperatureLog(text);
    expect(readings).toEqual([{ t: 0, celsius: 21 }, { t: 30, celsius: 21 }, { t: 50, celsius: -273.15 }, { t: 70, celsius: 22 }]);
    expect(rejectedRows).toBe(5);
    expect(rejected.map((r) => [r.line, r.reason])).toEqual([
      [3, 'field celsius is empty'],
      [4, 'field celsius is not a finite number'],
      [6, 'time goes backwards'],
      [7, 'celsius below absolute zero'],
      [9, 'wrong number of fields'],
    ]);
  });

  it('parseTemperatureLog(text) throws JOSTLE_E_HEADER without t or celsius', () => {
    // CONTRACTS.md §2 header t,celsius; codes per STYLE.md §9.
    expect(() => parseTemperatureLog('time,celsius\n0,1\n')).toThrow(expect.objectContaining({ code: 'JOSTLE_E_HEADER', message: 'header lacks a t or celsius column' }));
  });
});

describe('readTags / readTemperatureLog (files)', () => {
  let folder = '';
  beforeAll(async () => {
    folder = await mkdtemp(join(tmpdir(), 'jostle-tags-'));
  });
  afterAll(async () => {
    await rm(folder, { recursive: true, force: true });
  });

  it('readTags(path) and readTemperatureLog(path) read files and name the path on errors', async () => {
    // CONTRACTS.md §1 --tags / --temperature-log; codes per STYLE.md §9.
    const tagsPath = join(folder, 'tags.csv');
    await writeFile(tagsPath, 'label,start,end,note\nsettle,0,12.5,\n');
    expect((await readTags(tagsPath)).tags).toEqual([{ label: 'settle', start: 0, end: 12.5, note: '' }]);
    const logPath = join(folder, 'log.csv');
    await writeFile(logPath, 't,celsius\n0,24.5\n');
    expect((await readTemperatureLog(logPath)).readings).toEqual([{ t: 0, celsius: 24.5 }]);
    const badPath = join(folder, 'bad.csv');
    await writeFile(badPath, 'when,where\n');
    await expect(readTags(badPath)).rejects.toMatchObject({ code: 'JOSTLE_E_HEADER', path: badPath });
    await expect(readTemperatureLog(join(folder, 'none.csv'))).rejects.toMatchObject({ code: 'JOSTLE_E_FILE', message: 'file not found' });
    await expect(readTags(folder)).rejects.toBeInstanceOf(IoError);
  });
});
