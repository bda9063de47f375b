/**
 * Sparse linear assignment: rows and their allowed columns given as compressed rows (CSR); pairs
 * not listed are forbidden. Finds a matching with the most pairs and, among those, the least total
 * cost — the same optimum as {@link solveAssignment} with `Infinity` for unlisted pairs.
 *
 * Method: successive shortest augmenting paths on the sparse graph (the sparse variant of
 * Jonker & Volgenant 1987, Computing 38:325), each found by Dijkstra's algorithm (1959) over
 * reduced costs `c(i,j) − u_i − v_j ≥ 0` with a binary heap; afterwards the column potentials
 * move by min(dist_j, D) − D (D = length of the path found), which keeps reduced costs
 * non-negative and the new matching tight. Row potentials are implied by the matched pairs. Each
 * row also owns a private fallback column of big cost M (as in the big-M treatment of forbidden
 * pairs), so every search succeeds; rows left on their fallback are reported as −1.
 *
 * Used by the linker for large connected components, where a dense k × (k + k′) matrix would cost
 * O(k²) memory and O(k²·(k + k′)) time.
 *
 * Complexity: O(k·E·log E) worst case for k rows and E listed pairs; in crowded fields far less,
 * as each search stops at the first free column. Scratch buffers live at module level and grow by
 * doubling (not re-entrant).
 *
 * @param rowStart CSR offsets, length ≥ rows + 1: row i lists entries rowStart[i] … rowStart[i+1]−1.
 * @param column column index of each entry, in [0, columns).
 * @param cost cost of each entry (finite).
 * @param rows number of rows.
 * @param columns number of columns.
 * @param out optional output of length ≥ rows.
 * @returns for each row the chosen column, or −1.
 * @throws RangeError for bad sizes, a column out of range or a non-finite cost.
 *
 * @example
 * // row 0: {col 0: 4, col 1: 1}; row 1: {col 1: 0}
 * solveSparseAssignment(Int32Array.of(0, 2, 3), Int32Array.of(0, 1, 1), Float64Array.of(4, 1, 0), 2, 2);
 * // → Int32Array [0, 1]   (4 + 0: two pairs beat the single cheaper pair)
 */
export function solveSparseAssignment(
  rowStart: Int32Array,
  column: Int32Array,
  cost: Float64Array,
  rows: number,
  columns: number,
  out?: Int32Array,
): Int32Array {
  if (!Number.isInteger(rows) || rows < 0) throw new RangeError('solveSparseAssignment requires rows to be a non-negative integer');
  if (!Number.isInteger(columns) || columns < 0) {
    throw new RangeError('solveSparseAssignment requires columns to be a non-negative integer');
  }
  if (rowStart.length < rows + 1) throw new RangeError('solveSparseAssignment requires rowStart to hold rows + 1 offsets');
  const entries = rows === 0 ? 0 : rowStart[rows];
  if (column.length < entries || cost.length < entries) {
    throw new RangeError('solveSparseAssignment requires column and cost to hold every entry');
  }
  for (let entry = 0; entry < entries; entry++) {
    const j = column[entry];
    if (!(j >= 0 && j < columns) || !Number.isInteger(j)) throw new RangeError('solveSparseAssignment requires columns in range');
    if (!Number.isFinite(cost[entry])) throw new RangeError('solveSparseAssignment requires finite costs');
  }
  const result = out ?? new Int32Array(rows);
  result.fill(-1, 0, rows);
  if (rows === 0 || columns === 0) return result;

  // Each row also gets a private fallback column (index columns + i) of cost M, larger than any
  // difference of finite sums, so every search succeeds and the optimum maximises the number of
  // real pairs first (rows left on their fallback are reported as −1).
  let minCost = Infinity;
  let maxCost = -Infinity;
  for (let entry = 0; entry < entries; entry++) {
    if (cost[entry] < minCost) minCost = cost[entry];
    if (cost[entry] > maxCost) maxCost = cost[entry];
  }
  if (entries === 0) return result;
  const fallbackCost = 2 * Math.abs(maxCost) + Math.abs(minCost) + rows * (maxCost - minCost) + 1;
  const allColumns = columns + rows;

  ensureScratch(allColumns, entries + 2 * rows + 1);
  const v = scratchV;
  const dist = scratchDist;
  const predecessorRow = scratchPredecessor; // row from which column j was reached
  const rowOf = scratchRowOf; // row matched to column j, −1 if free
  const state = scratchState; // 0 untouched, 1 in heap, 2 finalised
  const touched = scratchTouched;
  v.fill(0, 0, allColumns);
  rowOf.fill(-1, 0, allColumns);
  state.fill(0, 0, allColumns);
  touchedCount = 0;

  for (let root = 0; root < rows; root++) {
    const first = rowStart[root];
    const last = rowStart[root + 1];
    // u_root = min over its entries of c − v, so that the root's reduced costs are ≥ 0.
    let rootPotential = fallbackCost - v[columns + root];
    for (let entry = first; entry < last; entry++) {
      const value = cost[entry] - v[column[entry]];
      if (value < rootPotential) rootPotential = value;
    }
    touchedCount = 0;
    heapSize = 0;
    for (let entry = first; entry < last; entry++) {
      const j = column[entry];
      relax(j, cost[entry] - v[j] - rootPotential, root);
    }
    relax(columns + root, fallbackCost - v[columns + root] - rootPotential, root);
    let endColumn = -1;
    let pathLength = 0;
    while (heapSize > 0) {
      const j = heapPopColumn();
      const d = poppedKey;
      if (state[j] === 2 || d > dist[j]) continue; // stale heap entry
      state[j] = 2;
      const i = rowOf[j];
      if (i === -1) {
        endColumn = j;
        pathLength = d;
        break;
      }
      // Matched edge (i, j) is tight, so u_i = c(i, j) − v_j.
      const matchedCost = j >= columns ? fallbackCost : cost[matchedEntryOf(i, j, rowStart, column)];
      const rowPotential = matchedCost - v[j];
      for (let entry = rowStart[i]; entry < rowStart[i + 1]; entry++) {
        const k = column[entry];
        if (state[k] !== 2) relax(k, d + cost[entry] - v[k] - rowPotential, i);
      }
      const fallback = columns + i;
      if (state[fallback] !== 2) relax(fallback, d + fallbackCost - v[fallback] - rowPotential, i);
    }
    // Potentials: v_j += min(dist_j, D) − D for finalised columns (others change by 0).
    for (let t = 0; t < touchedCount; t++) {
      const j = touched[t];
      if (state[j] === 2 && dist[j] < pathLength) v[j] += dist[j] - pathLength;
    }
    // Augment along the predecessor chain.
    let j = endColumn;
    for (;;) {
      const i = predecessorRow[j];
      const previousColumn = result[i];
      rowOf[j] = i;
      result[i] = j;
      if (i === root) break;
      j = previousColumn;
    }
    for (let t = 0; t < touchedCount; t++) state[touched[t]] = 0;
  }
  for (let i = 0; i < rows; i++) if (result[i] >= columns) result[i] = -1;
  return result;
}

let touchedCount = 0;

/** Dijkstra relaxation of column j reached from row `from` at distance `distance`. */
function relax(j: number, distance: number, from: number): void {
  const state = scratchState;
  if (state[j] === 0) {
    state[j] = 1;
    scratchTouched[touchedCount++] = j;
    scratchDist[j] = distance;
    scratchPredecessor[j] = from;
    heapPush(distance, j);
  } else if (distance < scratchDist[j]) {
    scratchDist[j] = distance;
    scratchPredecessor[j] = from;
    heapPush(distance, j);
  }
}

/** Entry index of the pair (row, col); rows are short in linking graphs, so a scan is cheapest. */
function matchedEntryOf(row: number, col: number, rowStart: Int32Array, column: Int32Array): number {
  // With duplicate entries for one pair, the cheapest is not guaranteed; callers list each pair once.
  for (let entry = rowStart[row]; entry < rowStart[row + 1]; entry++) if (column[entry] === col) return entry;
  return -1;
}

let scratchV = new Float64Array(16);
let scratchDist = new Float64Array(16);
let scratchPredecessor = new Int32Array(16);
let scratchRowOf = new Int32Array(16);
let scratchState = new Uint8Array(16);
let scratchTouched = new Int32Array(16);
let heapKeys = new Float64Array(16);
let heapColumns = new Int32Array(16);
let heapSize = 0;
let poppedKey = 0;

function ensureScratch(columns: number, heapCapacity: number): void {
  if (scratchV.length < columns) {
    let size = scratchV.length;
    while (size < columns) size *= 2;
    scratchV = new Float64Array(size);
    scratchDist = new Float64Array(size);
    scratchPredecessor = new Int32Array(size);
    scratchRowOf = new Int32Array(size);
    scratchState = new Uint8Array(size);
    scratchTouched = new Int32Array(size);
  }
  if (heapKeys.length < heapCapacity) {
    let size = heapKeys.length;
    while (size < heapCapacity) size *= 2;
    heapKeys = new Float64Array(size);
    heapColumns = new Int32Array(size);
  }
}

// Binary min-heap with lazy deletion: a column is pushed at most once per entry examined (each row
// is scanned at most once per search), so `entries + 2·rows + 1` slots always suffice.
function heapPush(key: number, col: number): void {
  let index = heapSize++;
  while (index > 0) {
    const parent = (index - 1) >> 1;
    if (heapKeys[parent] <= key) break;
    heapKeys[index] = heapKeys[parent];
    heapColumns[index] = heapColumns[parent];
    index = parent;
  }
  heapKeys[index] = key;
  heapColumns[index] = col;
}

function heapPopColumn(): number {
  const topColumn = heapColumns[0];
  poppedKey = heapKeys[0];
  heapSize--;
  if (heapSize > 0) {
    const key = heapKeys[heapSize];
    const col = heapColumns[heapSize];
    let index = 0;
    for (;;) {
      let child = 2 * index + 1;
      if (child >= heapSize) break;
      if (child + 1 < heapSize && heapKeys[child + 1] < heapKeys[child]) child++;
      if (heapKeys[child] >= key) break;
      heapKeys[index] = heapKeys[child];
      heapColumns[index] = heapColumns[child];
      index = child;
    }
    heapKeys[index] = key;
    heapColumns[index] = col;
  }
  return topColumn;
}
