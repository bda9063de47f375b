import { createServer, type IncomingMessage } from 'node:http';
import type { Duplex } from 'node:stream';
import { asyncScheduler, interval, type SchedulerLike } from 'rxjs';
import { WebSocketServer, type WebSocket } from 'ws';
import { hasToken, originAllowed, resolveToken } from './accessGuard.js';
import { DashboardChannel } from './dashboardChannel.js';
import { decodeMessage, type Encoding } from './decodeMessage.js';
import { handleHttp, isPathTrick } from './httpRoutes.js';
import { Recorder } from './recorder.js';
import { RigConnection } from './rigConnection.js';
import { isRunId, parseTagMessage } from './rigMessageFields.js';
import { RunRegistry, type ServerCounters } from './runRegistry.js';
import { ServerError } from './serverError.js';
import { isLoopback, resolveServerOptions, type ServerOptions } from './serverOptions.js';

/** A running server. */
export interface JostleServer {
  /** The dashboard URL actually bound, with `?token=` (print it once; never log it). */
  readonly url: string;
  /** The port actually bound. */
  readonly port: number;
  /** The token in force. */
  readonly token: string;
  /** Server-wide counters (oversized messages, rejected messages, terminated peers). */
  readonly counters: ServerCounters;
  /** The run registry (for tests and the demo). */
  readonly registry: RunRegistry;
  /** Closes every socket, flushes the recording and stops listening. */
  close(): Promise<void>;
}

function refuse(socket: Duplex, status: number, text: string): void {
  socket.write(`HTTP/1.1 ${status} ${text}\r\nConnection: close\r\nContent-Length: 0\r\n\r\n`);
  socket.destroy();
}

/** Checks an `ack {alert: id}` from a dashboard: the id must name an alert of the run. */
function parseAck(message: Record<string, unknown>, run: { pipeline: { alerts(): { alerts(): readonly { id: string }[] } } }): string {
  const id = message.alert;
  if (typeof id !== 'string' || id.length === 0 || id.length > 200) throw new ServerError('JOSTLE_E_ACK', 'ack alert must be an alert id');
  if (!run.pipeline.alerts().alerts().some((alert) => alert.id === id)) throw new ServerError('JOSTLE_E_ACK', 'ack names no alert of this run');
  return id;
}

/**
 * Starts the live server (CONTRACTS §1 `jostle serve`, §4): one HTTP server carrying the
 * WebSocket endpoints `/rig` and `/watch` (ws, `maxPayload`, per-message deflate off, ping/pong
 * heartbeat that terminates silent peers) and the dashboard page. Access is checked before any
 * upgrade (401 token, 403 Origin). Runs left live by a killed server are marked interrupted and
 * can be resumed by a rig sending `run` with the same id.
 *
 * @param options see {@link ServerOptions}; RangeError for a bad one
 * @param scheduler time source of the heartbeat, sampling and recording batches
 * @example
 * const server = await startServer({ port: 0, data: '/tmp/jostle' });
 * server.url // → 'http://127.0.0.1:40213/?token=…'
 */
export async function startServer(options: ServerOptions = {}, scheduler: SchedulerLike = asyncScheduler): Promise<JostleServer> {
  const o = resolveServerOptions(options);
  if (!isLoopback(o.host)) o.log(`jostle: warning: listening on ${o.host}, reachable from other machines; keep the token secret`);
  const token = resolveToken(o.token, o.data);
  const recorder = new Recorder(o.data, { writerThread: o.recordingThread });
  const interrupted = recorder.markInterrupted();
  if (interrupted > 0) o.log(`jostle: ${interrupted} run(s) were interrupted by the previous stop; a rig can resume them`);
  const registry = new RunRegistry(recorder, o, scheduler);
  const http = createServer((request, response) => {
    handleHttp(request, response, registry, token, o.webRoot).catch((error: unknown) => {
      o.log(`jostle: request failed: ${(error as Error)?.message}`);
      if (!response.headersSent) response.writeHead(500);
      response.end();
    });
  });
  const wss = new WebSocketServer({ noServer: true, maxPayload: o.maxPayloadBytes, perMessageDeflate: false, clientTracking: true });
  // Pings not answered, per socket: a peer that misses two in a row is terminated.
  const missed = new WeakMap<WebSocket, number>();

  http.on('upgrade', (request: IncomingMessage, socket: Duplex, head: Buffer) => {
    socket.on('error', () => socket.destroy());
    const raw = (request.url ?? '/').split('?')[0];
    if (isPathTrick(raw) || (raw !== '/rig' && raw !== '/watch')) return refuse(socket, 404, 'Not Found');
    if (!originAllowed(request)) return refuse(socket, 403, 'Forbidden');
    if (!hasToken(request, token)) return refuse(socket, 401, 'Unauthorized');
    const query = new URL(request.url ?? '/', 'http://localhost').searchParams;
    let runId: string | null = null;
    if (raw === '/watch') {
      runId = query.get('run');
      if (runId !== null && !isRunId(runId)) return refuse(socket, 400, 'Bad Request');
      if (runId !== null && !registry.get(runId)) return refuse(socket, 404, 'Not Found');
    }
    wss.handleUpgrade(request, socket, head, (ws) => {
      missed.set(ws, 0);
      ws.on('pong', () => missed.set(ws, 0));
      ws.on('error', (error: Error & { code?: string }) => {
        if (error.code === 'WS_ERR_UNSUPPORTED_MESSAGE_LENGTH') registry.counters.oversizedMessages++;
      });
      if (raw === '/rig') {
        const rig = new RigConnection(ws, registry);
        // a socket that never opens a run holds a connection for nothing: close it after a while
        const timer = setTimeout(() => {
          if (!rig.hasRun && ws.readyState === ws.OPEN) ws.close(1008, 'no run message');
        }, o.rigOpenTimeoutMs);
        timer.unref();
        ws.on('close', () => clearTimeout(timer));
      }
      else watch(ws, runId, query.get('encoding') === 'msgpack' ? 'msgpack' : 'json');
    });
  });

  function watch(ws: WebSocket, runId: string | null, encoding: Encoding): void {
    const channel = new DashboardChannel(ws, encoding, { queueLength: o.dashboardQueueLength, highWaterBytes: o.dashboardHighWaterBytes });
    if (runId === null) {
      if (registry.listWatchers.size >= o.maxRunListWatchers) {
        channel.dispose();
        return ws.close(1013, 'too many run-list watchers');
      }
      registry.listWatchers.add(channel);
      ws.on('close', () => {
        registry.listWatchers.delete(channel);
        channel.dispose();
      });
      channel.send({ type: 'runs', runs: registry.list() });
      let listSeq = 0;
      ws.on('message', () => {
        // the run list takes no messages: say so, count it, stay open
        listSeq++;
        registry.counters.rejectedDashboardMessages++;
        channel.send({ type: 'error', code: 'JOSTLE_E_TYPE', reason: 'the run list takes no messages: watch a run to send tag or ack', seq: listSeq });
      });
      return;
    }
    const run = registry.get(runId);
    if (!run) return ws.close(1008, 'no such run');
    if (run.dashboards.size >= o.maxDashboardsPerRun) return ws.close(1013, 'too many dashboards');
    run.attach(channel);
    let seq = 0;
    ws.on('close', () => run.detach(channel));
    ws.on('message', (data, isBinary) => {
      seq++;
      try {
        const message = decodeMessage(Array.isArray(data) ? Buffer.concat(data) : (data as Buffer), isBinary);
        if (message.type === 'tag') run.input({ kind: 'tag', tag: parseTagMessage(message) });
        else if (message.type === 'ack') run.input({ kind: 'ack', alert: parseAck(message, run) });
        else throw new ServerError('JOSTLE_E_TYPE', 'message type is not known');
      } catch (error) {
        registry.counters.rejectedDashboardMessages++;
        const known = error instanceof ServerError;
        if (!known) o.log(`jostle: dashboard message failed: ${(error as Error)?.message}`);
        channel.send({ type: 'error', code: known ? error.code : 'JOSTLE_E_INTERNAL', reason: known ? error.message : 'message could not be handled', seq });
      }
    });
  }

  const heartbeat = interval(o.heartbeatMs, scheduler).subscribe(() => {
    for (const ws of wss.clients) {
      const count = missed.get(ws) ?? 0;
      if (count >= 2) {
        registry.counters.terminatedPeers++;
        ws.terminate();
        continue;
      }
      missed.set(ws, count + 1);
      ws.ping();
    }
  });

  try {
    await new Promise<void>((resolvePromise, reject) => {
      http.once('error', reject);
      http.listen(o.port, o.host, () => resolvePromise());
    });
  } catch (error) {
    // the port is taken or the address is not ours: release everything, so that the process
    // can exit (a running heartbeat would keep it alive)
    heartbeat.unsubscribe();
    wss.close();
    registry.dispose();
    recorder.close();
    throw error;
  }
  const address = http.address();
  const port = typeof address === 'object' && address ? address.port : o.port;
  const hostText = o.host.includes(':') ? `[${o.host}]` : o.host;
  const url = `http://${hostText}:${port}/?token=${encodeURIComponent(token)}`;
  let closing: Promise<void> | undefined;
  return {
    url,
    port,
    token,
    counters: registry.counters,
    registry,
    close() {
      closing ??= (async () => {
        heartbeat.unsubscribe();
        for (const ws of wss.clients) ws.terminate();
        await new Promise<void>((r) => wss.close(() => r()));
        http.closeAllConnections();
        await new Promise<void>((r) => http.close(() => r()));
        registry.dispose();
        recorder.close();
      })();
      return closing;
    },
  };
}
