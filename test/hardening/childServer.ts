import { spawn, type ChildProcess } from 'node:child_process';
import { readdirSync, readFileSync, statSync } from 'node:fs';
import { join } from 'node:path';
import { createInterface } from 'node:readline';

const root = join(import.meta.dirname, '..', '..');

/** A `jostle serve` child process on a free loopback port, with everything it printed. */
export interface ChildServer {
  child: ChildProcess;
  port: number;
  /** The first stdout line (the dashboard URL with the token). */
  url: string;
  /** Everything on stdout after the first line, and everything on stderr. */
  output(): string;
  /** Resolves when the process has exited. */
  exited(): Promise<void>;
}

const children = new Set<ChildProcess>();

/** Starts `node tools/jostle.js serve --port 0 --data <data>` with JOSTLE_TOKEN = token. */
export async function serveChild(data: string, token: string, extra: string[] = []): Promise<ChildServer> {
  const child = spawn(process.execPath, ['tools/jostle.js', 'serve', '--port', '0', '--data', data, ...extra], {
    cwd: root,
    env: { ...process.env, JOSTLE_TOKEN: token },
    stdio: ['ignore', 'pipe', 'pipe'],
  });
  children.add(child);
  child.once('exit', () => children.delete(child));
  let rest = '';
  child.stderr!.on('data', (chunk) => (rest += String(chunk)));
  const lines = createInterface({ input: child.stdout! });
  const url = await new Promise<string>((resolve, reject) => {
    const timer = setTimeout(() => reject(new Error('serve did not print its URL in 15 s')), 15_000);
    lines.once('line', (line) => {
      clearTimeout(timer);
      resolve(line);
    });
    child.once('exit', (code) => reject(new Error(`serve exited with ${code}: ${rest}`)));
  });
  lines.on('line', (line) => (rest += `${line}\n`));
  const exited = () => (child.exitCode !== null || child.signalCode !== null ? Promise.resolve() : new Promise<void>((r) => child.once('exit', () => r())));
  return { child, port: Number(new URL(url).port), url, output: () => rest, exited };
}

/** Kills (SIGKILL) every child still running: for afterAll. */
export async function killChildren(): Promise<void> {
  const waits = [...children].map((child) => new Promise<void>((r) => {
    child.once('exit', () => r());
    child.kill('SIGKILL');
  }));
  await Promise.all(waits);
}

/** The text of every file under `folder` except those named in `skip` (binary read as latin1). */
export function folderText(folder: string, skip: readonly string[] = []): string {
  let text = '';
  for (const name of readdirSync(folder)) {
    if (skip.includes(name)) continue;
    const path = join(folder, name);
    text += statSync(path).isDirectory() ? folderText(path, skip) : readFileSync(path).toString('latin1');
  }
  return text;
}
