/**
 * A uniform grid over a set of 2-D points (a bucket index built by counting sort), reused from
 * frame to frame: the clumping detector's close-pair search and the nearest-neighbour search of
 * the Clark–Evans test run on it. Building it is O(N + cells) with no allocation in the steady
 * state (buffers grow by doubling), where a kd-tree is rebuilt in O(N log N) every frame; a
 * query visits only the cells its disc overlaps. The cell count is capped at about 4N, so memory
 * stays O(N) whatever the spread of the points (cells then grow beyond the requested size).
 *
 * After `build`, the points of cell (c, r) are `order[cellStart[k]] … order[cellStart[k + 1] − 1]`
 * with k = r·columns + c, in ascending point index.
 *
 * @example
 * const grid = new PointGrid();
 * grid.build(Float64Array.of(0, 0.5, 9), Float64Array.of(0, 0, 9), 3, 1);
 * grid.pairsWithin(Float64Array.of(0, 0.5, 9), Float64Array.of(0, 0, 9), 0, 1, out) // → 1 (out[0] = 1)
 */
export class PointGrid {
  /** Side of a cell, µm (≥ the size asked for). */
  cellSize = 1;
  /** Lower-left corner of the grid, µm. */
  xMin = 0;
  yMin = 0;
  columns = 0;
  rows = 0;
  /** Start of each cell's run in `order` (columns·rows + 1 entries used). */
  cellStart: Int32Array = new Int32Array(0);
  /** Point indices sorted by cell. */
  order: Int32Array = new Int32Array(0);
  /** The points' coordinates in the same order as `order` (sequential reads in the pair sweep). */
  sortedX: Float64Array = new Float64Array(0);
  sortedY: Float64Array = new Float64Array(0);
  private cellOf: Int32Array = new Int32Array(0);

  /**
   * Buckets the first `count` points (all finite) into square cells of side ≥ `cellSize` µm.
   * O(count + cells).
   */
  build(x: ArrayLike<number>, y: ArrayLike<number>, count: number, cellSize: number): void {
    let xMin = Infinity;
    let xMax = -Infinity;
    let yMin = Infinity;
    let yMax = -Infinity;
    for (let i = 0; i < count; i++) {
      const a = x[i];
      const b = y[i];
      if (a < xMin) xMin = a;
      if (a > xMax) xMax = a;
      if (b < yMin) yMin = b;
      if (b > yMax) yMax = b;
    }
    if (!(count > 0)) {
      xMin = 0;
      xMax = 0;
      yMin = 0;
      yMax = 0;
    }
    let size = cellSize > 0 && Number.isFinite(cellSize) ? cellSize : 1;
    const cap = Math.max(16, 4 * count);
    // Cap the cell count (memory and build time O(N)): widen the cells when needed.
    while (Math.floor((xMax - xMin) / size + 1) * Math.floor((yMax - yMin) / size + 1) > cap) size *= 2;
    const columns = Math.floor((xMax - xMin) / size) + 1;
    const rows = Math.floor((yMax - yMin) / size) + 1;
    const cells = columns * rows;
    this.cellSize = size;
    this.xMin = xMin;
    this.yMin = yMin;
    this.columns = columns;
    this.rows = rows;
    if (this.cellStart.length < cells + 1) this.cellStart = new Int32Array(2 * (cells + 1));
    if (this.order.length < count) {
      this.order = new Int32Array(2 * count);
      this.cellOf = new Int32Array(2 * count);
      this.sortedX = new Float64Array(2 * count);
      this.sortedY = new Float64Array(2 * count);
    }
    const start = this.cellStart;
    const cellOf = this.cellOf;
    start.fill(0, 0, cells + 1);
    for (let i = 0; i < count; i++) {
      const c = Math.min(columns - 1, Math.floor((x[i] - xMin) / size));
      const r = Math.min(rows - 1, Math.floor((y[i] - yMin) / size));
      const k = r * columns + c;
      cellOf[i] = k;
      start[k]++;
    }
    // Inclusive prefix sums: start[k] is the end of cell k; filling from the last point down moves
    // each cursor back to its cell's beginning (counting sort, stable: ascending index in a cell).
    for (let k = 1; k < cells; k++) start[k] += start[k - 1];
    start[cells] = count;
    const order = this.order;
    const sortedX = this.sortedX;
    const sortedY = this.sortedY;
    for (let i = count - 1; i >= 0; i--) {
      const at = --start[cellOf[i]];
      order[at] = i;
      sortedX[at] = x[i];
      sortedY[at] = y[i];
    }
  }

  /**
   * Points j > i within distance `r` µm of point i (d² ≤ r², as a kd-tree radius query), written
   * to `out` in ascending j; returns how many, or −(how many) when `out` is too short (grow it
   * and ask again). Requires `r` ≤ cellSize (the 3 × 3 cells around i). O(points nearby).
   */
  pairsWithin(x: ArrayLike<number>, y: ArrayLike<number>, i: number, r: number, out: Uint32Array): number {
    const size = this.cellSize;
    const columns = this.columns;
    const rows = this.rows;
    const qx = x[i];
    const qy = y[i];
    const c0 = Math.min(columns - 1, Math.floor((qx - this.xMin) / size));
    const r0 = Math.min(rows - 1, Math.floor((qy - this.yMin) / size));
    const r2 = r * r;
    const start = this.cellStart;
    const order = this.order;
    let found = 0;
    for (let row = Math.max(0, r0 - 1); row <= Math.min(rows - 1, r0 + 1); row++) {
      for (let column = Math.max(0, c0 - 1); column <= Math.min(columns - 1, c0 + 1); column++) {
        const k = row * columns + column;
        for (let s = start[k]; s < start[k + 1]; s++) {
          const j = order[s];
          if (j <= i) continue;
          const dx = x[j] - qx;
          const dy = y[j] - qy;
          if (dx * dx + dy * dy > r2) continue;
          if (found < out.length) out[found] = j;
          found++;
        }
      }
    }
    if (found > out.length) return -found;
    // ascending j (a handful of entries: insertion sort)
    for (let a = 1; a < found; a++) {
      const v = out[a];
      let b = a - 1;
      while (b >= 0 && out[b] > v) {
        out[b + 1] = out[b];
        b--;
      }
      out[b + 1] = v;
    }
    return found;
  }

  /**
   * The points given to `build` within distance `r` µm of (qx, qy) (d² ≤ r²), as their indices in
   * `out` in no set order; returns how many, or −(how many) when `out` is too short. Requires
   * `r` ≤ cellSize. O(points nearby).
   */
  within(qx: number, qy: number, r: number, out: Int32Array): number {
    const size = this.cellSize;
    const columns = this.columns;
    const rows = this.rows;
    // cells of points outside the grid are clamped, as in build; a query beyond it reaches no cell
    const c0 = Math.floor((qx - this.xMin) / size);
    const r0 = Math.floor((qy - this.yMin) / size);
    const r2 = r * r;
    const start = this.cellStart;
    const order = this.order;
    const sx = this.sortedX;
    const sy = this.sortedY;
    let found = 0;
    const columnLow = Math.max(0, c0 - 1);
    const columnHigh = Math.min(columns - 1, c0 + 1);
    if (columnLow > columnHigh) return 0;
    for (let row = Math.max(0, r0 - 1); row <= Math.min(rows - 1, r0 + 1); row++) {
      // the three cells of a row are one run of `order`
      const runStart = start[row * columns + columnLow];
      const runEnd = start[row * columns + columnHigh + 1];
      for (let s = runStart; s < runEnd; s++) {
        const dx = sx[s] - qx;
        const dy = sy[s] - qy;
        if (dx * dx + dy * dy > r2) continue;
        if (found < out.length) out[found] = order[s];
        found++;
      }
    }
    return found > out.length ? -found : found;
  }

  /**
   * Every pair i < j of the first `count` points within distance `r` µm (d² ≤ r², as
   * {@link PointGrid.pairsWithin}), in ascending i then j, written to `out` as keys i·count + j;
   * returns how many, or −(how many) when `out` is too short (grow it and ask again). Requires
   * `r` ≤ cellSize. Each pair of neighbouring cells is visited once (a cell with itself and its 4
   * forward neighbours), so this does about half the work of `pairsWithin` on every point. The
   * points are the ones given to `build`: the sweep reads build's copies in cell order.
   * O(count + pairs · log pairs).
   * @example
   * grid.build(x, y, 3, 1);
   * grid.closePairs(3, 1, keys) // → 1 (keys[0] = 0·3 + 1)
   */
  closePairs(count: number, r: number, out: Float64Array): number {
    const columns = this.columns;
    const rows = this.rows;
    const start = this.cellStart;
    const order = this.order;
    const sx = this.sortedX;
    const sy = this.sortedY;
    const r2 = r * r;
    let found = 0;
    for (let row = 0; row < rows; row++) {
      const nextRow = row + 1 < rows ? (row + 1) * columns : -1;
      for (let column = 0; column < columns; column++) {
        const k = row * columns + column;
        const end = start[k + 1];
        if (start[k] === end) continue;
        // Forward neighbours as two runs of `order`: the rest of this cell with the next cell of
        // the row, and the three cells below (one run: cells of a row are contiguous).
        const sameEnd = column + 1 < columns ? start[k + 2] : end;
        const belowStart = nextRow >= 0 ? start[nextRow + (column > 0 ? column - 1 : 0)] : 0;
        const belowEnd = nextRow >= 0 ? start[nextRow + (column + 1 < columns ? column + 1 : column) + 1] : 0;
        for (let s = start[k]; s < end; s++) {
          const p = order[s];
          const px = sx[s];
          const py = sy[s];
          for (let run = 0; run < 2; run++) {
            const to = run === 0 ? sameEnd : belowEnd;
            for (let t = run === 0 ? s + 1 : belowStart; t < to; t++) {
              const dx = sx[t] - px;
              const dy = sy[t] - py;
              if (dx * dx + dy * dy > r2) continue;
              const q = order[t];
              if (found < out.length) out[found] = p < q ? p * count + q : q * count + p;
              found++;
            }
          }
        }
      }
    }
    if (found > out.length) return -found;
    out.subarray(0, found).sort();
    return found;
  }

  /**
   * Nearest other point to point i: searches square rings of cells outward until no unsearched
   * cell can hold a closer point. Returns the index (−1 when there is no other point) and writes
   * the squared distance, µm², to `distance2[0]`. O(points in the rings searched).
   */
  nearest(x: ArrayLike<number>, y: ArrayLike<number>, i: number, distance2: Float64Array): number {
    const size = this.cellSize;
    const columns = this.columns;
    const rows = this.rows;
    const qx = x[i];
    const qy = y[i];
    const c0 = Math.min(columns - 1, Math.floor((qx - this.xMin) / size));
    const r0 = Math.min(rows - 1, Math.floor((qy - this.yMin) / size));
    const start = this.cellStart;
    const order = this.order;
    let best = Infinity;
    let bestJ = -1;
    const reach = Math.max(columns, rows);
    for (let ring = 0; ring <= reach; ring++) {
      const rowLow = r0 - ring;
      const rowHigh = r0 + ring;
      const columnLow = c0 - ring;
      const columnHigh = c0 + ring;
      for (let row = Math.max(0, rowLow); row <= Math.min(rows - 1, rowHigh); row++) {
        const edgeRow = row === rowLow || row === rowHigh;
        // on the ring's top and bottom rows every cell; on the others only the two side cells
        const step = edgeRow ? 1 : columnHigh - columnLow;
        for (let column = columnLow; column <= columnHigh; column += step > 0 ? step : 1) {
          if (column < 0 || column >= columns) continue;
          const k = row * columns + column;
          for (let s = start[k]; s < start[k + 1]; s++) {
            const j = order[s];
            if (j === i) continue;
            const dx = x[j] - qx;
            const dy = y[j] - qy;
            const d2 = dx * dx + dy * dy;
            if (d2 < best || (d2 === best && j < bestJ)) {
              best = d2;
              bestJ = j;
            }
          }
        }
      }
      if (bestJ >= 0) {
        // Every unsearched point lies outside the searched square of cells: at least this far.
        const left = qx - (this.xMin + columnLow * size);
        const right = this.xMin + (columnHigh + 1) * size - qx;
        const bottom = qy - (this.yMin + rowLow * size);
        const top = this.yMin + (rowHigh + 1) * size - qy;
        // a small margin for the rounding of the cell assignment
        const clearance = Math.min(left, right, bottom, top) - 1e-9 * size;
        if (clearance > 0 && best <= clearance * clearance) break;
      }
    }
    distance2[0] = best;
    return bestJ;
  }
}
