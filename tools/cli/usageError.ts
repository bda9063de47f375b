/**
 * A usage error: bad flags, a contradictory setting, or a file that cannot be read at all. The
 * command prints `jostle: <message>` as one line on stderr and exits with status 2.
 */
export class UsageError extends Error {
  readonly code: string;
  constructor(message: string, code = 'JOSTLE_E_USAGE') {
    super(message);
    this.code = code;
  }
}

/** Parses a number option, or throws a UsageError naming the option. */
export function numberOption(name: string, value: string | undefined, check: (n: number) => boolean = Number.isFinite): number | undefined {
  if (value === undefined) return undefined;
  const n = Number(value);
  if (value.trim() === '' || !Number.isFinite(n) || !check(n)) throw new UsageError(`option ${name} needs a valid number, got '${value}'`);
  return n;
}
