// Recording cost per frame against SQLite's page size (not a test): writes batches of 100 frame
// rows (x, y as float64 BLOBs, ids as uint32, the recorder's table and statement) into a fresh
// WAL database in a temporary folder, for 4 KiB and 16 KiB pages, alternated, and prints µs per
// frame (best of the rounds). Used to choose the recorder's page size (server/recorder.ts).
// Run: node --import tsx/esm tools/bench/recordingPages.ts [particles=40,400,1000,10000] [rounds=3]
import Database from 'better-sqlite3';
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';

const SCHEMA = `CREATE TABLE frames (run TEXT NOT NULL, idx INTEGER NOT NULL, t REAL NOT NULL, count INTEGER NOT NULL,
  x BLOB NOT NULL, y BLOB NOT NULL, z BLOB, id BLOB, intensity BLOB, PRIMARY KEY (run, idx)) WITHOUT ROWID;`;

/** µs per frame written at `pageSize` for frames of `particles` centroids (10,000 frames, 1,000 for 10⁴ particles). */
export function recordingCost(pageSize: number, particles: number): number {
  const folder = mkdtempSync(join(tmpdir(), 'jostle-pages-'));
  try {
    const db = new Database(join(folder, 'bench.sqlite'));
    db.pragma(`page_size = ${pageSize}`);
    db.pragma('journal_mode = WAL');
    db.pragma('synchronous = NORMAL');
    db.exec(SCHEMA);
    const insert = db.prepare('INSERT OR IGNORE INTO frames (run, idx, t, count, x, y, z, id, intensity) VALUES (?, ?, ?, ?, ?, ?, ?, ?, ?)');
    const x = Buffer.alloc(8 * particles, 1);
    const y = Buffer.alloc(8 * particles, 2);
    const id = Buffer.alloc(4 * particles, 3);
    const frames = particles >= 10_000 ? 1000 : 10_000;
    let index = 0;
    const start = performance.now();
    const batch = db.transaction(() => {
      for (let k = 0; k < 100; k++, index++) insert.run('bench-pages', index, index * 0.001, particles, x, y, null, id, null);
    });
    while (index < frames) batch();
    const us = ((performance.now() - start) * 1000) / frames;
    db.close();
    return us;
  } finally {
    rmSync(folder, { recursive: true, force: true });
  }
}

if (import.meta.url === `file://${process.argv[1]}`) {
  const sizes = (process.argv[2] ?? '40,400,1000,10000').split(',').map(Number);
  const rounds = Number(process.argv[3] ?? 3);
  console.log('| particles per frame | 4 KiB pages, µs/frame | 16 KiB pages, µs/frame | ratio |');
  console.log('| --- | --- | --- | --- |');
  for (const particles of sizes) {
    let small = Infinity;
    let large = Infinity;
    for (let r = 0; r < rounds; r++) {
      small = Math.min(small, recordingCost(4096, particles));
      large = Math.min(large, recordingCost(16384, particles));
    }
    console.log(`| ${particles} | ${small.toFixed(1)} | ${large.toFixed(1)} | ${(small / large).toFixed(2)} |`);
  }
}
