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
