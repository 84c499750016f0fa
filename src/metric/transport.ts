// The transportation problem under the EMD between PDDs (Rubner, Tomasi & Guibas, "The Earth Mover's Distance as
// a Metric for Image Retrieval", IJCV 2000), solved exactly by a primal network simplex on the bipartite graph
// rows(a) -> rows(b), kept on strongly feasible spanning trees so that degenerate pivots cannot cycle (Cunningham,
// "A network simplex method", Math. Programming 1976; Ahuja, Magnanti & Orlin, "Network Flows", 1993, sections
// 11.5-11.6). The first basis comes from the matrix-minimum rule (cheapest cells first). Ground distances (the
// L-infinity distance between two rows) are read lazily, column by column in a caller-given order, and every
// decision (which cell to allocate, which cell enters) is taken on exact costs, so the result does not depend on
// that order or on the lower bounds a caller supplies: only the time does.

/** Columns of every cell's ground distance read up front (the rest only when pricing needs them). */
const FIRST_COLUMNS = 2;
/** Columns read at least each time the first basis needs a better bound of a cell. */
const BASIS_STEP_COLUMNS = 8;
/** Below this many cells every ground distance is computed in full at once (laziness does not pay off). */
const EAGER_CELLS = 256;

/**
 * Read more columns of cell c's ground distance (rows at aRows[ao..] and bRows[bo..]), in the order `cols`: at
 * least `least` of them, then stop (at the end of a block of four) as soon as the running maximum reaches `limit`,
 * or after all k, where the cost is exact. Updates
 * cost[c] (the maximum so far) and known[c] (columns read), and returns the new cost[c].
 */
function readColumns(
  aRows: Float64Array,
  ao: number,
  bRows: Float64Array,
  bo: number,
  cols: Int32Array,
  cost: Float64Array,
  known: Int32Array,
  c: number,
  k: number,
  limit: number,
  least: number,
): number {
  let max = cost[c];
  let t = known[c];
  const leastEnd = t + least;
  // Four columns at a time without branches (their maximum), then the stopping test.
  let done = false;
  while (t + 4 <= k) {
    const c0 = cols[t];
    const c1 = cols[t + 1];
    const c2 = cols[t + 2];
    const c3 = cols[t + 3];
    max = Math.max(
      max,
      Math.abs(aRows[ao + c0] - bRows[bo + c0]),
      Math.abs(aRows[ao + c1] - bRows[bo + c1]),
      Math.abs(aRows[ao + c2] - bRows[bo + c2]),
      Math.abs(aRows[ao + c3] - bRows[bo + c3]),
    );
    t += 4;
    if (max >= limit && t >= leastEnd) {
      done = true;
      break;
    }
  }
  if (!done) {
    for (; t < k; t++) {
      const col = cols[t];
      max = Math.max(max, Math.abs(aRows[ao + col] - bRows[bo + col]));
      if (max >= limit && t + 1 >= leastEnd) {
        t++;
        break;
      }
    }
  }
  cost[c] = max;
  known[c] = t;
  return max;
}

/** Statistics of the last solve on this thread (for benchmarks and tests of the paths taken). */
export const lastSolve = { pivots: 0, degeneratePivots: 0, rows: 0, cols: 0, split: false, restricted: false };

// ---- scratch buffers, grown to the largest problem seen and reused (nothing allocated per solve) ----
// They live in one object and every function copies the arrays it uses into local constants: reads of
// module-level `let` bindings in hot loops are much slower in V8.
export class Workspace {
  capRows = 0;
  capCols = 0;
  capNodes = 0;
  supply = new Float64Array(0);
  demand = new Float64Array(0);
  rowOf = new Int32Array(0);
  colOf = new Int32Array(0);
  cost = new Float64Array(0);
  known = new Int32Array(0);
  order = new Int32Array(0);
  active = new Uint8Array(0);
  activeList = new Int32Array(0);
  arcTail = new Int32Array(0);
  arcHead = new Int32Array(0);
  arcFlow = new Float64Array(0);
  arcCost = new Float64Array(0);
  parent = new Int32Array(0);
  parentArc = new Int32Array(0);
  depth = new Int32Array(0);
  potential = new Float64Array(0);
  adjStart = new Int32Array(0);
  adjFill = new Int32Array(0);
  adjArc = new Int32Array(0);
  queue = new Int32Array(0);
  rowHeap = new Int32Array(0);
  rowSize = new Int32Array(0);
  unionParent = new Int32Array(0);
  componentArc = new Int32Array(0);
  firstChild = new Int32Array(0);
  nextSibling = new Int32Array(0);
  prevSibling = new Int32Array(0);
  /** Set by `pivot`: the lower end of the leaving arc, and whether it hangs below the entering arc's row end. */
  leaveChild = -1;
  leaveOnRowSide = true;

  ensure(m: number, n: number): void {
    if (m > this.capRows || n > this.capCols) {
      this.capRows = Math.max(m, this.capRows);
      this.capCols = Math.max(n, this.capCols);
      this.supply = new Float64Array(this.capRows);
      this.rowOf = new Int32Array(this.capRows);
      this.demand = new Float64Array(this.capCols);
      this.colOf = new Int32Array(this.capCols);
      this.rowHeap = new Int32Array(this.capRows);
      this.rowSize = new Int32Array(this.capRows);
      this.cost = new Float64Array(this.capRows * this.capCols);
      this.known = new Int32Array(this.capRows * this.capCols);
      this.order = new Int32Array(this.capRows * this.capCols);
      this.active = new Uint8Array(this.capRows * this.capCols);
      this.activeList = new Int32Array(this.capRows * this.capCols);
    }
    const nodes = m + n + 1;
    if (nodes > this.capNodes) {
      this.capNodes = nodes;
      this.arcTail = new Int32Array(nodes);
      this.arcHead = new Int32Array(nodes);
      this.arcFlow = new Float64Array(nodes);
      this.arcCost = new Float64Array(nodes);
      this.parent = new Int32Array(nodes);
      this.parentArc = new Int32Array(nodes);
      this.depth = new Int32Array(nodes);
      this.potential = new Float64Array(nodes);
      this.adjStart = new Int32Array(nodes + 1);
      this.adjFill = new Int32Array(nodes + 1);
      this.adjArc = new Int32Array(2 * nodes);
      this.queue = new Int32Array(nodes);
      this.unionParent = new Int32Array(nodes);
      this.componentArc = new Int32Array(nodes);
      this.firstChild = new Int32Array(nodes);
      this.nextSibling = new Int32Array(nodes);
      this.prevSibling = new Int32Array(nodes);
    }
  }
}

/**
 * Transportation problem A -> B. The caller fills `ws`: supply[0..m) (positive, adding up to 1) with rowOf[0..m)
 * (row indices into aRows, row r at aRows[r*k ..]), and demand[0..n) with colOf[0..n) likewise. Supply nodes are
 * 0..m-1, demand nodes m..m+n-1, and an artificial root R = m+n closes the spanning tree. Every arc row -> column
 * exists with cost = L-infinity distance between the rows; artificial arcs node -> R start at zero flow and can
 * never gain flow (any cycle through R passes one of them backwards), so the optimum found is that of the real
 * problem. Columns are read in the order `cols` (any permutation of 0..k-1; the result does not depend on it,
 * only the speed: each decision is taken on exact costs, see below). `floor`, when given, may raise the lower
 * bounds ws.cost[i*n + j] of cells not yet exact (never above the true cost) before the first basis is built. On
 * return ws.potential holds optimal node potentials (cost(i,j) + p[i] - p[m+j] >= 0 on every cell, 0 on the
 * basis) and ws.arcTail/arcHead/arcFlow the optimal basis.
 *
 * With `restrict`, the simplex first works on the cells marked 1 in ws.active[i*n + j] only (the caller's guess of
 * where the optimal plan lies). A row whose marked cells all lead to filled columns while it still has supply gets
 * all its cells marked. When no marked cell can enter, every unmarked cell is priced; any with a negative reduced
 * cost is marked and the simplex goes on, so the optimum returned is that of the whole problem.
 */
export function solveTransport(
  ws: Workspace,
  aRows: Float64Array,
  bRows: Float64Array,
  m: number,
  n: number,
  k: number,
  cols: Int32Array,
  floor: ((ws: Workspace, m: number, n: number) => void) | null,
  restrict = false,
): number {
  const { supply, demand, rowOf, colOf, cost, order, arcTail, arcHead, arcFlow, arcCost, potential, unionParent, componentArc, active, activeList } = ws;
  lastSolve.pivots = 0;
  lastSolve.degeneratePivots = 0;
  lastSolve.rows = m;
  lastSolve.cols = n;
  lastSolve.restricted = false;

  // One row on either side: the only feasible transport sends everything to (or from) it.
  // Potentials: with one row, p[row] = 0 and p[m+j] = cost(0, j); with one column, p[m] = 0, p[i] = -cost(i, 0).
  if (m === 1 || n === 1) {
    let sum = 0;
    potential[m === 1 ? 0 : m] = 0;
    for (let i = 0; i < m; i++) {
      const ao = rowOf[i] * k;
      for (let j = 0; j < n; j++) {
        const bo = colOf[j] * k;
        let max = 0;
        for (let t = 0; t < k; t++) {
          const d = Math.abs(aRows[ao + t] - bRows[bo + t]);
          if (d > max) max = d;
        }
        sum += (m === 1 ? demand[j] : supply[i]) * max;
        if (m === 1) potential[1 + j] = max;
        else potential[i] = -max;
      }
    }
    return sum;
  }

  // Ground distances (L-infinity between rows) are computed lazily: cost[c] holds the maximum of |a_t - b_t| over
  // the first known[c] columns, a lower bound of the cell's cost that is exact once known[c] = k. Most cells are
  // never needed exactly: pricing only has to show that a cell's cost is not below v_j - u_i, and a few columns
  // usually show that. Every cell that enters the basis is made exact first, so the result is that of the full
  // matrix, bit for bit.
  const { known } = ws;
  // With a floor from the caller the first columns add little: start from the floor alone.
  const startColumns = k < FIRST_COLUMNS || m * n < EAGER_CELLS ? k : floor !== null ? 0 : FIRST_COLUMNS;
  for (let i = 0; i < m; i++) {
    const ao = rowOf[i] * k;
    const base = i * n;
    for (let j = 0; j < n; j++) {
      const bo = colOf[j] * k;
      let max = 0;
      for (let t = 0; t < startColumns; t++) {
        const col = cols[t];
        const d = Math.abs(aRows[ao + col] - bRows[bo + col]);
        if (d > max) max = d;
      }
      cost[base + j] = max;
      known[base + j] = startColumns;
    }
  }
  if (floor !== null && startColumns < k) floor(ws, m, n);

  const cells = m * n;
  const root = m + n;
  const nodes = m + n + 1;

  // ---- first basis: matrix minimum (allocate to the cheapest open cells first, ties by cell index) ----
  // Each row keeps its cells in a small binary heap (row i's heap in order[i*n .. i*n + rowSize[i])), and a heap
  // of rows is keyed by each row's cheapest cell. A row's top cell may lie in a column already filled; such a
  // stale top is only a lower bound of the row's cheapest open cell, so when it reaches the top it is dropped and
  // the row re-sorted. The cell allocated is therefore always the cheapest open cell overall (ties by index),
  // exactly as one heap over all cells would give, while filled rows leave with all their cells at once.
  const { rowHeap, rowSize } = ws;
  let rowsInHeap = 0;
  for (let i = 0; i < m; i++) {
    const base = i * n;
    let size = 0;
    if (restrict) {
      for (let j = 0; j < n; j++) if (active[base + j]) order[base + size++] = base + j;
    }
    if (size === 0) {
      for (let j = 0; j < n; j++) {
        order[base + j] = base + j;
        active[base + j] = 1;
      }
      size = n;
    }
    for (let h = (size >> 1) - 1; h >= 0; h--) siftDownAt(order, base, size, h, cost);
    rowSize[i] = size;
    if (supply[i] > 0) rowHeap[rowsInHeap++] = i;
  }
  for (let h = (rowsInHeap >> 1) - 1; h >= 0; h--) siftDownRows(rowHeap, rowsInHeap, h, order, n, cost);
  for (let v = 0; v < nodes; v++) unionParent[v] = v;
  let arcs = 0;
  let colsLeft = n;
  while (rowsInHeap > 0 && colsLeft > 0) {
    const i = rowHeap[0];
    const base = i * n;
    const c = order[base];
    const j = c - base;
    const d = demand[j];
    if (d > 0 && known[c] < k) {
      // An open cell known only by a lower bound: read columns until it is exact or its bound passes the next
      // smallest cost (in its row or in the next row), then let it find its place again.
      const size = rowSize[i];
      let limit = Infinity;
      if (size > 1) limit = cost[order[base + 1]];
      if (size > 2 && cost[order[base + 2]] < limit) limit = cost[order[base + 2]];
      if (rowsInHeap > 1) {
        const other = cost[order[rowHeap[1] * n]];
        if (other < limit) limit = other;
      }
      if (rowsInHeap > 2) {
        const other = cost[order[rowHeap[2] * n]];
        if (other < limit) limit = other;
      }
      // Read a few columns at least: each round costs two heap repairs, more than a few columns do.
      readColumns(aRows, rowOf[i] * k, bRows, colOf[j] * k, cols, cost, known, c, k, limit, BASIS_STEP_COLUMNS);
      siftDownAt(order, base, size, 0, cost);
      siftDownRows(rowHeap, rowsInHeap, 0, order, n, cost);
      continue;
    }
    if (d > 0) {
      // Each allocation empties its row or its column, which then takes no more: the positive arcs form a forest.
      const s = supply[i];
      const x = s < d ? s : d;
      supply[i] = s - x;
      demand[j] = d - x;
      if (demand[j] <= 0) colsLeft--;
      arcTail[arcs] = i;
      arcHead[arcs] = m + j;
      arcFlow[arcs] = x;
      arcCost[arcs] = cost[c];
      arcs++;
      unite(unionParent, i, m + j);
      if (supply[i] <= 0) {
        rowHeap[0] = rowHeap[--rowsInHeap];
        siftDownRows(rowHeap, rowsInHeap, 0, order, n, cost);
        continue;
      }
    }
    // Column j is filled: drop the row's top cell and re-sort the row, then the rows.
    let size = --rowSize[i];
    if (size === 0 && restrict) {
      // Marked cells exhausted with supply left: the row's unmarked cells into open columns join.
      for (let jj = 0; jj < n; jj++) {
        if (active[base + jj] || demand[jj] <= 0) continue;
        active[base + jj] = 1;
        order[base + size++] = base + jj;
      }
      for (let h = (size >> 1) - 1; h >= 0; h--) siftDownAt(order, base, size, h, cost);
      rowSize[i] = size;
      if (size > 0) {
        siftDownRows(rowHeap, rowsInHeap, 0, order, n, cost);
        continue;
      }
    }
    if (size === 0) {
      rowHeap[0] = rowHeap[--rowsInHeap];
    } else {
      order[base] = order[base + size];
      siftDownAt(order, base, size, 0, cost);
    }
    siftDownRows(rowHeap, rowsInHeap, 0, order, n, cost);
  }
  // Hang each component of the forest from the root by a zero-flow arc pointing to the root: the tree is then
  // strongly feasible (every zero-flow arc points towards the root).
  for (let v = 0; v < root; v++) componentArc[v] = -1;
  for (let v = 0; v < root; v++) {
    const r = find(unionParent, v);
    if (componentArc[r] >= 0) continue;
    componentArc[r] = arcs;
    arcTail[arcs] = v;
    arcHead[arcs] = root;
    arcFlow[arcs] = 0;
    arcCost[arcs] = 0;
    arcs++;
  }
  if (arcs !== nodes - 1) throw new Error(`EMD solver: first basis has ${arcs} arcs for ${nodes} nodes (internal error)`);

  // Reduced costs below -tolerance mean "improving"; the tolerance absorbs rounding in the potentials. Its scale:
  // the largest distance in the rows (the last column, rows being ascending), which no cost exceeds.
  let maxCost = 0;
  for (let i = 0; i < m; i++) {
    const x = aRows[rowOf[i] * k + k - 1];
    if (x > maxCost) maxCost = x;
  }
  for (let j = 0; j < n; j++) {
    const x = bRows[colOf[j] * k + k - 1];
    if (x > maxCost) maxCost = x;
  }
  const tolerance = 1e-13 * (maxCost > 1 ? maxCost : 1);

  if (restrict) {
    let listed = 0;
    for (let c = 0; c < cells; c++) if (active[c]) activeList[listed++] = c;
    lastSolve.restricted = listed < cells;
    if (listed < cells) return restrictedSimplex(ws, aRows, bRows, m, n, k, cols, tolerance, listed);
  }
  // Partial pricing: scan blocks of about sqrt(cells) arcs, enter the most negative of the first improving block.
  const block = Math.max(Math.min(cells, 16), Math.ceil(Math.sqrt(cells)));
  // The next cell to price, c = nextI * n + nextJ, cycling through all cells.
  let nextI = 0;
  let nextJ = 0;
  const pivotLimit = 50 * cells + 10_000;
  rebuildTree(ws, nodes, root);
  for (;;) {
    let enter = -1;
    let best = -tolerance;
    let scanned = 0;
    while (scanned < cells) {
      const end = Math.min(scanned + block, cells);
      for (; scanned < end; scanned++) {
        const i = nextI;
        const j = nextJ;
        const c = i * n + j;
        if (++nextJ === n) {
          nextJ = 0;
          if (++nextI === m) nextI = 0;
        }
        const pi = potential[i];
        const pj = potential[m + j];
        let rc = cost[c] + pi - pj;
        // A cell whose lower bound already prices at or above `best` cannot enter; otherwise read more columns
        // until it can be ruled out or its cost is exact.
        while (rc < best && known[c] < k) {
          rc = readColumns(aRows, rowOf[i] * k, bRows, colOf[j] * k, cols, cost, known, c, k, best - pi + pj, 1) + pi - pj;
        }
        if (rc < best) {
          best = rc;
          enter = c;
        }
      }
      if (enter >= 0) break;
    }
    if (enter < 0) break;
    if (++lastSolve.pivots > pivotLimit) {
      throw new Error(`EMD solver did not converge within ${pivotLimit} pivots (${m} x ${n} rows); please report this input`);
    }
    pivot(ws, enter, m, n);
    updateTree(ws, enter, m, n);
  }

  let total = 0;
  for (let a = 0; a < nodes - 1; a++) {
    if (arcHead[a] !== root) total += arcFlow[a] * arcCost[a];
  }
  return total;
}


/**
 * The simplex loop over the marked cells (ws.activeList[0..listed)), then the check of every unmarked cell; cells
 * that would improve join the list and the loop resumes. Returns the optimal cost.
 */
function restrictedSimplex(
  ws: Workspace,
  aRows: Float64Array,
  bRows: Float64Array,
  m: number,
  n: number,
  k: number,
  cols: Int32Array,
  tolerance: number,
  listed: number,
): number {
  const { rowOf, colOf, cost, known, potential, active, activeList, arcHead, arcFlow, arcCost } = ws;
  const cells = m * n;
  const nodes = m + n + 1;
  const root = m + n;
  const pivotLimit = 50 * cells + 10_000;
  rebuildTree(ws, nodes, root);
  let next = 0;
  for (;;) {
    // Partial pricing over the list: blocks of about sqrt(listed) cells, the most negative of the first improving block.
    const block = Math.max(Math.min(listed, 16), Math.ceil(Math.sqrt(listed)));
    let enter = -1;
    let best = -tolerance;
    let scanned = 0;
    while (scanned < listed) {
      const end = Math.min(scanned + block, listed);
      for (; scanned < end; scanned++) {
        const c = activeList[next];
        if (++next === listed) next = 0;
        const i = (c / n) | 0;
        const j = c - i * n;
        const pi = potential[i];
        const pj = potential[m + j];
        let rc = cost[c] + pi - pj;
        while (rc < best && known[c] < k) {
          rc = readColumns(aRows, rowOf[i] * k, bRows, colOf[j] * k, cols, cost, known, c, k, best - pi + pj, 1) + pi - pj;
        }
        if (rc < best) {
          best = rc;
          enter = c;
        }
      }
      if (enter >= 0) break;
    }
    if (enter < 0) {
      // Optimal on the list: price every other cell; those that would improve join it.
      const before = listed;
      for (let i = 0; i < m; i++) {
        const pi = potential[i];
        const base = i * n;
        for (let j = 0; j < n; j++) {
          const c = base + j;
          if (active[c]) continue;
          const pj = potential[m + j];
          let rc = cost[c] + pi - pj;
          while (rc < -tolerance && known[c] < k) {
            rc = readColumns(aRows, rowOf[i] * k, bRows, colOf[j] * k, cols, cost, known, c, k, -tolerance - pi + pj, 1) + pi - pj;
          }
          if (rc < -tolerance) {
            active[c] = 1;
            activeList[listed++] = c;
          }
        }
      }
      if (listed === before) break;
      continue;
    }
    if (++lastSolve.pivots > pivotLimit) {
      throw new Error(`EMD solver did not converge within ${pivotLimit} pivots (${m} x ${n} rows); please report this input`);
    }
    pivot(ws, enter, m, n);
    updateTree(ws, enter, m, n);
  }
  let total = 0;
  for (let a = 0; a < nodes - 1; a++) {
    if (arcHead[a] !== root) total += arcFlow[a] * arcCost[a];
  }
  return total;
}

/**
 * Bring cell `enter` (row i -> column j) into the tree. The cycle is oriented along the entering arc; the leaving
 * arc is the last blocking arc met when walking the cycle from its apex in that orientation, which keeps the tree
 * strongly feasible (Ahuja, Magnanti & Orlin 1993, section 11.6).
 */
function pivot(w0: Workspace, enter: number, m: number, n: number): void {
  const { arcTail, arcHead, arcFlow, arcCost, parent, parentArc, depth, cost } = w0;
  const i = (enter / n) | 0;
  const j = enter - i * n;
  const u = i;
  const v = m + j;
  // Apex: the nearest common ancestor of u and v.
  let x = u;
  let y = v;
  while (depth[x] > depth[y]) x = parent[x];
  while (depth[y] > depth[x]) y = parent[y];
  while (x !== y) {
    x = parent[x];
    y = parent[y];
  }
  const apex = x;

  // Walk order along the orientation: apex -> ... -> u, then u -> v, then v -> ... -> apex.
  // On the u side (walked downwards) an arc loses flow when it points up (child -> parent); climbing from u
  // visits it in reverse walk order, so among equal flows the first one met (nearest u) is the last in walk order.
  let theta = Infinity;
  let leave = -1;
  let leaveChild = -1;
  let leaveOnRowSide = true;
  for (let w = u; w !== apex; w = parent[w]) {
    const a = parentArc[w];
    if (arcTail[a] === w && arcFlow[a] < theta) {
      theta = arcFlow[a];
      leave = a;
      leaveChild = w;
    }
  }
  // On the v side (walked upwards) an arc loses flow when it points down (parent -> child); climbing from v is walk
  // order, so later ones win ties, and they also beat ties from the u side.
  for (let w = v; w !== apex; w = parent[w]) {
    const a = parentArc[w];
    if (arcHead[a] === w && arcFlow[a] <= theta) {
      theta = arcFlow[a];
      leave = a;
      leaveChild = w;
      leaveOnRowSide = false;
    }
  }
  w0.leaveChild = leaveChild;
  w0.leaveOnRowSide = leaveOnRowSide;
  if (leave < 0) throw new Error('EMD solver: pivot cycle has no blocking arc (internal error)');
  lastSolve.degeneratePivots += theta === 0 ? 1 : 0;

  if (theta > 0) {
    for (let w = u; w !== apex; w = parent[w]) {
      const a = parentArc[w];
      if (arcTail[a] === w) arcFlow[a] -= theta;
      else arcFlow[a] += theta;
    }
    for (let w = v; w !== apex; w = parent[w]) {
      const a = parentArc[w];
      if (arcHead[a] === w) arcFlow[a] -= theta;
      else arcFlow[a] += theta;
    }
  }
  // The entering arc takes the leaving arc's slot.
  arcTail[leave] = u;
  arcHead[leave] = v;
  arcFlow[leave] = theta;
  arcCost[leave] = cost[enter];
}

/** Parent pointers, depths and node potentials of the current tree, by breadth-first search from the root. */
function rebuildTree(w0: Workspace, nodes: number, root: number): void {
  const { arcTail, arcHead, arcCost, parent, parentArc, depth, potential, adjStart, adjFill, adjArc, queue } = w0;
  const { firstChild, nextSibling, prevSibling } = w0;
  const arcs = nodes - 1;
  for (let v = 0; v < nodes; v++) firstChild[v] = -1;
  for (let v = 0; v <= nodes; v++) adjStart[v] = 0;
  for (let a = 0; a < arcs; a++) {
    adjStart[arcTail[a] + 1]++;
    adjStart[arcHead[a] + 1]++;
  }
  for (let v = 0; v < nodes; v++) adjStart[v + 1] += adjStart[v];
  for (let v = 0; v < nodes; v++) adjFill[v] = adjStart[v];
  for (let a = 0; a < arcs; a++) {
    adjArc[adjFill[arcTail[a]]++] = a;
    adjArc[adjFill[arcHead[a]]++] = a;
  }
  // Potentials p with cost(t -> h) + p[t] - p[h] = 0 on every tree arc; p[root] = 0.
  parent[root] = -1;
  parentArc[root] = -1;
  depth[root] = 0;
  potential[root] = 0;
  let head = 0;
  let tail = 0;
  queue[tail++] = root;
  while (head < tail) {
    const w = queue[head++];
    for (let e = adjStart[w]; e < adjStart[w + 1]; e++) {
      const a = adjArc[e];
      if (a === parentArc[w]) continue;
      const child = arcTail[a] === w ? arcHead[a] : arcTail[a];
      parent[child] = w;
      parentArc[child] = a;
      depth[child] = depth[w] + 1;
      potential[child] = arcTail[a] === w ? potential[w] + arcCost[a] : potential[w] - arcCost[a];
      addChild(firstChild, nextSibling, prevSibling, w, child);
      queue[tail++] = child;
    }
  }
  if (tail !== nodes) throw new Error('EMD solver: basis is not a spanning tree (internal error)');
}

/**
 * After `pivot`: the subtree below the leaving arc is re-hung from the entering arc. The tree path from the
 * entering arc's end on that side up to the leaving arc's lower end reverses; then depths and potentials are
 * recomputed in that subtree only, each from its parent by the same formula as `rebuildTree`, so the values are
 * bit for bit those a full rebuild would give (the rest of the tree keeps its root paths).
 */
function updateTree(w0: Workspace, enter: number, m: number, n: number): void {
  const { arcTail, arcCost, parent, parentArc, depth, potential, queue, firstChild, nextSibling, prevSibling } = w0;
  const i = (enter / n) | 0;
  const j = enter - i * n;
  const q = w0.leaveChild;
  const x = w0.leaveOnRowSide ? i : m + j;
  const y = w0.leaveOnRowSide ? m + j : i;
  // The entering arc now sits in the leaving arc's slot (see `pivot`).
  let prevArc = parentArc[q];
  let prev = y;
  let w = x;
  for (;;) {
    const oldParent = parent[w];
    const oldArc = parentArc[w];
    removeChild(firstChild, nextSibling, prevSibling, oldParent, w);
    parent[w] = prev;
    parentArc[w] = prevArc;
    addChild(firstChild, nextSibling, prevSibling, prev, w);
    if (w === q) break;
    prev = w;
    prevArc = oldArc;
    w = oldParent;
  }
  // Depth-first walk of the re-hung subtree (stack in `queue`).
  let top = 0;
  queue[top++] = x;
  while (top > 0) {
    const v = queue[--top];
    const p = parent[v];
    const a = parentArc[v];
    depth[v] = depth[p] + 1;
    potential[v] = arcTail[a] === p ? potential[p] + arcCost[a] : potential[p] - arcCost[a];
    for (let c = firstChild[v]; c >= 0; c = nextSibling[c]) queue[top++] = c;
  }
}

function addChild(firstChild: Int32Array, nextSibling: Int32Array, prevSibling: Int32Array, p: number, c: number): void {
  const f = firstChild[p];
  nextSibling[c] = f;
  prevSibling[c] = -1;
  if (f >= 0) prevSibling[f] = c;
  firstChild[p] = c;
}

function removeChild(firstChild: Int32Array, nextSibling: Int32Array, prevSibling: Int32Array, p: number, c: number): void {
  const before = prevSibling[c];
  const after = nextSibling[c];
  if (before >= 0) nextSibling[before] = after;
  else firstChild[p] = after;
  if (after >= 0) prevSibling[after] = before;
}

function find(unionParent: Int32Array, v: number): number {
  while (unionParent[v] !== v) {
    unionParent[v] = unionParent[unionParent[v]];
    v = unionParent[v];
  }
  return v;
}

function unite(unionParent: Int32Array, a: number, b: number): void {
  const ra = find(unionParent, a);
  const rb = find(unionParent, b);
  if (ra !== rb) unionParent[ra] = rb;
}


/** Restore the heap order (cost, then cell index) below position h of the heap heap[base .. base + size). */
function siftDownAt(heap: Int32Array, base: number, size: number, h: number, cost: Float64Array): void {
  const v = heap[base + h];
  const cv = cost[v];
  for (;;) {
    let c = 2 * h + 1;
    if (c >= size) break;
    let cc = cost[heap[base + c]];
    const r = c + 1;
    if (r < size) {
      const cr = cost[heap[base + r]];
      if (cr < cc || (cr === cc && heap[base + r] < heap[base + c])) {
        c = r;
        cc = cr;
      }
    }
    if (cc > cv || (cc === cv && heap[base + c] > v)) break;
    heap[base + h] = heap[base + c];
    h = c;
  }
  heap[base + h] = v;
}

/** The same for the heap of rows, keyed by each row's top cell order[row * n] (cost, then cell index). */
function siftDownRows(rows: Int32Array, size: number, h: number, order: Int32Array, n: number, cost: Float64Array): void {
  const v = rows[h];
  const kv = order[v * n];
  const cv = cost[kv];
  for (;;) {
    let c = 2 * h + 1;
    if (c >= size) break;
    let kc = order[rows[c] * n];
    let cc = cost[kc];
    const r = c + 1;
    if (r < size) {
      const kr = order[rows[r] * n];
      const cr = cost[kr];
      if (cr < cc || (cr === cc && kr < kc)) {
        c = r;
        kc = kr;
        cc = cr;
      }
    }
    if (cc > cv || (cc === cv && kc > kv)) break;
    rows[h] = rows[c];
    h = c;
  }
  rows[h] = v;
}
