import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { WebSocket } from 'ws';
import { Unpackr } from 'msgpackr';
import { startServer, type JostleServer } from '../../server/startServer.js';
import type { ServerOptions } from '../../server/serverOptions.js';

/** A server on a free loopback port with a fresh data folder; `stop()` closes and removes it. */
export async function testServer(options: ServerOptions = {}): Promise<JostleServer & { data: string; ws: string; http: string; stop(): Promise<void> }> {
  const data = mkdtempSync(join(tmpdir(), 'jostle-server-'));
  const server = await startServer({ port: 0, data, token: 'test-token-0123', log: () => undefined, ...options });
  const base = `127.0.0.1:${server.port}`;
  return Object.assign(server, {
    data,
    ws: `ws://${base}`,
    http: `http://${base}`,
    async stop() {
      await server.close();
      rmSync(data, { recursive: true, force: true });
    },
  });
}

const unpackr = new Unpackr({ useRecords: false, mapsAsObjects: true });

/** A connected client socket that collects the decoded messages it receives. */
export interface Collector {
  socket: WebSocket;
  messages: Record<string, unknown>[];
  /** Resolves with the first collected message (from now on or already seen) that matches. */
  next(predicate: (m: Record<string, unknown>) => boolean, timeoutMs?: number): Promise<Record<string, unknown>>;
  close(): Promise<void>;
}

/** Opens a WebSocket (rejects on an HTTP refusal with its status) and collects its messages. */
export function collect(url: string, headers: Record<string, string> = {}): Promise<Collector> {
  const socket = new WebSocket(url, { headers, perMessageDeflate: false });
  const messages: Record<string, unknown>[] = [];
  const waiters: { predicate: (m: Record<string, unknown>) => boolean; resolve: (m: Record<string, unknown>) => void }[] = [];
  socket.on('message', (data, isBinary) => {
    const message = (isBinary ? unpackr.unpack(data as Buffer) : JSON.parse(String(data))) as Record<string, unknown>;
    messages.push(message);
    for (const w of waiters.slice()) {
      if (w.predicate(message)) {
        waiters.splice(waiters.indexOf(w), 1);
        w.resolve(message);
      }
    }
  });
  return new Promise((resolve, reject) => {
    socket.once('unexpected-response', (_req, res) => reject(Object.assign(new Error(`HTTP ${res.statusCode}`), { status: res.statusCode })));
    socket.once('error', reject);
    socket.once('open', () =>
      resolve({
        socket,
        messages,
        next(predicate, timeoutMs = 5000) {
          const seen = messages.find(predicate);
          if (seen) return Promise.resolve(seen);
          return new Promise((res, rej) => {
            const timer = setTimeout(() => rej(new Error('timed out waiting for a message')), timeoutMs);
            waiters.push({ predicate, resolve: (m) => { clearTimeout(timer); res(m); } });
          });
        },
        close() {
          if (socket.readyState === WebSocket.CLOSED) return Promise.resolve();
          return new Promise((r) => { socket.once('close', () => r()); socket.close(); });
        },
      }),
    );
  });
}

/** Waits until `check()` is true (polling every 10 ms), or rejects after `timeoutMs`. */
export async function until(check: () => boolean, timeoutMs = 5000): Promise<void> {
  const started = Date.now();
  while (!check()) {
    if (Date.now() - started > timeoutMs) throw new Error('timed out waiting for a condition');
    await new Promise((r) => setTimeout(r, 10));
  }
}
