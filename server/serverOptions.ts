/** Options of the live server; every limit has a documented default (server/README.md). */
export interface ServerOptions {
  /** Interface to bind (default `127.0.0.1`). Anything but loopback needs `allowRemote`. */
  host?: string;
  /** TCP port (default 7311; 0 picks a free one). */
  port?: number;
  /** Data folder: the SQLite recording and the generated token (default `./jostle-data`). */
  data?: string;
  /** Access token; default `JOSTLE_TOKEN`, else the one kept in `<data>/token` (made on first start). */
  token?: string;
  /** Allow binding to a non-loopback interface (a warning is printed). Default false. */
  allowRemote?: boolean;
  /** Largest WebSocket message, bytes (default 16 MiB); bigger ones close the socket with 1009. */
  maxPayloadBytes?: number;
  /** Most centroids in one frame (default 100 000); bigger frames are rejected with `error`. */
  maxParticlesPerFrame?: number;
  /** Most runs live at once (default 16); a further `run` is rejected. */
  maxRuns?: number;
  /** Most dashboards watching one run (default 32); a further one is closed with 1013. */
  maxDashboardsPerRun?: number;
  /** Most dashboards watching the run list (`/watch` without a run) at once (default 64); a further one is closed with 1013. */
  maxRunListWatchers?: number;
  /** A rig socket that has not opened a run (`run` message) within this time is closed with 1008, ms (default 30 000). */
  rigOpenTimeoutMs?: number;
  /**
   * Messages that are never coalesced (snapshot, alerts, run lists) queued for one slow dashboard
   * before it is closed with 1013 (default 32); its updates coalesce to one pending update.
   */
  dashboardQueueLength?: number;
  /** Bytes buffered in a dashboard socket above which it counts as slow (default 1 MiB). */
  dashboardHighWaterBytes?: number;
  /** Recorded frame bytes per run (default 2 GiB); `recording` warns at 90 % and stops at 100 %. */
  quotaBytes?: number;
  /** Ping interval, ms (default 15 000); a peer that leaves two pings in a row unanswered is terminated. */
  heartbeatMs?: number;
  /** Dashboard summaries per second at most (default 10). */
  summaryHz?: number;
  /** Recording batches are written at least this often, ms (default 250): the most a hard kill loses. */
  flushMs?: number;
  /** Frame batches are written on a worker thread (default true); false writes them on the event loop. */
  recordingThread?: boolean;
  /** A periodic summary row is recorded this often per run, ms (default 10 000). */
  summaryRecordMs?: number;
  /** Frames kept for the position trails (default 8). */
  trailFrames?: number;
  /**
   * Least data time between two frames kept for the trails, ms (default 50; 0 keeps every
   * frame): 8 trail frames then span the same 0.35 s (7 × 50 ms) at 20 or 1,000 frames/s.
   */
  trailSpacingMs?: number;
  /** Static files of the dashboard (default `web/dist`, else `web/index.html` as a placeholder). */
  webRoot?: string;
  /** Where log lines go (default stderr). Never given a secret. */
  log?: (line: string) => void;
}

/** Options with every default filled in. */
export type ResolvedServerOptions = Required<Omit<ServerOptions, 'token' | 'webRoot'>> & { token: string | undefined; webRoot: string | undefined };

/** The defaults of {@link ServerOptions}. */
export const SERVER_DEFAULTS = {
  host: '127.0.0.1',
  port: 7311,
  data: './jostle-data',
  allowRemote: false,
  maxPayloadBytes: 16 * 1024 * 1024,
  maxParticlesPerFrame: 100_000,
  maxRuns: 16,
  maxDashboardsPerRun: 32,
  maxRunListWatchers: 64,
  rigOpenTimeoutMs: 30_000,
  dashboardQueueLength: 32,
  dashboardHighWaterBytes: 1024 * 1024,
  quotaBytes: 2 * 1024 ** 3,
  heartbeatMs: 15_000,
  summaryHz: 10,
  flushMs: 250,
  recordingThread: true,
  summaryRecordMs: 10_000,
  trailFrames: 8,
  trailSpacingMs: 50,
} as const;

const LOOPBACK = new Set(['127.0.0.1', '::1', 'localhost']);

/** True for a loopback host name or address. */
export function isLoopback(host: string): boolean {
  return LOOPBACK.has(host) || /^127\.\d+\.\d+\.\d+$/.test(host);
}

/**
 * Merges the defaults and checks every option once (RangeError naming the option).
 *
 * @example
 * resolveServerOptions({ port: 0 }).maxPayloadBytes // → 16777216
 */
export function resolveServerOptions(options: ServerOptions = {}): ResolvedServerOptions {
  const merged = { ...SERVER_DEFAULTS, log: (line: string) => process.stderr.write(`${line}\n`), ...stripUndefined(options) };
  const integer = (name: keyof typeof SERVER_DEFAULTS, min: number, max = Number.MAX_SAFE_INTEGER) => {
    const value = Number(merged[name]);
    if (!(Number.isInteger(value) && value >= min && value <= max)) {
      throw new RangeError(`server option ${name} requires an integer in [${min}, ${max}]`);
    }
    (merged as Record<string, unknown>)[name] = value;
  };
  integer('port', 0, 65535);
  integer('maxPayloadBytes', 1024);
  integer('maxParticlesPerFrame', 1);
  integer('maxRuns', 1);
  integer('maxDashboardsPerRun', 1);
  integer('maxRunListWatchers', 1);
  integer('rigOpenTimeoutMs', 10);
  integer('dashboardQueueLength', 1);
  integer('dashboardHighWaterBytes', 1);
  integer('quotaBytes', 1);
  integer('heartbeatMs', 10);
  integer('flushMs', 1, 1000);
  integer('summaryRecordMs', 10);
  integer('trailFrames', 1, 100);
  integer('trailSpacingMs', 0, 10_000);
  if (typeof merged.recordingThread !== 'boolean') throw new RangeError('server option recordingThread requires true or false');
  if (!(Number(merged.summaryHz) > 0 && Number(merged.summaryHz) <= 10)) throw new RangeError('server option summaryHz requires a value in (0, 10]');
  if (typeof merged.host !== 'string' || merged.host === '') throw new RangeError('server option host requires a host name or address');
  if (!isLoopback(merged.host) && !merged.allowRemote) {
    throw new RangeError(`server option host '${merged.host}' is not loopback: binding to it needs allowRemote (--allow-remote)`);
  }
  if (merged.token !== undefined && (typeof merged.token !== 'string' || merged.token.length < 8)) {
    throw new RangeError('server option token requires at least 8 characters');
  }
  return { token: undefined, webRoot: undefined, ...merged } as ResolvedServerOptions;
}

function stripUndefined<T extends object>(value: T): Partial<T> {
  const out: Partial<T> = {};
  for (const [k, v] of Object.entries(value)) if (v !== undefined) (out as Record<string, unknown>)[k] = v;
  return out;
}
