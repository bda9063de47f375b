import { spawn, type ChildProcess } from 'node:child_process';
import { existsSync, mkdtempSync, readdirSync, rmSync, statSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join, resolve } from 'node:path';
import { createInterface } from 'node:readline';
import { chromium, type BrowserContext } from 'playwright-core';

/** Repository root (two folders up from this file). */
export const ROOT = resolve(import.meta.dirname, '..', '..');
const CLI = join(ROOT, 'tools', 'jostle.js');
const CHROMIUM = '/usr/bin/chromium';

/** A running `jostle serve` child. */
export interface ServerChild {
  child: ChildProcess;
  url: string;
  port: number;
  token: string;
  stop(): Promise<void>;
}

const children = new Set<ChildProcess>();

function stopChild(child: ChildProcess, timeoutMs = 5000): Promise<void> {
  return new Promise((done) => {
    if (child.exitCode !== null || child.signalCode !== null) return done();
    const timer = setTimeout(() => child.kill('SIGKILL'), timeoutMs);
    child.once('exit', () => {
      clearTimeout(timer);
      children.delete(child);
      done();
    });
    child.kill('SIGTERM');
  });
}

/** Stops every child this harness started (by its own handle). */
export async function stopAll(): Promise<void> {
  await Promise.all([...children].map((c) => stopChild(c)));
}

/**
 * Starts the real server (`jostle serve --port <port> --data <folder> …extra`) and resolves with
 * the address it prints as its first stdout line (CONTRACTS §1).
 */
export function startServe(data: string, port = 0, extra: string[] = []): Promise<ServerChild> {
  const child = spawn(process.execPath, [CLI, 'serve', '--port', String(port), '--data', data, ...extra], { cwd: ROOT, stdio: ['ignore', 'pipe', 'pipe'] });
  children.add(child);
  let stderr = '';
  child.stderr!.on('data', (d) => (stderr += d));
  return new Promise((done, fail) => {
    const timer = setTimeout(() => fail(new Error(`jostle serve printed no address in 20 s: ${stderr}`)), 20_000);
    child.once('exit', (code) => fail(new Error(`jostle serve exited (${code}): ${stderr}`)));
    createInterface({ input: child.stdout! }).once('line', (line) => {
      clearTimeout(timer);
      const url = new URL(line.trim());
      done({ child, url: line.trim(), port: Number(url.port), token: url.searchParams.get('token') ?? '', stop: () => stopChild(child) });
    });
  });
}

/** Starts a simulated rig streaming a named scenario to the server; resolves when it exits. */
export function startRig(server: ServerChild, scenario: string, extra: string[]): { child: ChildProcess; done: Promise<string> } {
  const url = `ws://127.0.0.1:${server.port}/rig?token=${server.token}`;
  const child = spawn(process.execPath, [CLI, 'simulate', scenario, '--url', url, ...extra], { cwd: ROOT, stdio: ['ignore', 'pipe', 'pipe'] });
  children.add(child);
  let out = '';
  child.stdout!.on('data', (d) => (out += d));
  child.stderr!.on('data', (d) => (out += d));
  const done = new Promise<string>((ok) => child.once('exit', () => {
    children.delete(child);
    ok(out);
  }));
  return { child, done };
}

/** A fresh temporary folder, removed by `cleanTemp`. */
const temps: string[] = [];
export function tempDir(prefix: string): string {
  const dir = mkdtempSync(join(tmpdir(), prefix));
  temps.push(dir);
  return dir;
}
export function cleanTemp(): void {
  for (const dir of temps.splice(0)) rmSync(dir, { recursive: true, force: true });
}

/** Debian's Chromium through playwright-core, with a fresh profile; never downloads a browser. */
export async function launchChromium(): Promise<BrowserContext> {
  if (!existsSync(CHROMIUM)) throw new Error(`${CHROMIUM} is missing: install it with apt-get install -y chromium`);
  return chromium.launchPersistentContext(tempDir('jostle-chromium-'), {
    executablePath: CHROMIUM,
    headless: true,
    args: ['--headless', '--no-sandbox', '--disable-gpu', '--disable-background-networking', '--disable-component-update', '--disable-sync', '--no-first-run'],
    viewport: { width: 1600, height: 1300 },
  });
}

/** Builds web/dist with Vite unless it is newer than every file of web/src and web/index.html. */
export async function ensureBuilt(): Promise<void> {
  const dist = join(ROOT, 'web', 'dist', 'index.html');
  const newest = Math.max(statSync(join(ROOT, 'web', 'index.html')).mtimeMs, ...readdirSync(join(ROOT, 'web', 'src')).map((f) => statSync(join(ROOT, 'web', 'src', f)).mtimeMs));
  if (existsSync(dist) && statSync(dist).mtimeMs > newest) return;
  const { build } = await import('vite');
  await build({ configFile: join(ROOT, 'web', 'vite.config.ts'), logLevel: 'warn' });
}

/** Polls `probe` every 100 ms until it returns a truthy value, else throws `what` after `timeoutMs`. */
export async function waitFor<T>(what: string, probe: () => Promise<T> | T, timeoutMs: number): Promise<NonNullable<T>> {
  const end = Date.now() + timeoutMs;
  let last: unknown;
  while (Date.now() < end) {
    try {
      const v = await probe();
      if (v) return v as NonNullable<T>;
    } catch (error) {
      last = error;
    }
    await new Promise((r) => setTimeout(r, 100));
  }
  throw new Error(`timed out waiting for ${what}${last ? `: ${String(last)}` : ''}`);
}
