import { parseDecimal } from './parseDecimal.js';

/**
 * Reads a decimal number from a string with the same grammar as `parseDecimal` (so `NaN`,
 * `Infinity`, hex and empty text are not numbers), after trimming blanks.
 *
 * Complexity: O(length).
 *
 * @param text the field
 * @returns the value (±Infinity on overflow), or NaN when the text is not a decimal number
 *
 * @example
 * parseDecimalText(' 21.5 '); // → 21.5
 * parseDecimalText('0x10');   // → NaN
 */
export function parseDecimalText(text: string): number {
  const bytes = Buffer.from(text.trim(), 'utf8'); // non-ASCII becomes bytes ≥ 0x80: rejected
  return parseDecimal(bytes, 0, bytes.length);
}
