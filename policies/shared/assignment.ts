/**
 * Rectangular linear assignment by shortest augmenting paths.
 *
 * Method: Jonker & Volgenant (1987), "A shortest augmenting path algorithm for
 * dense and sparse linear assignment problems", Computing 38, in the
 * rectangular form given by D. F. Crouse (2016), "On implementing 2D
 * rectangular assignment algorithms", IEEE Trans. Aerospace and Electronic
 * Systems 52(4), pp. 1679-1696 (Algorithm 1 + the dual-variable update of
 * Sec. III). As in Crouse's paper (and SciPy's `linear_sum_assignment`, which
 * implements the same paper) the JV initialisation heuristics (column
 * reduction, augmenting row reduction) are NOT used: they are only valid for
 * square problems, and the plain shortest-augmenting-path phase is already
 * fast on the dense instances we see.
 *
 * Problem: given an r x c cost matrix (row-major), choose min(r, c) pairs, no
 * row or column used twice, minimising the summed cost. Internally we always
 * solve with rows <= cols (transposing a copy when rows > cols), so every row
 * of the smaller side is assigned and (cols - rows) entries of the larger side
 * stay -1.
 *
 * Algorithm: keep dual potentials u (rows) and v (columns) with
 * cost[i][j] - u[i] - v[j] >= 0 on all pairs and = 0 on assigned pairs, and
 * v[j] = 0 on every unassigned column (complementary slackness for the
 * rectangular LP with "<= 1" column constraints). For each free row run a
 * Dijkstra-like scan over columns on reduced costs (dense, O(cols) per scanned
 * row, no heap) until an unassigned column is reached, update the duals of the
 * scanned rows/columns, and flip the alternating path.
 *
 * Complexity: O(rows^2 * cols) time worst case, O(rows * cols) extra memory
 * only when transposing (otherwise O(rows + cols)). Typical dense random
 * instances are far below the worst case.
 *
 * Edge cases:
 *  - rows = 0 or cols = 0: nothing is assigned, totalCost = 0.
 *  - Ties: among columns at equal shortest-path distance an unassigned column
 *    is preferred (ends the augmentation earlier, as in Crouse/SciPy). An
 *    all-equal (constant) matrix yields the identity-like assignment.
 *  - Negative costs are fine (only the first edge of each search may have a
 *    negative reduced cost, which shifts all paths equally).
 *  - Forbidden pairs: callers SHOULD encode them with a big finite cost such
 *    as 1e9 (FORBIDDEN_COST), not Infinity. A finite penalty always admits a
 *    complete matching, so the solver never fails and the caller detects
 *    forbidden pairs afterwards by `cost >= FORBIDDEN_COST`. Keep the penalty
 *    within ~1e6 x the cost resolution you care about: duals grow to the size
 *    of the penalty and float64 rounding is relative to that.
 *    +Infinity is tolerated, but if no complete matching avoids every infinite
 *    entry the solver throws (it cannot be "partially" optimal).
 *  - NaN or -Infinity anywhere in the matrix throws a RangeError.
 */

/** Recommended cost for a forbidden pair (see header). */
export const FORBIDDEN_COST = 1e9;

export interface AssignmentResult {
  /** rowToCol[i] = column assigned to row i, or -1. */
  rowToCol: Int32Array;
  /** colToRow[j] = row assigned to column j, or -1. */
  colToRow: Int32Array;
  /** Sum of cost[i * cols + rowToCol[i]] over assigned rows (original matrix). */
  totalCost: number;
}

/**
 * Optimal rectangular linear assignment (minimisation).
 * @param cost row-major rows x cols matrix; not modified.
 */
export function solveAssignment(cost: Float64Array, rows: number, cols: number): AssignmentResult {
  if (!Number.isInteger(rows) || !Number.isInteger(cols) || rows < 0 || cols < 0) {
    throw new RangeError(`solveAssignment: bad shape ${rows} x ${cols}`);
  }
  if (cost.length !== rows * cols) {
    throw new RangeError(`solveAssignment: cost has length ${cost.length}, expected ${rows * cols}`);
  }
  const total = rows * cols;
  for (let k = 0; k < total; k++) {
    const x = cost[k];
    if (x !== x || x === -Infinity) {
      throw new RangeError(`solveAssignment: cost[${k}] is ${x}`);
    }
  }

  const rowToCol = new Int32Array(rows).fill(-1);
  const colToRow = new Int32Array(cols).fill(-1);
  if (rows === 0 || cols === 0) return { rowToCol, colToRow, totalCost: 0 };

  if (rows <= cols) {
    solveWide(cost, rows, cols, rowToCol, colToRow);
  } else {
    // Transpose so the solver's "rows" are the smaller side.
    const t = new Float64Array(total);
    for (let i = 0; i < rows; i++) {
      const off = i * cols;
      for (let j = 0; j < cols; j++) t[j * rows + i] = cost[off + j];
    }
    // In the transposed problem, solver-rows are original columns.
    solveWide(t, cols, rows, colToRow, rowToCol);
  }

  let totalCost = 0;
  for (let i = 0; i < rows; i++) {
    const j = rowToCol[i];
    if (j >= 0) totalCost += cost[i * cols + j];
  }
  return { rowToCol, colToRow, totalCost };
}

/**
 * Core of Crouse (2016) Algorithm 1 for nr <= nc. Fills col4row (length nr) and
 * row4col (length nc), both pre-filled with -1.
 */
function solveWide(
  cost: Float64Array,
  nr: number,
  nc: number,
  col4row: Int32Array,
  row4col: Int32Array,
): void {
  const u = new Float64Array(nr);
  const v = new Float64Array(nc);
  const shortest = new Float64Array(nc); // tentative distance to each column
  const path = new Int32Array(nc); // predecessor row of each column
  const remaining = new Int32Array(nc); // [0, numRemaining) unscanned, rest scanned
  const scannedRows = new Int32Array(nr); // rows visited in this search, in order

  for (let curRow = 0; curRow < nr; curRow++) {
    // ---- Dijkstra-like search from curRow (dense scan, no heap) ----
    // Reverse order so a constant matrix yields the identity (as SciPy does).
    for (let it = 0; it < nc; it++) remaining[it] = nc - it - 1;
    shortest.fill(Infinity);
    let numRemaining = nc;
    let numScannedRows = 0;
    let minVal = 0;
    let sink = -1;
    let i = curRow;

    while (sink === -1) {
      scannedRows[numScannedRows++] = i;
      let index = -1;
      let lowest = Infinity;
      const rowOff = i * nc;
      // Performance: minVal - u[i] is hoisted out of the inner loop.
      const base = minVal - u[i];
      for (let it = 0; it < numRemaining; it++) {
        const j = remaining[it];
        const r = base + cost[rowOff + j] - v[j];
        let s = shortest[j];
        if (r < s) {
          path[j] = i;
          shortest[j] = r;
          s = r;
        }
        // Ties prefer a free column: it terminates the search immediately.
        if (s < lowest || (s === lowest && row4col[j] === -1)) {
          lowest = s;
          index = it;
        }
      }
      minVal = lowest;
      if (minVal === Infinity || index < 0) {
        throw new Error('solveAssignment: infeasible (no complete matching avoids the +Infinity entries)');
      }
      const j = remaining[index];
      if (row4col[j] === -1) sink = j;
      else i = row4col[j];
      // Move j to the scanned tail: remaining[numRemaining..nc) are the scanned columns.
      numRemaining--;
      remaining[index] = remaining[numRemaining];
      remaining[numRemaining] = j;
    }

    // ---- Dual update (Crouse 2016, Sec. III) on visited rows / scanned columns only ----
    u[curRow] += minVal;
    for (let k = 1; k < numScannedRows; k++) {
      const r = scannedRows[k]; // k = 0 is curRow
      u[r] += minVal - shortest[col4row[r]];
    }
    for (let k = numRemaining; k < nc; k++) {
      const j = remaining[k];
      v[j] -= minVal - shortest[j];
    }

    // ---- Augment along the alternating path ending at sink ----
    let j = sink;
    for (;;) {
      const r = path[j];
      row4col[j] = r;
      const prev = col4row[r];
      col4row[r] = j;
      if (r === curRow) break;
      j = prev;
    }
  }
}
