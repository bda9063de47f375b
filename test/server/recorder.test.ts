import Database from 'better-sqlite3';
import { mkdtemp, rm } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterEach, describe, expect, it } from 'vitest';
import { Recorder } from '../../server/recorder.js';

const folders: string[] = [];
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
});
