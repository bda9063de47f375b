// The SQL of one recording batch, shared by the recorder (event-loop writes) and its writer
// thread (batchWriterWorker.mjs). Plain JavaScript so that the worker thread can load it without
// a TypeScript loader; the types are in batchSql.d.mts.

/** SQLite result codes that mean the storage itself failed (sqlite.org/rescode.html). */
export const STORAGE_FAILURE = /^SQLITE_(FULL|READONLY|IOERR|CANTOPEN|CORRUPT|NOTADB|PERM)/;

/** Prepares the batch statements on a better-sqlite3 connection to the recording. */
export function batchStatements(db) {
  return {
    frame: db.prepare('INSERT OR IGNORE INTO frames (run, idx, t, count, x, y, z, id, intensity) VALUES (?, ?, ?, ?, ?, ?, ?, ?, ?)'),
    runFrames: db.prepare('UPDATE runs SET frames = frames + ?, bytes = bytes + ?, last_index = max(coalesce(last_index, -1), ?) WHERE id = ?'),
    temperature: db.prepare('INSERT INTO temperatures (run, t, celsius) VALUES (?, ?, ?)'),
  };
}

// A structured-cloned Buffer arrives as a Uint8Array; better-sqlite3 binds Buffers (a view, no copy).
const bytes = (value) => (value ? (Buffer.isBuffer(value) ? value : Buffer.from(value.buffer, value.byteOffset, value.byteLength)) : null);

/**
 * Writes one batch of frame and reading rows in a single transaction: frames already recorded
 * (same run and index) are ignored, and each run's frame count, bytes and last index are raised
 * by what was written.
 */
export function writeBatchRows(db, statements, rows) {
  db.transaction(() => {
    const perRun = new Map();
    for (const row of rows) {
      if (row.kind === 'temperature') {
        statements.temperature.run(row.run, row.t, row.celsius);
        continue;
      }
      const written = statements.frame.run(row.run, row.index, row.t, row.count, bytes(row.x), bytes(row.y), bytes(row.z), bytes(row.id), bytes(row.intensity)).changes;
      const entry = perRun.get(row.run) ?? { frames: 0, bytes: 0, last: -1 };
      entry.frames += written;
      entry.bytes += written * row.bytes;
      entry.last = Math.max(entry.last, row.index);
      perRun.set(row.run, entry);
    }
    for (const [run, entry] of perRun) statements.runFrames.run(entry.frames, entry.bytes, entry.last, run);
  })();
}
