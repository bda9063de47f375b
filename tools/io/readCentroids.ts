import { createReadStream } from 'node:fs';
import { stat } from 'node:fs/promises';
import type { Frame } from '../../src/frame.js';
import { CentroidCsvParser, type CentroidParseOptions, type CentroidReadSummary } from './centroidCsvParser.js';
import { IoError } from './ioError.js';

export type { CentroidColumn, CentroidReadSummary, RejectedRow } from './centroidCsvParser.js';

/** Options of `readCentroids`: those of the parser, plus progress and chunk size. */
export interface ReadCentroidsOptions extends CentroidParseOptions {
  /** Called after each chunk with the bytes read so far and the file size (undefined for a stream). */
  onProgress?: (bytesRead: number, totalBytes: number | undefined) => void;
  /** Read size for a path, bytes (default 1 MiB). */
  chunkBytes?: number;
}

/**
 * Reads a centroid CSV (CONTRACTS §2) from a path or a readable stream, in bounded memory, and
 * hands each frame to `onFrame` as soon as the next one starts (and the last at the end).
 * Positions come out in µm (× `pixelSize`), times in s.
 *
 * Bad rows are rejected, counted and the first few quoted in the summary; a file that cannot be
 * read at all rejects the promise with an `IoError` whose `code` is one of `JOSTLE_E_FILE`
 * (missing, a directory, unreadable), `JOSTLE_E_EMPTY` (no header line), `JOSTLE_E_HEADER`
 * (no x/y, no t/frame, a column named twice) or `JOSTLE_E_OPTION` (frame-only file without a
 * frame interval). Bad options throw `RangeError` before anything is read.
 *
 * Complexity: O(file bytes) time, O(longest line + largest frame) memory.
 *
 * @param source a file path, or a readable stream of the file's bytes
 * @param options pixel size (µm), frame interval (s), progress callback and limits
 * @param onFrame called synchronously with each frame; an exception aborts the read
 * @returns the summary: rows, rejected rows with quotes, frames, columns, backwards times, bytes
 *
 * @example
 * const summary = await readCentroids('run-0412.csv', { pixelSize: 0.065 }, (frame) => pipeline.push(frame));
 * summary.rejectedRows; // → e.g. 3
 * summary.rejected[0];  // → { line: 17, reason: 'field x is not a number', text: '0.1,abc,12' }
 */
export async function readCentroids(
  source: string | NodeJS.ReadableStream,
  options: ReadCentroidsOptions,
  onFrame: (frame: Frame) => void,
): Promise<CentroidReadSummary> {
  const { onProgress, chunkBytes = 1 << 20, ...parseOptions } = options;
  if (!(Number.isInteger(chunkBytes) && chunkBytes > 0)) throw new RangeError('readCentroids requires chunkBytes to be a positive integer');
  if (onProgress !== undefined && typeof onProgress !== 'function') throw new RangeError('readCentroids requires onProgress to be a function');
  const parser = new CentroidCsvParser(parseOptions, onFrame);
  let stream: NodeJS.ReadableStream;
  let totalBytes: number | undefined;
  const path = typeof source === 'string' ? source : undefined;
  if (path !== undefined) {
    totalBytes = await fileSize(path);
    stream = createReadStream(path, { highWaterMark: chunkBytes });
  } else {
    stream = source as NodeJS.ReadableStream;
  }
  let bytesRead = 0;
  try {
    for await (const chunk of stream) {
      const bytes = typeof chunk === 'string' ? Buffer.from(chunk, 'utf8') : (chunk as Uint8Array);
      parser.push(bytes);
      bytesRead += bytes.length;
      if (onProgress) onProgress(bytesRead, totalBytes);
    }
  } catch (error) {
    if (error instanceof IoError || !isSystemError(error)) throw withPath(error, path);
    throw new IoError('JOSTLE_E_FILE', 'file cannot be read', { path, cause: error });
  }
  try {
    return parser.finish();
  } catch (error) {
    throw withPath(error, path);
  }
}

async function fileSize(path: string): Promise<number> {
  try {
    const info = await stat(path);
    if (info.isDirectory()) throw new IoError('JOSTLE_E_FILE', 'path is a directory', { path });
    return info.size;
  } catch (error) {
    if (error instanceof IoError) throw error;
    const code = isSystemError(error) ? error.code : undefined;
    throw new IoError('JOSTLE_E_FILE', code === 'ENOENT' ? 'file not found' : 'file cannot be read', { path, cause: error });
  }
}

function isSystemError(error: unknown): error is NodeJS.ErrnoException {
  return error instanceof Error && typeof (error as NodeJS.ErrnoException).code === 'string' && !(error instanceof IoError) &&
    /^E[A-Z]+$/.test((error as NodeJS.ErrnoException).code as string);
}

/** Adds the path to an IoError raised by the parser (which does not know it). */
function withPath(error: unknown, path: string | undefined): unknown {
  if (error instanceof IoError && error.path === undefined && path !== undefined) {
    return new IoError(error.code, error.message, { path, line: error.line, cause: error.cause });
  }
  return error;
}
