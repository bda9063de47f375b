import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import { decimalEnd, parseDecimal, parseDecimalPrefix } from '../../tools/io/parseDecimal.js';
import { parseDecimalText } from '../../tools/io/parseDecimalText.js';

const parse = (text: string): number => {
  const bytes = Buffer.from(text, 'utf8');
  return parseDecimal(bytes, 0, bytes.length);
};

// Decimal strings of every shape Number() reads as a decimal: optional sign (leading + too),
// integer part, fraction with or without digits (5., .5), optional exponent with sign.
const digits = (min: number, max: number) => fc.string({ unit: fc.constantFrom(...'0123456789'), minLength: min, maxLength: max });
const decimalText = fc
  .tuple(
    fc.constantFrom('', '+', '-'),
    fc.oneof(
      fc.tuple(digits(1, 25), fc.constantFrom('', '.'), digits(0, 25)).map(([a, dot, b]) => a + dot + (dot ? b : '')),
      digits(1, 25).map((b) => '.' + b),
    ),
    fc.option(fc.tuple(fc.constantFrom('e', 'E'), fc.constantFrom('', '+', '-'), fc.integer({ min: 0, max: 400 })), { nil: undefined }),
  )
  .map(([sign, body, exponent]) => sign + body + (exponent ? exponent[0] + exponent[1] + exponent[2] : ''));

describe('parseDecimal', () => {
  it('parseDecimal(bytes) equals Number(text) on random decimal strings', () => {
    // Reference: ECMA-262 StringToNumber (Number()) — correctly rounded decimal conversion.
    fc.assert(
      fc.property(decimalText, (text) => {
        expect(Object.is(parse(text), Number(text))).toBe(true);
      }),
      { numRuns: 20_000, seed: 4242 },
    );
  });

  it('parseDecimal(bytes) equals Number(String(x)) for random doubles', () => {
    // ECMA-262 Number::toString gives the shortest round-trip text; reading it must give x back.
    fc.assert(
      fc.property(fc.double({ noNaN: true, noDefaultInfinity: true }), (x) => {
        const text = String(x);
        expect(Object.is(parse(text), Number(text))).toBe(true);
      }),
      { numRuns: 20_000, seed: 17 },
    );
  });

  it('parseDecimal reads the edge shapes like Number()', () => {
    // ECMA-262 StrDecimalLiteral: each shape below is a valid decimal literal for Number().
    for (const text of ['+5', '-5', '.5', '5.', '-.5e3', '5.e3', '0', '-0', '1e-300', '1e-330', '2.2250738585072014e-308',
      '4.9e-324', '1.7976931348623157e308', '9007199254740993', '0.1', '123456789012345678901234567890', '1e22', '1e23',
      '000012.5000', '1E+2']) {
      expect(Object.is(parse(text), Number(text)), text).toBe(true);
    }
  });

  it('parseDecimal(bytes) gives ±Infinity on overflow, like Number()', () => {
    // IEEE 754-2019 §7.4: overflow rounds to infinity; Number('1e400') is Infinity.
    expect(parse('1e400')).toBe(Infinity);
    expect(parse('-1e99999999')).toBe(-Infinity);
  });

  it('parseDecimal(bytes) returns NaN for text that is not a decimal number', () => {
    // CONTRACTS.md §2: non-numeric fields are rejected; NaN and Infinity words are not numbers here.
    for (const text of ['', '+', '-', '.', 'e5', '1e', '1e+', '1..2', '1.2.3', 'NaN', 'nan', 'Infinity', '-inf', '0x10',
      '1_000', ' 1', '1 ', '1,5', 'abc', '--1', '+-1', '½']) {
      expect(parse(text), JSON.stringify(text)).toBeNaN();
    }
  });

  it('parseDecimal(bytes, start, end) reads only its slice', () => {
    // common practice, no source: a slice parser must not look outside [start, end).
    const bytes = Buffer.from('9,-12.75,9');
    expect(parseDecimal(bytes, 2, 8)).toBe(-12.75);
  });
});

describe('parseDecimalText', () => {
  it('parseDecimalText(text) trims blanks and rejects non-ASCII digits', () => {
    // common practice, no source: CSV readers trim blanks around unquoted numbers.
    expect(parseDecimalText('  21.5\t')).toBe(21.5);
    expect(parseDecimalText('٣')).toBeNaN(); // Arabic-Indic digit three: not ASCII
  });
});

describe('parseDecimalPrefix', () => {
  it('reads a decimal followed by anything: the value is Number() of the bytes it consumed, and no longer prefix is a number', () => {
    // Reference: ECMA-262 StringToNumber (Number()) on the consumed prefix; "longest" checked by
    // trying the prefix one byte longer (common practice, no source).
    const suffix = fc.constantFrom('', ',', ',1.5', ' ', 'x', 'e', 'E+', 'e-,', '.', '..5', '"', '\t');
    fc.assert(
      fc.property(decimalText, suffix, (text, tail) => {
        const bytes = Buffer.from(text + tail, 'utf8');
        const value = parseDecimalPrefix(bytes, 0, bytes.length);
        const consumed = decimalEnd;
        expect(consumed).toBeGreaterThan(0);
        const prefix = (text + tail).slice(0, consumed);
        expect(Object.is(value, Number(prefix))).toBe(true);
        if (consumed < bytes.length) expect(Number.isNaN(parse((text + tail).slice(0, consumed + 1))) || (text + tail)[consumed] === 'e' || (text + tail)[consumed] === 'E').toBe(true);
      }),
      { numRuns: 10_000, seed: 77 },
    );
  });

  it('parseDecimalPrefix("1.5,2") is 1.5 and stops at the comma; on "x" it is NaN and stops at the start', () => {
    const bytes = Buffer.from('1.5,2');
    expect(parseDecimalPrefix(bytes, 0, 5)).toBe(1.5);
    expect(decimalEnd).toBe(3);
    expect(parseDecimalPrefix(Buffer.from('x'), 0, 1)).toBeNaN();
    expect(decimalEnd).toBe(0);
    expect(parseDecimalPrefix(Buffer.from('2e,'), 0, 3)).toBe(2); // a marker without digits is not part of it
    expect(decimalEnd).toBe(1);
  });
});
