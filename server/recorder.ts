import Database from 'better-sqlite3';
import { mkdirSync } from 'node:fs';
import { join } from 'node:path';
import type { AlertLevel } from '../src/alerts/condition.js';
import type { Frame } from '../src/frame.js';
import type { Alert } from '../src/report.js';
import type { Tag } from '../src/tag.js';
import { batchStatements, STORAGE_FAILURE, writeBatchRows, type BatchStatements } from './batchSql.mjs';
import { BatchWriter } from './batchWriter.js';
import type { RunListEntry } from './protocol.js';

/** One frame packed for the database: columns as little-endian BLOBs (copies, safe to keep). */
export interface FrameRow {
  kind: 'frame';
  run: string;
  index: number;
  t: number;
  count: number;
  x: Buffer;
  y: Buffer;
  z: Buffer | null;
  id: Buffer | null;
  intensity: Buffer | null;
  /** Bytes of the BLOBs (what counts against the quota). */
  bytes: number;
  /**
   * The one buffer the BLOBs view, in the order x, y, z, id, intensity (those present), `bytes`
   * long: handed to the writer thread without a copy (`BatchWriter.post`), after which the row's
   * BLOBs are no longer readable here.
   */
  packed: ArrayBuffer;
}

/** One temperature reading to record. */
export interface TemperatureRow {
  kind: 'temperature';
  run: string;
  t: number;
  celsius: number;
}

/** What a recording batch holds. */
export type RecordRow = FrameRow | TemperatureRow;

/** The stored metadata of a run. */
export interface RunRecord {
  id: string;
  label: string;
  /** The checked `run` message, as JSON text. */
  settings: string;
  state: 'live' | 'ended';
  started: string;
  frames: number;
  bytes: number;
  lastIndex: number | null;
  worst: AlertLevel | null;
  /** True when the server stopped without the run being ended (a hard kill). */
  interrupted: boolean;
  /** The final report (JSON text) stored at `end`, or null. */
  finalReport: string | null;
}

const SCHEMA = `
CREATE TABLE IF NOT EXISTS runs (
  id TEXT PRIMARY KEY, label TEXT NOT NULL, settings TEXT NOT NULL, state TEXT NOT NULL,
  started TEXT NOT NULL, ended TEXT, frames INTEGER NOT NULL DEFAULT 0, bytes INTEGER NOT NULL DEFAULT 0,
  last_index INTEGER, worst TEXT, interrupted INTEGER NOT NULL DEFAULT 0, final_report TEXT);
CREATE TABLE IF NOT EXISTS frames (
  run TEXT NOT NULL, idx INTEGER NOT NULL, t REAL NOT NULL, count INTEGER NOT NULL,
  x BLOB NOT NULL, y BLOB NOT NULL, z BLOB, id BLOB, intensity BLOB, PRIMARY KEY (run, idx)) WITHOUT ROWID;
CREATE TABLE IF NOT EXISTS temperatures (run TEXT NOT NULL, t REAL NOT NULL, celsius REAL NOT NULL);
CREATE INDEX IF NOT EXISTS temperatures_run ON temperatures (run, t);
CREATE TABLE IF NOT EXISTS tags (run TEXT NOT NULL, label TEXT NOT NULL, start REAL NOT NULL, end REAL, note TEXT NOT NULL);
CREATE INDEX IF NOT EXISTS tags_run ON tags (run);
CREATE TABLE IF NOT EXISTS alerts (run TEXT NOT NULL, id TEXT NOT NULL, kind TEXT NOT NULL, level TEXT NOT NULL,
  start REAL NOT NULL, end REAL, message TEXT NOT NULL, detail TEXT NOT NULL, PRIMARY KEY (run, id));
CREATE TABLE IF NOT EXISTS summaries (run TEXT NOT NULL, at TEXT NOT NULL, t REAL, frames INTEGER NOT NULL,
  diffusion REAL, low REAL, high REAL, worst TEXT);
`;

/**
 * Copies the first `count` values into `packed` at byte `offset` and returns a Buffer viewing the
 * copy: the row stays valid when the connection reuses its frame buffers for the next message.
 */
function blob(values: Float64Array | Uint32Array, count: number, packed: ArrayBuffer, offset: number): Buffer {
  const length = count * values.BYTES_PER_ELEMENT;
  new Uint8Array(packed, offset, length).set(new Uint8Array(values.buffer, values.byteOffset, length));
  return Buffer.from(packed, offset, length);
}

function floats(data: Buffer, count: number): Float64Array {
  const out = new Float64Array(count);
  new Uint8Array(out.buffer).set(data.subarray(0, count * 8));
  return out;
}

/**
 * The recording: one SQLite database (`<data>/jostle.sqlite`, WAL, synchronous NORMAL) holding
 * every run's metadata, frames (one row per frame, each column a packed little-endian BLOB:
 * float64 for x, y, z, intensity and uint32 for id), temperature log, tags, alerts and periodic
 * summaries. Frames and readings are written in batches, one transaction per batch (on a worker
 * thread, batchWriter.ts, unless `writerThread` is false); with WAL a committed batch survives a
 * killed process. Every other read and write first waits for the batches already posted.
 *
 * @example
 * const recorder = new Recorder('./jostle-data');
 * recorder.listRuns() // → [{ id: 'bench-a.0412', label: '', state: 'ended', ... }]
 */
export class Recorder {
  private readonly db: Database.Database;
  private readonly statements;
  /**
   * Why writing stopped (a full disk, a database that became unwritable), or undefined while the
   * recording works. Once set, every write is a no-op; reads still give what was committed.
   */
  failure: { code: string; message: string } | undefined;
  private readonly failureListeners: ((failure: { code: string; message: string }) => void)[] = [];
  /** The thread that writes frame batches (none when read-only or asked for none). */
  private readonly writer: BatchWriter | undefined;
  /** The batch statements, prepared when batches are written on this thread. */
  private batch: BatchStatements | undefined;

  /**
   * `writerThread` (default true): frame batches are written on a worker thread with its own
   * connection (batchWriter.ts); false writes them on the caller's thread.
   */
  constructor(folder: string, options: { readonly?: boolean; writerThread?: boolean } = {}) {
    if (!options.readonly) mkdirSync(folder, { recursive: true });
    const file = join(folder, 'jostle.sqlite');
    this.db = new Database(file, { readonly: options.readonly === true, fileMustExist: options.readonly === true });
    if (!options.readonly) {
      // 16 KiB pages for a new database (an existing one keeps its own): a frame row is one to
      // a few hundred KiB of BLOBs, and fewer, larger overflow pages make a batch cheaper to write
      // where it matters: 1.6× cheaper per 1,000-particle frame and 1.5× at 10,000, 0.87× at 400
      // (a few µs dearer), 1.3× at 40 (tools/bench/recordingPages.ts; figures in its README).
      this.db.pragma('page_size = 16384');
      this.db.pragma('journal_mode = WAL');
      this.db.pragma('synchronous = NORMAL');
      this.db.exec(SCHEMA);
      if (options.writerThread !== false) this.writer = new BatchWriter(file, (failure) => this.stopWriting(failure));
    }
    const db = this.db;
    this.statements = {
      run: db.prepare('SELECT * FROM runs WHERE id = ?'),
      list: db.prepare('SELECT id, label, state, started, frames, worst FROM runs ORDER BY started, id'),
      insertRun: options.readonly ? undefined : db.prepare(
        'INSERT INTO runs (id, label, settings, state, started) VALUES (?, ?, ?, \'live\', ?) ON CONFLICT(id) DO UPDATE SET state = \'live\', interrupted = 0, final_report = NULL, label = excluded.label, settings = excluded.settings',
      ),
      tag: options.readonly ? undefined : db.prepare('INSERT INTO tags (run, label, start, end, note) VALUES (?, ?, ?, ?, ?)'),
      alert: options.readonly ? undefined : db.prepare(
        'INSERT INTO alerts (run, id, kind, level, start, end, message, detail) VALUES (?, ?, ?, ?, ?, ?, ?, ?) ON CONFLICT(run, id) DO UPDATE SET level = excluded.level, end = excluded.end, message = excluded.message, detail = excluded.detail',
      ),
      worst: options.readonly ? undefined : db.prepare('UPDATE runs SET worst = ? WHERE id = ?'),
      summary: options.readonly ? undefined : db.prepare('INSERT INTO summaries (run, at, t, frames, diffusion, low, high, worst) VALUES (?, ?, ?, ?, ?, ?, ?, ?)'),
      end: options.readonly ? undefined : db.prepare('UPDATE runs SET state = \'ended\', ended = ?, final_report = ? WHERE id = ?'),
      interrupt: options.readonly ? undefined : db.prepare('UPDATE runs SET state = \'ended\', interrupted = 1 WHERE state = \'live\''),
      framePage: db.prepare('SELECT idx, t, count, x, y, z, id, intensity FROM frames WHERE run = ? AND idx > ? ORDER BY idx LIMIT ?'),
      temperatures: db.prepare('SELECT t, celsius FROM temperatures WHERE run = ? ORDER BY t, rowid'),
      tags: db.prepare('SELECT label, start, end, note FROM tags WHERE run = ? ORDER BY rowid'),
      alerts: db.prepare('SELECT id, kind, level, start, end, message, detail FROM alerts WHERE run = ? ORDER BY rowid'),
    };
  }

  /**
   * Calls `listener` once when writing stops for good (see {@link Recorder.failure}).
   * @example
   * recorder.onFailure((f) => log(`recording stopped: ${f.code}`));
   */
  onFailure(listener: (failure: { code: string; message: string }) => void): void {
    this.failureListeners.push(listener);
  }

  /**
   * For fault tests: caps the database at its current size plus `extraPages` pages
   * (SQLite `max_page_count`), so that the next writes fail with `SQLITE_FULL` as on a full disk.
   * @example
   * recorder.limitPages(0); // the next batch that needs a new page fails: recording stops
   */
  limitPages(extraPages: number): void {
    if (!(Number.isInteger(extraPages) && extraPages >= 0)) throw new RangeError('Recorder.limitPages requires an integer extraPages >= 0');
    this.writer?.drain();
    const pages = Number(this.db.pragma('page_count', { simple: true }));
    this.db.pragma(`max_page_count = ${pages + extraPages}`);
    this.writer?.limitPages(extraPages);
  }

  /**
   * Runs one write; a storage failure (disk full, read-only, I/O error, corrupt or vanished
   * file) stops the recording instead of throwing: the live run goes on in memory. Any other
   * error (a bug) is thrown as before.
   */
  private write(action: () => unknown): void {
    this.writer?.drain();
    if (this.failure) return;
    try {
      action();
    } catch (error) {
      const code = (error as { code?: unknown }).code;
      if (typeof code !== 'string' || !STORAGE_FAILURE.test(code)) throw error;
      this.stopWriting({ code, message: (error as Error).message });
    }
  }

  /** Writing stops for good (from this thread's writes or the writer thread's). */
  private stopWriting(failure: { code: string; message: string }): void {
    if (this.failure) return;
    this.failure = failure;
    for (const listener of this.failureListeners) listener(failure);
  }

  /** Waits for the frame batches already posted (so that reads see them). */
  private settle(): void {
    this.writer?.drain();
  }

  /** Marks runs left live by a previous process as ended and interrupted; returns their number. */
  markInterrupted(): number {
    this.settle();
    return this.statements.interrupt!.run().changes;
  }

  /** The stored metadata of a run, or undefined. */
  run(id: string): RunRecord | undefined {
    this.settle();
    const row = this.statements.run.get(id) as Record<string, unknown> | undefined;
    if (!row) return undefined;
    return {
      id: row.id as string,
      label: row.label as string,
      settings: row.settings as string,
      state: row.state as 'live' | 'ended',
      started: row.started as string,
      frames: row.frames as number,
      bytes: row.bytes as number,
      lastIndex: (row.last_index as number | null) ?? null,
      worst: (row.worst as AlertLevel | null) ?? null,
      interrupted: row.interrupted === 1,
      finalReport: (row.final_report as string | null) ?? null,
    };
  }

  /** Every recorded run, oldest first (the rows of `GET /api/runs`). */
  listRuns(): RunListEntry[] {
    this.settle();
    return this.statements.list.all() as RunListEntry[];
  }

  /** Creates a run, or reopens a recorded one (state live again). */
  openRun(id: string, label: string, settings: string, started: string): void {
    this.write(() => this.statements.insertRun!.run(id, label, settings, started));
  }

  /** Ends a run, keeping its final report (JSON text). */
  endRun(id: string, finalReport: string, ended: string): void {
    this.write(() => this.statements.end!.run(ended, finalReport, id));
  }

  /** Packs a frame into a row (copies its arrays). O(count). */
  frameRow(run: string, frame: Frame): FrameRow {
    const n = frame.count;
    // one buffer for the row's BLOBs, in the order x, y, z, id, intensity
    const bytes = n * (16 + (frame.z ? 8 : 0) + (frame.id ? 4 : 0) + (frame.intensity ? 8 : 0));
    const packed = new ArrayBuffer(bytes);
    let at = 0;
    const next = (values: Float64Array | Uint32Array): Buffer => {
      const view = blob(values, n, packed, at);
      at += view.length;
      return view;
    };
    const x = next(frame.x);
    const y = next(frame.y);
    const z = frame.z ? next(frame.z) : null;
    const id = frame.id ? next(frame.id) : null;
    const intensity = frame.intensity ? next(frame.intensity) : null;
    return { kind: 'frame', run, index: frame.index, t: frame.t, count: n, x, y, z, id, intensity, bytes, packed };
  }

  /**
   * Writes one batch of frames and readings in a single transaction: posted to the writer thread
   * (which reports a storage failure, or any other error, as a failure that stops the recording),
   * or written here.
   */
  writeBatch(rows: readonly RecordRow[]): void {
    if (rows.length === 0) return;
    if (this.writer) {
      if (!this.failure) this.writer.post(rows);
      return;
    }
    this.batch ??= batchStatements(this.db);
    const statements = this.batch;
    this.write(() => writeBatchRows(this.db, statements, rows));
  }

  /** Records a tag. */
  writeTag(run: string, tag: Tag): void {
    this.write(() => this.statements.tag!.run(run, tag.label, tag.start, tag.end, tag.note));
  }

  /** Records an alert (insert, or update its level and end). */
  writeAlert(run: string, alert: Alert, worst: AlertLevel | null): void {
    this.write(() => {
      this.statements.alert!.run(run, alert.id, alert.kind, alert.level, alert.start, alert.end, alert.message, JSON.stringify(alert.detail));
      this.statements.worst!.run(worst, run);
    });
  }

  /** Records a periodic summary row. */
  writeSummary(run: string, at: string, t: number | null, frames: number, diffusion: { value: number; ci95: [number, number] } | null, worst: AlertLevel | null): void {
    this.write(() => this.statements.summary!.run(run, at, t, frames, diffusion?.value ?? null, diffusion?.ci95[0] ?? null, diffusion?.ci95[1] ?? null, worst));
  }

  /**
   * The recorded frames of a run in index order, as fresh Frames (µm, s). Lazy, read in pages of
   * `pageRows` with no statement left open between pages, so the recording can go on writing
   * while an export is paused on a slow client.
   */
  *frames(run: string, pageRows = 512): Generator<Frame> {
    let after = -1;
    for (;;) {
      this.settle();
      const rows = this.statements.framePage.all(run, after, pageRows) as Record<string, unknown>[];
      for (const row of rows) {
        const count = row.count as number;
        const frame: Frame = { index: row.idx as number, t: row.t as number, count, x: floats(row.x as Buffer, count), y: floats(row.y as Buffer, count) };
        if (row.z) frame.z = floats(row.z as Buffer, count);
        if (row.intensity) frame.intensity = floats(row.intensity as Buffer, count);
        if (row.id) {
          const id = new Uint32Array(count);
          new Uint8Array(id.buffer).set((row.id as Buffer).subarray(0, count * 4));
          frame.id = id;
        }
        after = frame.index;
        yield frame;
      }
      if (rows.length < pageRows) return;
    }
  }

  /** The recorded temperature log of a run, in time order. */
  temperatures(run: string): { t: number; celsius: number }[] {
    this.settle();
    return this.statements.temperatures.all(run) as { t: number; celsius: number }[];
  }

  /** The recorded tags of a run, in arrival order. */
  tags(run: string): Tag[] {
    this.settle();
    return this.statements.tags.all(run) as Tag[];
  }

  /** The recorded alerts of a run. */
  alerts(run: string): Alert[] {
    this.settle();
    return (this.statements.alerts.all(run) as (Omit<Alert, 'detail'> & { detail: string })[]).map((a) => ({ ...a, detail: JSON.parse(a.detail) as Record<string, unknown> }));
  }

  /** Closes the database (pending WAL content is checkpointed by SQLite). */
  close(): void {
    this.writer?.close();
    this.db.close();
  }
}
