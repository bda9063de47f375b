import type { Medium } from './medium.js';

/** The error code carried by every {@link parseMedium} failure. */
export const MEDIUM_ERROR_CODE = 'JOSTLE_E_MEDIUM';

/**
 * An error from {@link parseMedium}: a medium specification that cannot be read. It crosses the
 * CLI and live-protocol boundaries, so it carries `code = 'JOSTLE_E_MEDIUM'` and the offending
 * text in `value`.
 *
 * @example
 * try { parseMedium('honey'); } catch (error) { (error as MediumError).code; } // → 'JOSTLE_E_MEDIUM'
 */
export class MediumError extends Error {
  /** Always `'JOSTLE_E_MEDIUM'`. */
  readonly code: typeof MEDIUM_ERROR_CODE;
  /** The specification (or its numeric part) that was rejected. */
  readonly value: string;

  /**
   * @param message a fixed phrase, without a full stop
   * @param value the rejected text
   */
  constructor(message: string, value: string) {
    super(message);
    this.name = 'MediumError';
    this.code = MEDIUM_ERROR_CODE;
    this.value = value;
  }
}

/** A decimal number, nothing else (no hex, no `Infinity`, no empty string). */
const DECIMAL = /^[+-]?(\d+\.?\d*|\.\d+)([eE][+-]?\d+)?$/;

/**
 * Reads the `--medium` option (CONTRACTS §1):
 *
 * - `water` (the default medium),
 * - `glycerol-water:<glycerol mass fraction 0..1>`,
 * - `viscosity:<mPa·s>` (a fixed viscosity > 0, not temperature dependent).
 *
 * Leading and trailing white space is ignored and the keyword is case-insensitive. Anything else
 * throws a {@link MediumError} (code `JOSTLE_E_MEDIUM`) whose message is a fixed phrase quoting
 * the bad value. Parsing happens once, at the door, never per sample.
 *
 * Complexity: O(length of spec).
 *
 * @param spec the option text
 * @returns the medium (a fresh, frozen object)
 * @throws MediumError for an unknown keyword, a missing, non-numeric or out-of-range number
 * @example
 * parseMedium('water')                // → { kind: 'water' }
 * parseMedium('glycerol-water:0.5')   // → { kind: 'glycerol-water', glycerolMassFraction: 0.5 }
 * parseMedium('viscosity:1.2')        // → { kind: 'viscosity', milliPascalSeconds: 1.2 }
 * parseMedium('glycerol-water:1.5')   // throws MediumError: glycerol mass fraction must be in [0, 1], got "1.5"
 */
export function parseMedium(spec: string): Medium {
  if (typeof spec !== 'string') {
    throw new MediumError(`medium must be a string, got ${JSON.stringify(String(spec))}`, String(spec));
  }
  const text = spec.trim();
  const colon = text.indexOf(':');
  const keyword = (colon < 0 ? text : text.slice(0, colon)).toLowerCase();
  const argument = colon < 0 ? null : text.slice(colon + 1).trim();

  if (keyword === 'water') {
    if (argument !== null) throw new MediumError(`medium water takes no value, got ${JSON.stringify(spec)}`, spec);
    return Object.freeze({ kind: 'water' });
  }
  if (keyword === 'glycerol-water') {
    if (argument === null || argument === '') {
      throw new MediumError(`medium glycerol-water needs a glycerol mass fraction, got ${JSON.stringify(spec)}`, spec);
    }
    const fraction = DECIMAL.test(argument) ? Number(argument) : Number.NaN;
    if (!(fraction >= 0 && fraction <= 1)) {
      throw new MediumError(`glycerol mass fraction must be in [0, 1], got ${JSON.stringify(argument)}`, argument);
    }
    return Object.freeze({ kind: 'glycerol-water', glycerolMassFraction: fraction });
  }
  if (keyword === 'viscosity') {
    if (argument === null || argument === '') {
      throw new MediumError(`medium viscosity needs a value in mPa·s, got ${JSON.stringify(spec)}`, spec);
    }
    const value = DECIMAL.test(argument) ? Number(argument) : Number.NaN;
    if (!(value > 0 && Number.isFinite(value))) {
      throw new MediumError(`viscosity must be a finite number of mPa·s above 0, got ${JSON.stringify(argument)}`, argument);
    }
    return Object.freeze({ kind: 'viscosity', milliPascalSeconds: value });
  }
  throw new MediumError(
    `medium must be water, glycerol-water:<mass fraction> or viscosity:<mPa·s>, got ${JSON.stringify(spec)}`,
    spec,
  );
}
