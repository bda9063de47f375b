import type Database from 'better-sqlite3';
import type { RecordRow } from './recorder.js';

/** SQLite result codes that mean the storage itself failed. */
export const STORAGE_FAILURE: RegExp;

export interface BatchStatements {
  frame: Database.Statement;
  runFrames: Database.Statement;
  temperature: Database.Statement;
}

/** Prepares the batch statements on a connection to the recording. */
export function batchStatements(db: Database.Database): BatchStatements;

/** Writes one batch of frame and reading rows in a single transaction (see batchSql.mjs). */
export function writeBatchRows(db: Database.Database, statements: BatchStatements, rows: readonly RecordRow[]): void;

/** A packed batch for the writer thread, and the buffers to move with it (see batchSql.mjs). */
export interface PackedBatch {
  message: { type: 'packed'; runs: string[]; meta: Float64Array; buffers: ArrayBuffer[]; readings: RecordRow[] };
  transfer: ArrayBuffer[];
}

/** Packs rows into one message; the rows' BLOB buffers are moved with it. */
export function packBatch(rows: readonly RecordRow[]): PackedBatch;

/** The rows of a packed batch: frame rows in order, then the readings. */
export function unpackBatch(message: PackedBatch['message']): RecordRow[];
