/** Columnar chart data for uPlot: `[x, ...ys]`, x ascending, null for gaps. */
export type Columns = (number | null)[][];

/**
 * Thins columnar data to at most `maxPoints` rows by an even stride, always keeping the first
 * and the newest row, so a chart never gets more points than it can show (uPlot draws past
 * about 4× its pixel width for nothing). Rows whose x is not finite are dropped first.
 *
 * Complexity O(rows · columns) time, O(maxPoints · columns) memory.
 *
 * @example
 * boundColumns([[0, 1, 2, 3, 4], [5, 6, 7, 8, 9]], 3) // → [[0, 2, 4], [5, 7, 9]]
 */
export function boundColumns(columns: Columns, maxPoints: number): Columns {
  if (!(maxPoints >= 2) || !Number.isInteger(maxPoints)) throw new RangeError('boundColumns: maxPoints must be an integer ≥ 2');
  const xs = columns[0] ?? [];
  const keep: number[] = [];
  for (let i = 0; i < xs.length; i++) {
    const x = xs[i];
    if (typeof x === 'number' && Number.isFinite(x)) keep.push(i);
  }
  let rows = keep;
  if (keep.length > maxPoints) {
    rows = [];
    const step = (keep.length - 1) / (maxPoints - 1);
    for (let k = 0; k < maxPoints; k++) rows.push(keep[Math.round(k * step)]);
  }
  return columns.map((column) => rows.map((i) => {
    const v = column[i];
    return typeof v === 'number' && Number.isFinite(v) ? v : null;
  }));
}
