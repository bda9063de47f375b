/** A progress line on a terminal: feed it byte counts, then finish it. */
export interface ProgressReporter {
  /** Reports bytes read so far (and the total when it became known); prints at most every `intervalMs`. */
  update(bytesRead: number, totalBytes?: number): void;
  /** Clears the progress line (only if one was printed). */
  finish(): void;
}

/** Options of `progressReporter`. */
export interface ProgressReporterOptions {
  /** Least time between two printed updates, ms (default 250). */
  intervalMs?: number;
}

const MEGABYTE = 1e6;

/**
 * A throttled, single-line progress report for reading a file: percent, MB/s and time left when
 * the size is known, else MB read and MB/s. It rewrites one line with `\r` and only writes when
 * the stream is a terminal (`isTTY`), so piped stderr stays clean. Time comes from `clock`
 * (ms), so tests can drive it.
 *
 * Complexity: O(1) per update.
 *
 * @param stream where to print (default process.stderr)
 * @param totalBytes the file size, bytes, when known
 * @param options `intervalMs` (default 250)
 * @param clock current time, ms (default Date.now)
 * @returns `update(bytesRead, totalBytes?)` (fits `readCentroids`' onProgress) and `finish()`
 *
 * @example
 * const progress = progressReporter(process.stderr, 52_428_800);
 * await readCentroids(path, { onProgress: progress.update }, onFrame);
 * progress.finish();
 * // while reading, on a terminal: '\r 42.0 %   118.3 MB/s   0:01 left'
 */
export function progressReporter(
  stream: NodeJS.WritableStream & { isTTY?: boolean } = process.stderr,
  totalBytes?: number,
  options: ProgressReporterOptions = {},
  clock: () => number = Date.now,
): ProgressReporter {
  const intervalMs = options.intervalMs ?? 250;
  if (!(intervalMs >= 0 && Number.isFinite(intervalMs))) throw new RangeError('progressReporter requires intervalMs >= 0');
  const enabled = stream.isTTY === true;
  const startedMs = clock();
  let lastPrintMs = -Infinity;
  let printedLength = 0;
  let total = totalBytes;
  const update = (bytesRead: number, totalNow?: number): void => {
    if (!enabled) return;
    if (totalNow !== undefined) total = totalNow;
    const now = clock();
    if (now - lastPrintMs < intervalMs) return;
    lastPrintMs = now;
    const elapsedS = (now - startedMs) / 1000;
    const rate = elapsedS > 0 ? bytesRead / elapsedS : NaN; // bytes/s
    const rateText = Number.isFinite(rate) ? `${(rate / MEGABYTE).toFixed(1)} MB/s` : '-- MB/s';
    let line: string;
    if (total !== undefined && total > 0) {
      const fraction = Math.min(1, bytesRead / total);
      const leftS = Number.isFinite(rate) && rate > 0 ? (total - bytesRead) / rate : NaN;
      line = `${(100 * fraction).toFixed(1).padStart(5)} %   ${rateText}   ${clockText(leftS)} left`;
    } else {
      line = `${(bytesRead / MEGABYTE).toFixed(1)} MB read   ${rateText}`;
    }
    // Pad over the previous, possibly longer, line.
    const padded = line.padEnd(printedLength);
    stream.write(`\r${padded}`);
    printedLength = padded.length;
  };
  const finish = (): void => {
    if (!enabled || printedLength === 0) return;
    stream.write(`\r${' '.repeat(printedLength)}\r`);
    printedLength = 0;
  };
  return { update, finish };
}

/** Seconds as m:ss (or h:mm:ss), `--:--` when unknown. */
function clockText(seconds: number): string {
  if (!Number.isFinite(seconds) || seconds < 0) return '--:--';
  const whole = Math.round(seconds);
  const h = Math.floor(whole / 3600);
  const m = Math.floor((whole % 3600) / 60);
  const s = whole % 60;
  const ss = String(s).padStart(2, '0');
  return h > 0 ? `${h}:${String(m).padStart(2, '0')}:${ss}` : `${m}:${ss}`;
}
