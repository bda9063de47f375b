/**
 * Exact powers of ten 10^0 … 10^22: every one is representable in a float64, which is what
 * makes Clinger's fast path exact.
 */
const POWERS_OF_TEN = new Float64Array(23);
for (let k = 0, p = 1; k < 23; k++, p *= 10) POWERS_OF_TEN[k] = p;

/** Mantissas of at most 15 significant digits are exact integers in a float64 (< 2^53). */
const FAST_PATH_DIGITS = 15;

const ZERO = 48;
const NINE = 57;
const PLUS = 43;
const MINUS = 45;
const DOT = 46;
const LOWER_E = 101;
const UPPER_E = 69;

/**
 * Parses a decimal number straight from bytes, without making a string in the common case.
 *
 * Grammar (ASCII): `[+-]? (digits [. digits?] | . digits) ([eE] [+-]? digits)?` — the decimal
 * subset of what `Number()` accepts, so `+5`, `.5`, `5.`, `-0`, `1e-300` are read; `NaN`,
 * `Infinity`, hex, empty input and surrounding whitespace are not (the caller trims). Anything
 * else returns `NaN`. Overflow gives ±Infinity, as `Number()` does.
 *
 * Method: Clinger's fast path (W. D. Clinger, "How to read floating point numbers accurately",
 * PLDI 1990): with a mantissa m of at most 15 significant digits and |e| ≤ 22, both m and 10^|e|
 * are exact doubles, so one IEEE multiplication or division gives the correctly rounded result.
 * Every other input falls back to `Number()` on the (already validated) text, so the result is
 * always identical to `Number(text)`.
 *
 * Complexity: O(end - start), no allocation on the fast path.
 *
 * @param bytes the buffer holding the text
 * @param start index of the first byte
 * @param end index one past the last byte
 * @returns the value, or NaN when the bytes are not a decimal number
 *
 * @example
 * parseDecimal(Buffer.from('-12.5e-1'), 0, 8); // → -1.25
 * parseDecimal(Buffer.from('5.'), 0, 2);       // → 5
 * parseDecimal(Buffer.from('nan'), 0, 3);      // → NaN
 */
export function parseDecimal(bytes: Uint8Array, start: number, end: number): number {
  const value = parseDecimalPrefix(bytes, start, end);
  return decimalEnd === end ? value : NaN;
}

/**
 * Where the last {@link parseDecimalPrefix} stopped (one past the number's last byte; the start
 * when no number was read). A module-level cursor, so that the hot loop allocates nothing.
 */
export let decimalEnd = 0;

/**
 * Parses the longest decimal number (the grammar of {@link parseDecimal}) at the start of
 * [start, end) and sets {@link decimalEnd} to where it stopped: a CSV reader can then check that
 * a comma or the line's end follows, with no separate scan for the field's end. Returns NaN (and
 * decimalEnd = start) when no number starts there; the value is the one `parseDecimal` gives for
 * exactly the bytes [start, decimalEnd).
 *
 * @example
 * parseDecimalPrefix(Buffer.from('1.5,2'), 0, 5); // → 1.5, decimalEnd = 3
 */
export function parseDecimalPrefix(bytes: Uint8Array, start: number, end: number): number {
  decimalEnd = start;
  let i = start;
  let negative = false;
  if (i < end && (bytes[i] === PLUS || bytes[i] === MINUS)) {
    negative = bytes[i] === MINUS;
    i++;
  }
  let mantissa = 0;
  let significantDigits = 0;
  let scale = 0; // power of ten contributed by fraction digits
  let sawDigit = false;
  // Integer part. Leading zeros are not significant.
  while (i < end) {
    const c = bytes[i];
    if (c < ZERO || c > NINE) break;
    sawDigit = true;
    if (mantissa !== 0 || c !== ZERO) {
      mantissa = mantissa * 10 + (c - ZERO);
      significantDigits++;
    }
    i++;
  }
  if (i < end && bytes[i] === DOT) {
    i++;
    while (i < end) {
      const c = bytes[i];
      if (c < ZERO || c > NINE) break;
      sawDigit = true;
      if (mantissa !== 0 || c !== ZERO) {
        mantissa = mantissa * 10 + (c - ZERO);
        significantDigits++;
      }
      scale--;
      i++;
    }
  }
  if (!sawDigit) return NaN;
  let exponent = 0;
  if (i < end && (bytes[i] === LOWER_E || bytes[i] === UPPER_E)) {
    let k = i + 1;
    let exponentNegative = false;
    if (k < end && (bytes[k] === PLUS || bytes[k] === MINUS)) {
      exponentNegative = bytes[k] === MINUS;
      k++;
    }
    let exponentDigits = 0;
    while (k < end) {
      const c = bytes[k];
      if (c < ZERO || c > NINE) break;
      // Saturate: beyond 1e6 the value is 0 or Infinity whatever follows.
      if (exponent < 1_000_000) exponent = exponent * 10 + (c - ZERO);
      exponentDigits++;
      k++;
    }
    // An exponent marker without digits is not part of the number (it ends before the marker).
    if (exponentDigits > 0) {
      i = k;
      if (exponentNegative) exponent = -exponent;
    } else {
      exponent = 0;
    }
  }
  decimalEnd = i;
  if (significantDigits <= FAST_PATH_DIGITS) {
    if (mantissa === 0) return negative ? -0 : 0;
    const e = scale + exponent;
    if (e >= 0 && e <= 22) return negative ? -(mantissa * POWERS_OF_TEN[e]) : mantissa * POWERS_OF_TEN[e];
    if (e < 0 && e >= -22) return negative ? -(mantissa / POWERS_OF_TEN[-e]) : mantissa / POWERS_OF_TEN[-e];
  }
  // Slow path: long mantissa or large exponent. The text is validated ASCII, so a byte-to-char
  // copy is exact, and Number() rounds correctly.
  let text = '';
  for (let k = start; k < i; k++) text += String.fromCharCode(bytes[k]);
  return Number(text);
}
