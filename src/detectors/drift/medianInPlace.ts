/**
 * Median of the first `n` entries of `values`, found by Hoare's quickselect (Hoare 1961,
 * CACM 4:321, "Algorithm 65: Find") with a middle pivot. The entries are reordered in place:
 * pass a scratch copy. The mean of the two middle order statistics when n is even.
 * O(n) expected, no allocation.
 *
 * @param values scratch buffer, reordered
 * @param n number of entries to use (≥ 1)
 * @returns the median, or NaN when n < 1
 * @example
 * medianInPlace(Float64Array.of(5, 1, 4, 2), 4); // → 3
 */
export function medianInPlace(values: Float64Array, n: number): number {
  if (n < 1) return Number.NaN;
  const upper = selectInPlace(values, n, n >> 1);
  if ((n & 1) === 1) return upper;
  // After selection every entry left of n/2 is ≤ upper: the lower middle is their maximum.
  let lower = -Infinity;
  for (let i = 0; i < n >> 1; i++) if (values[i] > lower) lower = values[i];
  return 0.5 * (lower + upper);
}

function selectInPlace(values: Float64Array, n: number, rank: number): number {
  let left = 0;
  let right = n - 1;
  while (left < right) {
    const pivot = values[(left + right) >> 1];
    let i = left;
    let j = right;
    while (i <= j) {
      while (values[i] < pivot) i++;
      while (values[j] > pivot) j--;
      if (i <= j) {
        const swap = values[i];
        values[i] = values[j];
        values[j] = swap;
        i++;
        j--;
      }
    }
    if (rank <= j) right = j;
    else if (rank >= i) left = i;
    else return values[rank];
  }
  return values[rank];
}
