/** Stable codes of errors raised when a file cannot be read at all (see tools/io/README.md). */
export type IoErrorCode =
  | 'JOSTLE_E_FILE'
  | 'JOSTLE_E_EMPTY'
  | 'JOSTLE_E_HEADER'
  | 'JOSTLE_E_OPTION'
  | 'JOSTLE_E_EXPORT';

/**
 * Error thrown by tools/io when a whole file cannot be used (as opposed to one bad row, which is
 * rejected and counted). The message is a fixed phrase without a full stop; the offending path,
 * line or column travel as fields, so callers can print one clear line.
 *
 * @example
 * const error = new IoError('JOSTLE_E_HEADER', 'header lacks an x or y column', { path: 'a.csv', line: 1 });
 * error.code;    // → 'JOSTLE_E_HEADER'
 * error.message; // → 'header lacks an x or y column'
 */
export class IoError extends Error {
  /** Stable error code, `JOSTLE_E_...`. */
  readonly code: IoErrorCode;
  /** File involved, when there is one. */
  readonly path: string | undefined;
  /** 1-based line number involved, when there is one. */
  readonly line: number | undefined;

  constructor(code: IoErrorCode, message: string, where: { path?: string; line?: number; cause?: unknown } = {}) {
    super(message, where.cause === undefined ? undefined : { cause: where.cause });
    this.name = 'IoError';
    this.code = code;
    this.path = where.path;
    this.line = where.line;
  }
}
