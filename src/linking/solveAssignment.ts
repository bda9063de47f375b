/**
 * Rectangular linear assignment: choose at most one column per row and one row per column so
 * that the total cost is minimal.
 *
 * Method: shortest augmenting paths with dual potentials (the augmentation phase of
 * Jonker & Volgenant 1987, Computing 38:325, "A shortest augmenting path algorithm for dense and
 * sparse linear assignment problems"; the same recurrence as the O(n²m) Hungarian method of
 * Kuhn 1955 / Munkres 1957). Rows are added one at a time; for each new row a Dijkstra-like scan
 * over the reduced costs `cost − u_row − v_col` finds the cheapest augmenting path, and the
 * potentials are moved so that reduced costs stay non-negative.
 *
 * Forbidden pairs: an entry `+Infinity` may never be chosen. Internally forbidden entries are
 * replaced by a big constant M larger than any possible sum of finite costs, which makes the
 * solver maximise the number of finite pairs first and then minimise their total cost; pairs that
 * fell on M are reported as unassigned (−1).
 *
 * Scratch buffers are kept at module level and grow by doubling, so repeated calls allocate only
 * the returned `Int32Array` (or nothing when `out` is given). Not re-entrant (jostle's pipeline is
 * synchronous).
 *
 * Complexity: O(k²·K) time with k = min(n, m), K = max(n, m); O(n + m) extra memory.
 *
 * @param cost row-major n×m costs (any finite real or `+Infinity`); not mutated.
 * @param n number of rows.
 * @param m number of columns.
 * @param out optional output of length ≥ n (reused to avoid allocation).
 * @returns for each row the chosen column, or −1 when the row is left unassigned.
 * @throws RangeError when n or m is not a non-negative integer, `cost` is shorter than n·m,
 *   or an entry is NaN or −Infinity.
 *
 * @example
 * solveAssignment(Float64Array.of(4, 1, 3,
 *                                 2, 0, 5,
 *                                 3, 2, 2), 3, 3);
 * // → Int32Array [1, 0, 2]   (total 1 + 2 + 2 = 5)
 * solveAssignment(Float64Array.of(1, Infinity), 2, 1);
 * // → Int32Array [0, -1]
 */
export function solveAssignment(
  cost: Float64Array,
  n: number,
  m: number,
  out?: Int32Array,
): Int32Array {
  if (!Number.isInteger(n) || n < 0) throw new RangeError('solveAssignment requires n to be a non-negative integer');
  if (!Number.isInteger(m) || m < 0) throw new RangeError('solveAssignment requires m to be a non-negative integer');
  if (cost.length < n * m) throw new RangeError('solveAssignment requires cost to hold n·m entries');
  if (out !== undefined && out.length < n) throw new RangeError('solveAssignment requires out to hold n entries');
  const result = out ?? new Int32Array(n);
  result.fill(-1, 0, n);
  if (n === 0 || m === 0) return result;

  // One pass: validate, and find the finite range for the big-M substitution.
  let minFinite = Infinity;
  let maxFinite = -Infinity;
  const total = n * m;
  for (let index = 0; index < total; index++) {
    const value = cost[index];
    if (value === Infinity) continue;
    if (!(value > -Infinity)) throw new RangeError('solveAssignment requires costs finite or +Infinity');
    if (value < minFinite) minFinite = value;
    if (value > maxFinite) maxFinite = value;
  }
  if (minFinite === Infinity) return result; // every pair forbidden

  // Work on the orientation with rows ≤ columns; a transposed view is two strides.
  const transposed = n > m;
  const rows = transposed ? m : n;
  const cols = transposed ? n : m;
  const rowStride = transposed ? 1 : m;
  const colStride = transposed ? m : 1;

  // Finite costs are shifted into [0, range]; every complete assignment has exactly `rows` pairs,
  // so any M > rows·range makes one more forbidden pair always worse than any finite difference.
  const range = maxFinite - minFinite;
  const bigM = 2 * (rows * range + 1);

  ensureScratch(rows, cols);
  const u = scratchU;
  const v = scratchV;
  const minv = scratchMinv;
  const p = scratchP; // p[j] = 1-based row assigned to column j (0 = free); column 0 is a sentinel
  const way = scratchWay;
  const used = scratchUsed;
  u.fill(0, 0, rows + 1);
  v.fill(0, 0, cols + 1);
  p.fill(0, 0, cols + 1);
  way.fill(0, 0, cols + 1);

  for (let i = 1; i <= rows; i++) {
    p[0] = i;
    let j0 = 0;
    minv.fill(Infinity, 0, cols + 1);
    used.fill(0, 0, cols + 1);
    do {
      used[j0] = 1;
      const i0 = p[j0];
      const rowBase = (i0 - 1) * rowStride;
      const ui0 = u[i0];
      let delta = Infinity;
      let j1 = 0;
      for (let j = 1; j <= cols; j++) {
        if (used[j] === 1) continue;
        const raw = cost[rowBase + (j - 1) * colStride];
        const entry = raw === Infinity ? bigM : raw - minFinite;
        const reduced = entry - ui0 - v[j];
        if (reduced < minv[j]) {
          minv[j] = reduced;
          way[j] = j0;
        }
        if (minv[j] < delta) {
          delta = minv[j];
          j1 = j;
        }
      }
      for (let j = 0; j <= cols; j++) {
        if (used[j] === 1) {
          u[p[j]] += delta;
          v[j] -= delta;
        } else {
          minv[j] -= delta;
        }
      }
      j0 = j1;
    } while (p[j0] !== 0);
    // Flip the augmenting path back to the sentinel.
    do {
      const j1 = way[j0];
      p[j0] = p[j1];
      j0 = j1;
    } while (j0 !== 0);
  }

  for (let j = 1; j <= cols; j++) {
    const i = p[j];
    if (i === 0) continue;
    const row = transposed ? j - 1 : i - 1;
    const col = transposed ? i - 1 : j - 1;
    if (cost[row * m + col] === Infinity) continue; // fell on big M: leave unassigned
    result[row] = col;
  }
  return result;
}

let scratchU = new Float64Array(16);
let scratchV = new Float64Array(16);
let scratchMinv = new Float64Array(16);
let scratchP = new Int32Array(16);
let scratchWay = new Int32Array(16);
let scratchUsed = new Uint8Array(16);

/** Grow the module scratch by doubling so that it holds rows + 1 and cols + 1 entries. */
function ensureScratch(rows: number, cols: number): void {
  if (scratchU.length < rows + 1) {
    let size = scratchU.length;
    while (size < rows + 1) size *= 2;
    scratchU = new Float64Array(size);
  }
  if (scratchV.length < cols + 1) {
    let size = scratchV.length;
    while (size < cols + 1) size *= 2;
    scratchV = new Float64Array(size);
    scratchMinv = new Float64Array(size);
    scratchP = new Int32Array(size);
    scratchWay = new Int32Array(size);
    scratchUsed = new Uint8Array(size);
  }
}
