import type { Frame } from '../../src/frame.js';
import { IoError } from './ioError.js';
import { decimalEnd, parseDecimal, parseDecimalPrefix } from './parseDecimal.js';

/** The centroid columns jostle knows (CONTRACTS §2); any other column is ignored. */
export type CentroidColumn = 'x' | 'y' | 'z' | 't' | 'frame' | 'id' | 'intensity';

/** One rejected row, quoted for the report. */
export interface RejectedRow {
  /** 1-based line number in the file (comment and blank lines count). */
  line: number;
  /** Fixed phrase saying why, e.g. `field x is not a number`. */
  reason: string;
  /** The line as written, cut to 120 characters. */
  text: string;
}

/** What a centroid file gave, besides the frames themselves. */
export interface CentroidReadSummary {
  /** Data rows read: every line after the header that is neither blank nor a comment. */
  rows: number;
  /** Rows used (rows − rejectedRows). */
  acceptedRows: number;
  /** Rows rejected (any reason, backwards time included). */
  rejectedRows: number;
  /** The first `maxQuotedRejections` rejected rows, in file order. */
  rejected: RejectedRow[];
  /** Frames emitted (distinct frames with at least one accepted row). */
  frames: number;
  /** Known columns present, in file order. */
  columns: CentroidColumn[];
  /** Header names that are not known columns (ignored), lower-cased, in file order. */
  ignoredColumns: string[];
  /** Where the frame time came from: the `t` column, or `frame × frameInterval`. */
  timeSource: 't' | 'frame';
  /** Rows rejected because time went backwards: the first `maxListedBackwards`, with their time, s. */
  backwards: { line: number; t: number }[];
  /** Number of rows rejected because time went backwards (may exceed `backwards.length`). */
  backwardsRows: number;
  /** 1-based line number of the header. */
  headerLine: number;
  /** Lines in the file (a last line without a newline counts). */
  lines: number;
  /** Bytes read. */
  bytes: number;
}

/** Options of the centroid reader; every limit has a documented default. */
export interface CentroidParseOptions {
  /** Size of one position unit, µm (default 1: positions already in µm). Must be > 0. */
  pixelSize?: number;
  /** Frame interval, s: required when the file has `frame` but no `t`. Must be > 0. */
  frameInterval?: number;
  /** How many rejected rows to quote in the summary (default 20). */
  maxQuotedRejections?: number;
  /** How many backwards-time rows to list (default 1000; all are counted). */
  maxListedBackwards?: number;
  /** Longest line accepted, bytes, CR excluded (default 65 536; at least 256). Bounds memory. */
  maxLineBytes?: number;
  /**
   * Emit frames as views into buffers the parser reuses (default false: each frame owns
   * fresh arrays of exactly `count` entries, so a consumer may keep it).
   */
  reuseBuffers?: boolean;
}

// Column roles, as small integers for the per-row loop.
const NONE = 0;
const X = 1;
const Y = 2;
const Z = 3;
const T = 4;
const FRAME = 5;
const ID = 6;
const INTENSITY = 7;
const ROLE_OF: Record<string, number> = { x: X, y: Y, z: Z, t: T, frame: FRAME, id: ID, intensity: INTENSITY };
const NAME_OF = ['', 'x', 'y', 'z', 't', 'frame', 'id', 'intensity'];
// Reason phrases prebuilt per role, so that rejecting a row allocates nothing unless quoted.
const EMPTY_REASON = NAME_OF.map((name) => `field ${name} is empty`);
const NAN_REASON = NAME_OF.map((name) => `field ${name} is not a number`);
const INFINITE_REASON = NAME_OF.map((name) => `field ${name} is not finite`);
const REASON_FIELDS = 'wrong number of fields';
const REASON_ID = 'id is not an integer in 0..4294967295';
const REASON_FRAME = 'frame is not a non-negative integer';
const REASON_BACKWARDS = 'time goes backwards';
const REASON_TOO_LONG = 'line too long';

const LF = 10;
const CR = 13;
const SPACE = 32;
const TAB = 9;
const COMMA = 44;
const QUOTE = 34;
const HASH = 35;
const QUOTE_CHARS = 120;
const MAX_ID = 0xffffffff;
const INITIAL_CAPACITY = 256;

/**
 * Streaming, byte-level reader of the centroid CSV of CONTRACTS §2. Push chunks as they come
 * (a line may straddle any number of chunks), then call `finish()`. Each frame is handed to
 * `onFrame` when the next frame starts and at the end, with positions × pixelSize in µm.
 *
 * Rows are parsed straight from the chunk bytes (see `parseDecimal`); only a line that straddles
 * chunks is copied, into one carry buffer of at most `maxLineBytes + 1` bytes. Memory is
 * bounded by the longest line and the largest frame, whatever the file size.
 *
 * Bad rows are rejected and counted, never thrown (STYLE §7); a file that cannot be read at all
 * (no header, header without x/y or without t/frame, frame-only without a frame interval)
 * throws an `IoError` with a code. Bad options throw `RangeError` at construction.
 *
 * Complexity: O(bytes) time; O(maxLineBytes + largest frame) memory.
 *
 * @example
 * const frames: Frame[] = [];
 * const parser = new CentroidCsvParser({ pixelSize: 0.1 }, (f) => frames.push(f));
 * parser.push(Buffer.from('t,x,y\n0,10,20\n0,11,21\n0.05,12,'));
 * parser.push(Buffer.from('22\n'));
 * parser.finish().frames;   // → 2
 * frames[0].x;              // → Float64Array [1, 1.1]
 */
export class CentroidCsvParser {
  private readonly onFrame: (frame: Frame) => void;
  private readonly pixelSize: number;
  private readonly frameInterval: number | undefined;
  private readonly maxQuoted: number;
  private readonly maxBackwards: number;
  private readonly maxLineBytes: number;
  private readonly reuseBuffers: boolean;
  private readonly decoder: TextDecoder;

  // Header state.
  private haveHeader: boolean;
  private roles: Uint8Array;
  private fieldCount: number;
  private hasRole: Uint8Array;
  private timeSource: 't' | 'frame';
  private columns: CentroidColumn[];
  private ignoredColumns: string[];
  private headerLine: number;

  // One row's parsed values, indexed by role.
  private readonly values: Float64Array;

  // Carry buffer for a line that straddles chunks.
  private carry: Uint8Array;
  private carryLength: number;
  private carryOverflow: boolean;

  // The frame being filled.
  private haveFrame: boolean;
  private frameKey: number;
  private frameT: number;
  private frameIndex: number;
  private nextIndex: number;
  private count: number;
  private capacity: number;
  private bufX: Float64Array;
  private bufY: Float64Array;
  private bufZ: Float64Array;
  private bufIntensity: Float64Array;
  private bufId: Uint32Array;

  // Counters.
  private line: number;
  private rows: number;
  private rejectedRows: number;
  private rejected: RejectedRow[];
  private frames: number;
  private backwards: { line: number; t: number }[];
  private backwardsRows: number;
  private bytes: number;
  private finished: boolean;

  /**
   * @param options see `CentroidParseOptions`
   * @param onFrame called synchronously with each complete frame
   * @throws RangeError for a pixel size or frame interval that is not a positive finite number,
   *   or limits that are not non-negative integers
   */
  constructor(options: CentroidParseOptions, onFrame: (frame: Frame) => void) {
    const settings = {
      pixelSize: 1,
      maxQuotedRejections: 20,
      maxListedBackwards: 1000,
      maxLineBytes: 65_536,
      reuseBuffers: false,
      ...options,
    };
    const pixelSize = Number(settings.pixelSize);
    if (!(pixelSize > 0 && Number.isFinite(pixelSize))) throw new RangeError('readCentroids requires pixelSize > 0 (µm)');
    if (settings.frameInterval !== undefined) {
      const frameInterval = Number(settings.frameInterval);
      if (!(frameInterval > 0 && Number.isFinite(frameInterval))) {
        throw new RangeError('readCentroids requires frameInterval > 0 (s)');
      }
      this.frameInterval = frameInterval;
    } else this.frameInterval = undefined;
    for (const key of ['maxQuotedRejections', 'maxListedBackwards'] as const) {
      if (!(Number.isInteger(settings[key]) && settings[key] >= 0)) {
        throw new RangeError(`readCentroids requires ${key} to be a non-negative integer`);
      }
    }
    if (!(Number.isInteger(settings.maxLineBytes) && settings.maxLineBytes >= 256)) {
      throw new RangeError('readCentroids requires maxLineBytes to be an integer >= 256');
    }
    if (typeof onFrame !== 'function') throw new RangeError('readCentroids requires an onFrame function');
    this.onFrame = onFrame;
    this.pixelSize = pixelSize;
    this.maxQuoted = settings.maxQuotedRejections;
    this.maxBackwards = settings.maxListedBackwards;
    this.maxLineBytes = settings.maxLineBytes;
    this.reuseBuffers = Boolean(settings.reuseBuffers);
    this.decoder = new TextDecoder('utf-8');

    this.haveHeader = false;
    this.roles = new Uint8Array(0);
    this.fieldCount = 0;
    this.hasRole = new Uint8Array(8);
    this.timeSource = 't';
    this.columns = [];
    this.ignoredColumns = [];
    this.headerLine = 0;
    this.values = new Float64Array(8);

    this.carry = new Uint8Array(1024);
    this.carryLength = 0;
    this.carryOverflow = false;

    this.haveFrame = false;
    this.frameKey = 0;
    this.frameT = 0;
    this.frameIndex = 0;
    this.nextIndex = 0;
    this.count = 0;
    this.capacity = INITIAL_CAPACITY;
    this.bufX = new Float64Array(INITIAL_CAPACITY);
    this.bufY = new Float64Array(INITIAL_CAPACITY);
    this.bufZ = new Float64Array(0);
    this.bufIntensity = new Float64Array(0);
    this.bufId = new Uint32Array(0);

    this.line = 0;
    this.rows = 0;
    this.rejectedRows = 0;
    this.rejected = [];
    this.frames = 0;
    this.backwards = [];
    this.backwardsRows = 0;
    this.bytes = 0;
    this.finished = false;
  }

  /**
   * Feeds the next chunk of the file. Complete lines are parsed at once; a trailing partial
   * line is kept until its newline arrives.
   * @param chunk bytes of the file, in order (not kept after the call)
   * @throws IoError on a header that cannot be used
   */
  push(chunk: Uint8Array): void {
    if (this.finished) throw new Error('push called after finish');
    this.bytes += chunk.length;
    const n = chunk.length;
    let position = 0;
    while (position < n) {
      const newline = chunk.indexOf(LF, position);
      if (newline < 0) {
        this.stash(chunk, position, n);
        return;
      }
      this.line++;
      if (this.carryLength > 0 || this.carryOverflow) {
        this.stash(chunk, position, newline);
        this.finishCarry();
      } else {
        this.parseLine(chunk, position, newline);
      }
      position = newline + 1;
    }
  }

  /**
   * Ends the input: parses a last line without newline, emits the last frame and returns the
   * summary.
   * @throws IoError `JOSTLE_E_EMPTY` when no header was found
   */
  finish(): CentroidReadSummary {
    if (!this.finished) {
      if (this.carryLength > 0 || this.carryOverflow) {
        this.line++;
        this.finishCarry();
      }
      this.finished = true;
      if (!this.haveHeader) {
        throw new IoError('JOSTLE_E_EMPTY', this.bytes === 0 ? 'file is empty' : 'file holds no header line');
      }
      this.emitFrame();
    }
    return {
      rows: this.rows,
      acceptedRows: this.rows - this.rejectedRows,
      rejectedRows: this.rejectedRows,
      rejected: this.rejected,
      frames: this.frames,
      columns: this.columns,
      ignoredColumns: this.ignoredColumns,
      timeSource: this.timeSource,
      backwards: this.backwards,
      backwardsRows: this.backwardsRows,
      headerLine: this.headerLine,
      lines: this.line,
      bytes: this.bytes,
    };
  }

  /** Copies bytes of a straddling line into the carry buffer, up to maxLineBytes + 1 (room for a CR). */
  private stash(source: Uint8Array, start: number, end: number): void {
    if (this.carryOverflow) return;
    const limit = this.maxLineBytes + 1;
    let length = end - start;
    if (this.carryLength + length > limit) {
      this.carryOverflow = true;
      length = limit - this.carryLength;
    }
    const needed = this.carryLength + length;
    if (needed > this.carry.length) {
      const grown = new Uint8Array(Math.min(limit, Math.max(needed, this.carry.length * 2)));
      grown.set(this.carry.subarray(0, this.carryLength));
      this.carry = grown;
    }
    this.carry.set(source.subarray(start, start + length), this.carryLength);
    this.carryLength = needed;
  }

  private finishCarry(): void {
    this.parseLine(this.carry, 0, this.carryLength, this.carryOverflow);
    this.carryLength = 0;
    this.carryOverflow = false;
  }

  private tooLong(bytes: Uint8Array, start: number, end: number): void {
    if (!this.haveHeader) {
      // A first non-blank line this long cannot be a header we understand.
      throw new IoError('JOSTLE_E_HEADER', 'header line too long', { line: this.line });
    }
    this.rows++;
    this.reject(REASON_TOO_LONG, bytes, start, end);
  }

  /**
   * Parses one complete line [start, end) (newline excluded) of number `this.line`.
   * `overflow` says the carry buffer held only the first maxLineBytes + 1 bytes of it.
   */
  private parseLine(bytes: Uint8Array, start: number, end: number, overflow = false): void {
    if (!overflow && end > start && bytes[end - 1] === CR) end--;
    // A UTF-8 byte order mark can only open the file.
    if (this.line === 1 && end - start >= 3 && bytes[start] === 0xef && bytes[start + 1] === 0xbb && bytes[start + 2] === 0xbf) {
      start += 3;
    }
    let first = start;
    while (first < end && (bytes[first] === SPACE || bytes[first] === TAB)) first++;
    if (first === end || bytes[first] === HASH) return; // blank line or comment
    if (overflow || end - start > this.maxLineBytes) {
      this.tooLong(bytes, start, end);
      return;
    }
    if (!this.haveHeader) {
      this.parseHeader(this.decoder.decode(bytes.subarray(start, end)));
      return;
    }
    this.rows++;
    const roles = this.roles;
    const fieldCount = this.fieldCount;
    const values = this.values;
    let field = 0;
    let position = start;
    for (;;) {
      const role = field < fieldCount ? roles[field] : NONE;
      let fieldEnd: number;
      if (role !== NONE) {
        // Fast path: a bare number at the field's start, ended by a comma or the line's end (no
        // separate scan for the comma); anything else takes the general path below.
        let value = parseDecimalPrefix(bytes, position, end);
        fieldEnd = decimalEnd;
        if (fieldEnd === position || (fieldEnd < end && bytes[fieldEnd] !== COMMA)) {
          fieldEnd = position;
          while (fieldEnd < end && bytes[fieldEnd] !== COMMA) fieldEnd++;
          // Trim blanks and one pair of surrounding quotes.
          let a = position;
          let b = fieldEnd;
          while (a < b && (bytes[a] === SPACE || bytes[a] === TAB)) a++;
          while (b > a && (bytes[b - 1] === SPACE || bytes[b - 1] === TAB)) b--;
          if (b - a >= 2 && bytes[a] === QUOTE && bytes[b - 1] === QUOTE) {
            a++;
            b--;
          }
          if (a === b) return this.reject(EMPTY_REASON[role], bytes, start, end);
          value = parseDecimal(bytes, a, b);
        }
        if (value !== value) return this.reject(NAN_REASON[role], bytes, start, end);
        if (value === Infinity || value === -Infinity) return this.reject(INFINITE_REASON[role], bytes, start, end);
        values[role] = value;
      } else {
        fieldEnd = position;
        while (fieldEnd < end && bytes[fieldEnd] !== COMMA) fieldEnd++;
      }
      field++;
      if (fieldEnd >= end) break;
      position = fieldEnd + 1;
    }
    if (field !== fieldCount) return this.reject(REASON_FIELDS, bytes, start, end);
    const hasRole = this.hasRole;
    if (hasRole[ID] === 1) {
      const id = values[ID];
      if (!(Number.isInteger(id) && id >= 0 && id <= MAX_ID)) return this.reject(REASON_ID, bytes, start, end);
    }
    let t: number;
    let key: number;
    if (hasRole[FRAME] === 1) {
      key = values[FRAME];
      if (!(Number.isSafeInteger(key) && key >= 0)) return this.reject(REASON_FRAME, bytes, start, end);
      // t wins when both exist; else t = frame × frame interval.
      t = hasRole[T] === 1 ? values[T] : key * (this.frameInterval as number);
    } else {
      t = values[T];
      key = t;
    }
    if (this.haveFrame && key !== this.frameKey) {
      if (key < this.frameKey || t < this.frameT) {
        this.backwardsRows++;
        if (this.backwards.length < this.maxBackwards) this.backwards.push({ line: this.line, t });
        return this.reject(REASON_BACKWARDS, bytes, start, end);
      }
      this.emitFrame();
    }
    if (!this.haveFrame) {
      this.haveFrame = true;
      this.frameKey = key;
      this.frameT = t;
      this.frameIndex = hasRole[FRAME] === 1 ? key : this.nextIndex;
      this.nextIndex++;
    }
    this.append();
  }

  private append(): void {
    if (this.count === this.capacity) this.grow();
    const k = this.count;
    const values = this.values;
    const hasRole = this.hasRole;
    this.bufX[k] = values[X] * this.pixelSize;
    this.bufY[k] = values[Y] * this.pixelSize;
    if (hasRole[Z] === 1) this.bufZ[k] = values[Z] * this.pixelSize;
    if (hasRole[INTENSITY] === 1) this.bufIntensity[k] = values[INTENSITY];
    if (hasRole[ID] === 1) this.bufId[k] = values[ID];
    this.count = k + 1;
  }

  private grow(): void {
    const capacity = this.capacity * 2;
    const grow64 = (old: Float64Array): Float64Array => {
      if (old.length === 0) return old;
      const next = new Float64Array(capacity);
      next.set(old);
      return next;
    };
    this.bufX = grow64(this.bufX);
    this.bufY = grow64(this.bufY);
    this.bufZ = grow64(this.bufZ);
    this.bufIntensity = grow64(this.bufIntensity);
    if (this.bufId.length > 0) {
      const next = new Uint32Array(capacity);
      next.set(this.bufId);
      this.bufId = next;
    }
    this.capacity = capacity;
  }

  private emitFrame(): void {
    if (!this.haveFrame) return;
    const n = this.count;
    const copy = !this.reuseBuffers;
    const frame: Frame = {
      index: this.frameIndex,
      t: this.frameT,
      count: n,
      x: copy ? this.bufX.slice(0, n) : this.bufX,
      y: copy ? this.bufY.slice(0, n) : this.bufY,
    };
    if (this.hasRole[Z] === 1) frame.z = copy ? this.bufZ.slice(0, n) : this.bufZ;
    if (this.hasRole[ID] === 1) frame.id = copy ? this.bufId.slice(0, n) : this.bufId;
    if (this.hasRole[INTENSITY] === 1) frame.intensity = copy ? this.bufIntensity.slice(0, n) : this.bufIntensity;
    this.haveFrame = false;
    this.count = 0;
    this.frames++;
    this.onFrame(frame);
  }

  private reject(reason: string, bytes: Uint8Array, start: number, end: number): void {
    this.rejectedRows++;
    if (this.rejected.length < this.maxQuoted) {
      let text = this.decoder.decode(bytes.subarray(start, Math.min(end, start + QUOTE_CHARS * 4)));
      if (text.length > QUOTE_CHARS) text = text.slice(0, QUOTE_CHARS);
      this.rejected.push({ line: this.line, reason, text });
    }
  }

  private parseHeader(text: string): void {
    const names = text.split(',').map((name) => {
      let trimmed = name.trim();
      if (trimmed.length >= 2 && trimmed.startsWith('"') && trimmed.endsWith('"')) trimmed = trimmed.slice(1, -1).trim();
      return trimmed.toLowerCase();
    });
    const roles = new Uint8Array(names.length);
    const hasRole = new Uint8Array(8);
    const columns: CentroidColumn[] = [];
    const ignored: string[] = [];
    names.forEach((name, k) => {
      const role = Object.hasOwn(ROLE_OF, name) ? ROLE_OF[name] : NONE;
      if (role === NONE) {
        ignored.push(name);
        return;
      }
      if (hasRole[role] === 1) throw new IoError('JOSTLE_E_HEADER', 'header names a column twice', { line: this.line });
      hasRole[role] = 1;
      roles[k] = role;
      columns.push(name as CentroidColumn);
    });
    if (hasRole[X] !== 1 || hasRole[Y] !== 1) {
      throw new IoError('JOSTLE_E_HEADER', 'header lacks an x or y column', { line: this.line });
    }
    if (hasRole[T] !== 1 && hasRole[FRAME] !== 1) {
      throw new IoError('JOSTLE_E_HEADER', 'header lacks a t or frame column', { line: this.line });
    }
    if (hasRole[T] !== 1 && this.frameInterval === undefined) {
      throw new IoError('JOSTLE_E_OPTION', 'frame interval required: the file has frame but no t column', { line: this.line });
    }
    this.roles = roles;
    this.fieldCount = names.length;
    this.hasRole = hasRole;
    this.columns = columns;
    this.ignoredColumns = ignored;
    this.timeSource = hasRole[T] === 1 ? 't' : 'frame';
    this.headerLine = this.line;
    this.haveHeader = true;
    if (hasRole[Z] === 1) this.bufZ = new Float64Array(this.capacity);
    if (hasRole[INTENSITY] === 1) this.bufIntensity = new Float64Array(this.capacity);
    if (hasRole[ID] === 1) this.bufId = new Uint32Array(this.capacity);
  }
}
