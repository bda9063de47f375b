/**
 * The MSD lags jostle keeps, in frame slots: every lag from 1 to `consecutive` (the MSD fit of
 * Michalet 2010 needs the first p lags without holes), then roughly log-spaced lags up to
 * `maxLag`, `count` lags in all, strictly increasing and unique.
 *
 * Complexity O(count).
 *
 * @example
 * msdLags(16, 128, 8) // → Int32Array [1, 2, 3, 4, 5, 6, 7, 8, 11, 16, 23, 32, 45, 64, 91, 128]
 */
export function msdLags(count: number, maxLag: number, consecutive: number): Int32Array {
  if (!Number.isInteger(count) || count < 1) throw new RangeError('msdLags requires an integer count >= 1');
  if (!Number.isInteger(maxLag) || maxLag < 1) throw new RangeError('msdLags requires an integer maxLag >= 1');
  if (!Number.isInteger(consecutive) || consecutive < 1) {
    throw new RangeError('msdLags requires an integer consecutive >= 1');
  }
  const lags: number[] = [];
  const head = Math.min(consecutive, count, maxLag);
  for (let n = 1; n <= head; n++) lags.push(n);
  const remaining = Math.min(count - head, maxLag - head);
  if (remaining > 0) {
    // Geometric spacing from the last consecutive lag to maxLag; rounding may collide, so each lag
    // is at least one more than the previous and the last is exactly maxLag.
    const start = head;
    const ratio = Math.pow(maxLag / start, 1 / remaining);
    for (let i = 1; i <= remaining; i++) {
      const ideal = Math.round(start * Math.pow(ratio, i));
      const previous = lags[lags.length - 1];
      const leftAfter = remaining - i;
      lags.push(Math.min(Math.max(ideal, previous + 1), maxLag - leftAfter));
    }
  }
  return Int32Array.from(lags);
}
