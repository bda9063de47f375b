import type { Frame } from '../../src/frame.js';
import { IoError } from './ioError.js';

/** Which optional columns a frames CSV carries (x, y, frame and t always do). */
export interface FrameCsvColumns {
  z: boolean;
  id: boolean;
  intensity: boolean;
}

/**
 * The header line of a frames CSV (CONTRACTS §2), newline included: `frame,t,x,y` then the
 * optional `z`, `id`, `intensity` in that order.
 *
 * @example
 * framesCsvHeader({ z: false, id: true, intensity: false }); // → 'frame,t,x,y,id\n'
 */
export function framesCsvHeader(columns: FrameCsvColumns): string {
  return `frame,t,x,y${columns.z ? ',z' : ''}${columns.id ? ',id' : ''}${columns.intensity ? ',intensity' : ''}\n`;
}

/**
 * The rows of one frame as CSV text (one line per centroid, `\n` ends). Numbers are written with
 * `String(number)`, the shortest text that reads back to the same double (ECMA-262
 * Number::toString), so writing then reading loses nothing. Positions in µm, t in s.
 *
 * Complexity: O(frame.count).
 *
 * @throws IoError `JOSTLE_E_EXPORT` when the frame lacks a column the header declares
 *
 * @example
 * formatFrameCsvRows({ index: 3, t: 0.15, count: 1, x: Float64Array.of(1.5), y: Float64Array.of(2) },
 *   { z: false, id: false, intensity: false }); // → '3,0.15,1.5,2\n'
 */
export function formatFrameCsvRows(frame: Frame, columns: FrameCsvColumns): string {
  if ((columns.z && !frame.z) || (columns.id && !frame.id) || (columns.intensity && !frame.intensity)) {
    throw new IoError('JOSTLE_E_EXPORT', 'frame lacks a column the header declares');
  }
  const head = `${frame.index},${frame.t},`;
  let text = '';
  for (let k = 0; k < frame.count; k++) {
    text += head + frame.x[k] + ',' + frame.y[k];
    if (columns.z) text += ',' + (frame.z as Float64Array)[k];
    if (columns.id) text += ',' + (frame.id as Uint32Array)[k];
    if (columns.intensity) text += ',' + (frame.intensity as Float64Array)[k];
    text += '\n';
  }
  return text;
}

/**
 * Writes frames as a centroid CSV of CONTRACTS §2 (positions µm, so read it back with pixel size
 * 1), honouring back-pressure: text is written in batches of about `batchBytes` and the writer
 * waits for `drain` when the stream asks. The optional columns are those of the first frame
 * unless `columns` says otherwise. The stream is not ended.
 *
 * Complexity: O(total centroids); memory O(batchBytes).
 *
 * @param frames frames in order (sync or async iterable)
 * @param out where to write
 * @param options `columns` (default: from the first frame), `batchBytes` (default 65 536)
 * @returns rows, frames and characters written
 *
 * @example
 * await writeFramesCsv(frames, createWriteStream('export.csv'));
 * // export.csv → 'frame,t,x,y\n0,0,1.5,2\n...'
 */
export async function writeFramesCsv(
  frames: Iterable<Frame> | AsyncIterable<Frame>,
  out: NodeJS.WritableStream,
  options: { columns?: FrameCsvColumns; batchBytes?: number } = {},
): Promise<{ rows: number; frames: number; characters: number }> {
  const batchBytes = options.batchBytes ?? 65_536;
  if (!(Number.isInteger(batchBytes) && batchBytes > 0)) throw new RangeError('writeFramesCsv requires batchBytes to be a positive integer');
  let columns = options.columns;
  let pending = '';
  let rows = 0;
  let count = 0;
  let characters = 0;
  const flush = async (): Promise<void> => {
    if (pending.length === 0) return;
    characters += pending.length;
    const more = out.write(pending);
    pending = '';
    if (!more) await new Promise<void>((resolve) => out.once('drain', resolve));
  };
  for await (const frame of frames) {
    if (columns === undefined) {
      columns = { z: frame.z !== undefined, id: frame.id !== undefined, intensity: frame.intensity !== undefined };
    }
    if (count === 0) pending += framesCsvHeader(columns);
    pending += formatFrameCsvRows(frame, columns);
    rows += frame.count;
    count++;
    if (pending.length >= batchBytes) await flush();
  }
  if (count === 0) pending += framesCsvHeader(columns ?? { z: false, id: false, intensity: false });
  await flush();
  return { rows, frames: count, characters };
}
