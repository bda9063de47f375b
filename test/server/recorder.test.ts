import Database from 'better-sqlite3';
import { mkdtemp, rm } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterEach, describe, expect, it } from 'vitest';
import { BatchWriter, MAX_PENDING_BATCHES } from '../../server/batchWriter.js';
import { Recorder, type RecordRow } from '../../server/recorder.js';
import type { Frame } from '../../src/frame.js';
import { Random } from '../../src/stats/random.js';

const folders: string[] = [];
async function folder(): Promise<string> {
  const made = await mkdtemp(join(tmpdir(), 'jostle-rec-'));
  folders.push(made);
  return made;
}

function frames(count: number, particles: number, seed: number): Frame[] {
  const random = new Random(seed);
  return Array.from({ length: count }, (_, index) => ({
    index,
    t: index * 0.01,
    count: particles,
    x: Float64Array.from({ length: particles }, () => 100 * random.uniform()),
    y: Float64Array.from({ length: particles }, () => 100 * random.normal()),
    id: Uint32Array.from({ length: particles }, (_, i) => i),
  }));
}

/** Records `all` in batches of `batch` frames, with a temperature reading per batch. */
function record(recorder: Recorder, run: string, all: Frame[], batch: number): void {
  recorder.openRun(run, '', '{}', '2026-12-02T00:00:00Z');
  for (let i = 0; i < all.length; i += batch) {
    const rows: RecordRow[] = all.slice(i, i + batch).map((f) => recorder.frameRow(run, f));
    rows.push({ kind: 'temperature', run, t: all[i].t, celsius: 22 + all[i].t });
    recorder.writeBatch(rows);
  }
}
afterEach(async () => {
  for (const folder of folders.splice(0)) await rm(folder, { recursive: true, force: true });
});

describe('Recorder', () => {
  it('creates a new database with 16 KiB pages and leaves an existing database its own page size', async () => {
    // SQLite: PRAGMA page_size takes effect only before the database's first table is made
    // (sqlite.org/pragma.html#pragma_page_size).
    const fresh = await mkdtemp(join(tmpdir(), 'jostle-rec-'));
    folders.push(fresh);
    new Recorder(fresh);
    const a = new Database(join(fresh, 'jostle.sqlite'), { readonly: true });
    expect(a.pragma('page_size', { simple: true })).toBe(16384);
    a.close();

    const old = await mkdtemp(join(tmpdir(), 'jostle-rec-'));
    folders.push(old);
    const b = new Database(join(old, 'jostle.sqlite'));
    b.pragma('page_size = 4096');
    b.exec('CREATE TABLE earlier (x INTEGER)');
    b.close();
    const recorder = new Recorder(old);
    recorder.openRun('bench-a', '', '{}', '2026-12-02T00:00:00Z');
    expect(recorder.run('bench-a')?.state).toBe('live');
    const c = new Database(join(old, 'jostle.sqlite'), { readonly: true });
    expect(c.pragma('page_size', { simple: true })).toBe(4096);
    c.close();
  });

  // The writer thread must record exactly what the event loop's writes record, and every read
  // must see the batches posted before it (common practice, no source).
  it('records the same frames, readings and counts on the writer thread as on the event loop, each read seeing every batch posted before it', async () => {
    const all = frames(120, 300, 5);
    const threaded = new Recorder(await folder());
    const plain = new Recorder(await folder(), { writerThread: false });
    record(threaded, 'a', all.slice(0, 60), 6);
    // no wait: the read itself waits for the batches already posted
    expect(threaded.run('a')?.frames).toBe(60);
    record(threaded, 'a', all.slice(60), 6);
    record(plain, 'a', all, 6);
    const read = (r: Recorder) => [...r.frames('a')];
    expect(read(threaded)).toEqual(read(plain));
    expect(read(threaded)).toEqual(all);
    expect(threaded.temperatures('a')).toEqual(plain.temperatures('a'));
    const { started: _s1, ...meta } = threaded.run('a')!;
    const { started: _s2, ...metaPlain } = plain.run('a')!;
    expect(meta).toEqual(metaPlain);
    expect(meta.frames).toBe(120);
    expect(meta.bytes).toBe(120 * 300 * (8 + 8 + 4));
    threaded.close();
    plain.close();
  });

  it('writes the queued batches before it closes (a reopened recording has them all)', async () => {
    const data = await folder();
    const recorder = new Recorder(data);
    record(recorder, 'b', frames(40, 1000, 6), 5);
    recorder.close();
    const reopened = new Recorder(data, { readonly: true });
    expect(reopened.run('b')?.frames).toBe(40);
    expect([...reopened.frames('b')].length).toBe(40);
    reopened.close();
  });

  it('stops writing when the writer thread hits a full disk: the listener is told SQLITE_FULL, earlier frames stay, later batches are dropped', async () => {
    const recorder = new Recorder(await folder());
    const failures: string[] = [];
    recorder.onFailure((f) => failures.push(f.code));
    record(recorder, 'c', frames(20, 200, 7), 5);
    recorder.limitPages(0); // the disk is full from now on (SQLite max_page_count)
    record(recorder, 'c2', frames(20, 2000, 8), 5);
    expect(recorder.run('c')?.frames).toBe(20); // the read waits for the batches, and learns of the failure
    expect(failures).toEqual(['SQLITE_FULL']);
    expect(recorder.failure?.code).toBe('SQLITE_FULL');
    expect([...recorder.frames('c')].length).toBe(20);
    expect(recorder.run('c2')?.frames ?? 0).toBeLessThan(20);
    recorder.close();
  });

  it('keeps at most MAX_PENDING_BATCHES batches waiting for the writer thread: posting more waits (back-pressure, bounded memory)', async () => {
    const data = await folder();
    const setup = new Recorder(data, { writerThread: false });
    setup.openRun('d', '', '{}', '2026-12-02T00:00:00Z');
    const writer = new BatchWriter(join(data, 'jostle.sqlite'), () => undefined);
    const all = frames(60, 5000, 9);
    let most = 0;
    for (let i = 0; i < all.length; i += 2) {
      writer.post(all.slice(i, i + 2).map((f) => setup.frameRow('d', f)));
      most = Math.max(most, writer.pending);
    }
    expect(most).toBeGreaterThan(0);
    expect(most).toBeLessThanOrEqual(MAX_PENDING_BATCHES);
    writer.drain();
    expect(writer.pending).toBe(0);
    expect(setup.run('d')?.frames).toBe(60);
    writer.close();
    setup.close();
  });
});
