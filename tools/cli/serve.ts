import { startServer, type JostleServer } from '../../server/startServer.js';
import { SERVER_DEFAULTS, type ServerOptions } from '../../server/serverOptions.js';
import { numberOption, UsageError } from './usageError.js';

/** The flags of `jostle serve` as commander hands them over. */
export interface ServeFlags {
  host: string;
  port: string;
  data: string;
  token?: string;
  allowRemote?: boolean;
  maxPayload?: string;
  quota?: string;
  heartbeat?: string;
}

/** Server options from the flags (RangeError from the server becomes a usage error). */
export function serveOptions(flags: ServeFlags): ServerOptions {
  const positiveInteger = (n: number) => Number.isInteger(n) && n > 0;
  return {
    host: flags.host,
    port: numberOption('--port', flags.port, (n) => Number.isInteger(n) && n >= 0 && n <= 65535),
    data: flags.data,
    token: flags.token ?? process.env.JOSTLE_TOKEN,
    allowRemote: flags.allowRemote === true,
    maxPayloadBytes: numberOption('--max-payload', flags.maxPayload, positiveInteger),
    quotaBytes: numberOption('--quota', flags.quota, positiveInteger),
    heartbeatMs: numberOption('--heartbeat', flags.heartbeat, positiveInteger),
  };
}

/** Error codes of a data folder that cannot be written, and what each means. */
const STORAGE_PROBLEMS: Record<string, string> = {
  ENOSPC: 'no space left on its device',
  EDQUOT: 'the disk quota is used up',
  EROFS: 'its file system is read-only',
  EACCES: 'permission denied',
  EPERM: 'permission denied',
  ENOTDIR: 'a part of its path is a file, not a folder',
  SQLITE_FULL: 'no space left for the recording',
  SQLITE_CANTOPEN: 'the recording cannot be opened',
  SQLITE_READONLY: 'the recording is read-only',
};

/** Starts the server, mapping bad options and an unusable data folder to a usage error (exit 2). */
export async function startFromFlags(options: ServerOptions): Promise<JostleServer> {
  try {
    return await startServer(options);
  } catch (error) {
    if (error instanceof RangeError) throw new UsageError(error.message, 'JOSTLE_E_OPTION');
    const code = (error as { code?: string }).code;
    if (code === 'EADDRINUSE' || (code === 'EACCES' && (error as { syscall?: string }).syscall === 'listen')) {
      throw new UsageError(`cannot listen on ${options.host}:${options.port} (${code})`, 'JOSTLE_E_LISTEN');
    }
    // The data folder cannot take the token file or the recording: say so in one line, not a stack.
    const storage = code ? STORAGE_PROBLEMS[code] : undefined;
    if (storage) {
      const remedy = code === 'ENOSPC' || code === 'EDQUOT' || code === 'SQLITE_FULL' ? 'free space there or choose' : 'choose';
      throw new UsageError(`cannot use the data folder ${options.data ?? SERVER_DEFAULTS.data}: ${storage} (${code}); ${remedy} another folder with --data`, 'JOSTLE_E_DATA');
    }
    throw error;
  }
}

/**
 * Resolves on SIGINT or SIGTERM; `cancel` aborted removes the handlers (the promise then never
 * resolves).
 * @example
 * await untilSignal(); // → after Ctrl-C
 */
export function untilSignal(cancel?: AbortSignal): Promise<void> {
  return new Promise((resolve) => {
    const off = () => {
      process.off('SIGINT', done);
      process.off('SIGTERM', done);
    };
    const done = () => {
      off();
      resolve();
    };
    process.on('SIGINT', done);
    process.on('SIGTERM', done);
    cancel?.addEventListener('abort', off, { once: true });
  });
}

/**
 * `jostle serve` (CONTRACTS §1): starts the live server, prints the dashboard URL actually bound
 * (with `?token=`) as the first line on stdout, and runs until SIGINT or SIGTERM, then closes
 * cleanly (recording flushed).
 */
export async function runServe(flags: ServeFlags, stdout: NodeJS.WritableStream): Promise<void> {
  // Listen for the signals before the URL is printed: whoever reads that line may stop the
  // server at once, and must get a clean close (recording flushed), not the default kill.
  const stop = new AbortController();
  const signalled = untilSignal(stop.signal);
  let server: JostleServer;
  try {
    server = await startFromFlags(serveOptions(flags));
  } catch (error) {
    stop.abort(); // not started: the signals get their default meaning back
    throw error;
  }
  stdout.write(`${server.url}\n`);
  await signalled;
  await server.close();
}
