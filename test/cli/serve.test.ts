import { execFile } from 'node:child_process';
import { mkdtemp, rm, writeFile } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { promisify } from 'node:util';
import { describe, expect, it } from 'vitest';

const run = promisify(execFile);
const bin = join(process.cwd(), 'tools', 'jostle.js');

describe('jostle serve on a data folder it cannot use', () => {
  it('exits with status 2 and one line naming the folder and the reason, not a stack trace', async () => {
    // a data path under a regular file cannot be created (ENOTDIR); a full disk (ENOSPC) takes
    // the same path, checked by hand on a 96 kB tmpfs
    const folder = await mkdtemp(join(tmpdir(), 'jostle-serve-'));
    const file = join(folder, 'not-a-folder');
    await writeFile(file, 'x');
    const failed = await run('node', [bin, 'serve', '--port', '0', '--data', join(file, 'data')]).then(
      () => null,
      (error: { code: number; stderr: string }) => error,
    );
    await rm(folder, { recursive: true, force: true });
    expect(failed).not.toBeNull();
    expect(failed!.code).toBe(2);
    const lines = failed!.stderr.trim().split('\n');
    expect(lines).toHaveLength(1);
    expect(lines[0]).toMatch(/^jostle: cannot use the data folder .*not-a-folder\/data: .*\(ENOTDIR\); choose another folder with --data$/);
  }, 30_000);
});
