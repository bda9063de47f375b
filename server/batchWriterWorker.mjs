// The recording's batch writer thread (see batchWriter.ts, which starts it): its own SQLite
// connection to the recording, one transaction per batch of frame and reading rows, in the order
// the batches were posted. Plain JavaScript, so that it loads the same under tsx, Vitest and
// plain Node (a worker thread gets no TypeScript loader of its own).
//
// Protocol (all from the main thread, in order): { type: 'packed', … } (a batch, see packBatch in
// batchSql.mjs), { type: 'limit',
// extraPages }, { type: 'close' }. After each message the shared counter `done[0]` is raised
// and notified; a storage failure, or any other error, is posted on `port` as
// { type: 'failure', code, message }, after which batches are dropped (the main thread stops the
// recording). better-sqlite3 connections may be used from worker threads.
import { parentPort, workerData } from 'node:worker_threads';
import Database from 'better-sqlite3';
import { batchStatements, STORAGE_FAILURE, unpackBatch, writeBatchRows } from './batchSql.mjs';

const { path, done, port } = workerData;
const counter = new Int32Array(done);
let failed = false;
let db;
let statements;

function fail(error) {
  const code = typeof error?.code === 'string' && STORAGE_FAILURE.test(error.code) ? error.code : 'WRITER_ERROR';
  failed = true;
  port.postMessage({ type: 'failure', code, message: String(error?.message ?? error) });
}

try {
  db = new Database(path, { fileMustExist: true });
  db.pragma('journal_mode = WAL');
  db.pragma('synchronous = NORMAL');
  statements = batchStatements(db);
} catch (error) {
  fail(error);
}

parentPort.on('message', (message) => {
  try {
    if (message.type === 'close') {
      if (db?.open) db.close();
      failed = true;
    } else if (!failed && message.type === 'packed') {
      writeBatchRows(db, statements, unpackBatch(message));
    } else if (!failed && message.type === 'limit') {
      const pages = Number(db.pragma('page_count', { simple: true }));
      db.pragma(`max_page_count = ${pages + message.extraPages}`);
    }
  } catch (error) {
    fail(error);
  } finally {
    Atomics.add(counter, 0, 1);
    Atomics.notify(counter, 0);
  }
});
