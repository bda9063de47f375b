/**
 * Median of the first `n` entries of `values`, found by Hoare's quickselect (Hoare 1961,
 * CACM 4:321, "Algorithm 65: Find") with a middle pivot. The entries are reordered in place:
 * pass a scratch copy. The mean of the two middle order statistics when n is even.
 * O(n) expected, no allocation.
 *
 * A caller that knows roughly where the median lies (the drift detector: the frame's mean step,
 * give or take a few standard errors) passes `centre` and `halfWidth`: when both middle entries
 * fall inside that window, only the window's entries are selected over (after one counting pass
 * whose only branch is rarely taken), 4–6× faster on fresh data (1,000 normal steps, a window
 * of ± 4 standard errors: 2–3 µs against 12–15 µs, tools/bench/medianSelection.ts); otherwise
 * the full selection runs. The result is
 * the same either way.
 *
 * @param values scratch buffer, reordered
 * @param n number of entries to use (≥ 1)
 * @param centre optional guess of the median
 * @param halfWidth optional half-width of the window around `centre` (> 0)
 * @returns the median, or NaN when n < 1
 * @example
 * medianInPlace(Float64Array.of(5, 1, 4, 2), 4); // → 3
 */
export function medianInPlace(values: Float64Array, n: number, centre?: number, halfWidth?: number): number {
  if (n < 1) return Number.NaN;
  if (centre !== undefined && halfWidth !== undefined && Number.isFinite(centre) && halfWidth > 0 && Number.isFinite(halfWidth)) {
    const near = medianInWindow(values, n, centre, halfWidth);
    if (!Number.isNaN(near)) return near;
  }
  const upper = selectInPlace(values, n, n >> 1);
  if ((n & 1) === 1) return upper;
  // After selection every entry left of n/2 is ≤ upper: the lower middle is their maximum.
  let lower = -Infinity;
  for (let i = 0; i < n >> 1; i++) if (values[i] > lower) lower = values[i];
  return 0.5 * (lower + upper);
}

/**
 * The median when both middle order statistics lie within `halfWidth` of `centre`: one pass
 * counts the entries below the window and swaps those inside it to the front, then quickselect
 * runs on the window only. NaN when the middle ranks fall outside (the caller then selects over
 * everything). Exact either way: with d = v − centre rounded, "below" (d < −halfWidth), "inside"
 * (|d| ≤ halfWidth) and "above" are contiguous ranges of v, since d is monotone in v. The pass
 * is written so that its one branch is the rarely taken "inside" (a two-sided test or a ternary
 * count around the median mispredicts half the time: 4–5× slower on fresh data).
 */
function medianInWindow(values: Float64Array, n: number, centre: number, halfWidth: number): number {
  let below = 0;
  let inside = 0;
  const negative = -halfWidth;
  for (let i = 0; i < n; i++) {
    const v = values[i];
    const d = v - centre;
    below += +(d < negative);
    if (Math.abs(d) <= halfWidth) {
      // swap to the front (not overwrite): on a miss the full selection needs every entry
      values[i] = values[inside];
      values[inside++] = v;
    }
  }
  const upperRank = n >> 1;
  const lowerRank = (n & 1) === 1 ? upperRank : upperRank - 1;
  if (lowerRank < below || upperRank >= below + inside) return Number.NaN;
  const rank = upperRank - below;
  const upper = selectInPlace(values, inside, rank);
  if (lowerRank === upperRank) return upper;
  let lower = -Infinity;
  for (let i = 0; i < rank; i++) if (values[i] > lower) lower = values[i];
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
