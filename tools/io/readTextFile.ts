import { readFile, stat } from 'node:fs/promises';
import { IoError } from './ioError.js';

/**
 * Reads a small text file (tags, temperature log) whole, as UTF-8, turning file-system failures
 * into `IoError` `JOSTLE_E_FILE` with a fixed phrase: `file not found`, `path is a directory`,
 * `file too large`, `file cannot be read`.
 *
 * Complexity: O(file size) time and memory; refuses files above `maxBytes`.
 *
 * @param path the file
 * @param maxBytes largest size accepted, bytes (default 64 MiB)
 * @returns the text
 *
 * @example
 * const text = await readTextFile('tags.csv'); // → 'label,start,end,note\n...'
 */
export async function readTextFile(path: string, maxBytes = 64 * 1024 * 1024): Promise<string> {
  try {
    const info = await stat(path);
    if (info.isDirectory()) throw new IoError('JOSTLE_E_FILE', 'path is a directory', { path });
    if (info.size > maxBytes) throw new IoError('JOSTLE_E_FILE', 'file too large', { path });
    return await readFile(path, 'utf8');
  } catch (error) {
    if (error instanceof IoError) throw error;
    const code = (error as NodeJS.ErrnoException | undefined)?.code;
    throw new IoError('JOSTLE_E_FILE', code === 'ENOENT' ? 'file not found' : 'file cannot be read', { path, cause: error });
  }
}
