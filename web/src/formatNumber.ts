/**
 * A number for display with 3 significant figures; exponent form outside 1e-3 … 1e5; '–' for
 * non-finite values. O(1).
 *
 * @example
 * fmt(0.43847) // → '0.438'
 * fmt(2.5e-5)  // → '2.50e-5'
 */
export function fmt(v: number): string {
  if (!Number.isFinite(v)) return '–';
  const a = Math.abs(v);
  return a !== 0 && (a < 1e-3 || a >= 1e5) ? v.toExponential(2) : Number(v.toPrecision(3)).toString();
}
