// One-to-one matching of the kept structures of two runs, allowing structures to stay unmatched.
//
// Objective (ours, stated so a reader can check it): among the candidate pairs given (in `diff`, the pairs
// within the duplicate tolerance), choose pairs so that no structure is in two pairs, with
//   1. as many pairs as possible, and among those
//   2. the smallest total cost (sum of EMD in Å).
// Method: the candidate pairs split into connected components of the bipartite graph; each component is an
// assignment problem solved exactly by the Hungarian algorithm (Kuhn, Naval Research Logistics Quarterly
// 1955; Munkres, J. SIAM 1957) in its O(n²m) shortest-augmenting-path form with potentials. A matched pair
// costs (cost − M) and an absent pair 0, with M larger than any sum of costs in the component, so minimising
// the total gives the lexicographic objective above exactly.

export interface CandidatePairs {
  /** Index on side A of each candidate pair. */
  a: Int32Array;
  /** Index on side B of each candidate pair. */
  b: Int32Array;
  /** Cost of each pair (finite, non-negative). */
  cost: Float64Array;
}

export interface Matching {
  /** Chosen pairs, sorted by A index. */
  pairs: Array<{ a: number; b: number; cost: number }>;
  /** For each A index, its B partner or -1. */
  partnerOfA: Int32Array;
  /** For each B index, its A partner or -1. */
  partnerOfB: Int32Array;
  totalCost: number;
}

/**
 * Maximum-cardinality, then minimum-total-cost, one-to-one matching between `nA` and `nB` items over the
 * candidate pairs. A pair listed twice keeps its smaller cost.
 */
export function matchOneToOne(nA: number, nB: number, candidates: CandidatePairs): Matching {
  const m = candidates.a.length;
  if (candidates.b.length !== m || candidates.cost.length !== m) {
    throw new Error('candidate pairs need equally long a, b and cost arrays');
  }
  for (let e = 0; e < m; e++) {
    const a = candidates.a[e];
    const b = candidates.b[e];
    const c = candidates.cost[e];
    if (!(a >= 0 && a < nA) || !(b >= 0 && b < nB)) throw new Error(`candidate pair ${e} (${a}, ${b}) lies outside ${nA} × ${nB}`);
    if (!Number.isFinite(c) || c < 0) throw new Error(`candidate pair ${e} (${a}, ${b}) has cost ${c}; costs must be finite and non-negative`);
  }

  // Connected components over A nodes 0..nA-1 and B nodes nA..nA+nB-1.
  const parent = new Int32Array(nA + nB);
  for (let i = 0; i < parent.length; i++) parent[i] = i;
  for (let e = 0; e < m; e++) union(parent, candidates.a[e], nA + candidates.b[e]);
  const edgesOf = new Map<number, number[]>();
  for (let e = 0; e < m; e++) {
    const root = find(parent, candidates.a[e]);
    let list = edgesOf.get(root);
    if (!list) edgesOf.set(root, (list = []));
    list.push(e);
  }

  const partnerOfA = new Int32Array(nA).fill(-1);
  const partnerOfB = new Int32Array(nB).fill(-1);
  for (const edges of edgesOf.values()) solveComponent(edges, candidates, partnerOfA, partnerOfB);

  // Costs of the chosen pairs (smallest listed cost per pair).
  const best = new Map<number, number>();
  for (let e = 0; e < m; e++) {
    const a = candidates.a[e];
    if (partnerOfA[a] !== candidates.b[e]) continue;
    const prev = best.get(a);
    if (prev === undefined || candidates.cost[e] < prev) best.set(a, candidates.cost[e]);
  }
  const pairs: Array<{ a: number; b: number; cost: number }> = [];
  let totalCost = 0;
  for (let a = 0; a < nA; a++) {
    if (partnerOfA[a] < 0) continue;
    const cost = best.get(a) as number;
    pairs.push({ a, b: partnerOfA[a], cost });
    totalCost += cost;
  }
  return { pairs, partnerOfA, partnerOfB, totalCost };
}

/** Solve one connected component exactly and write its partners. */
function solveComponent(edges: number[], cand: CandidatePairs, partnerOfA: Int32Array, partnerOfB: Int32Array): void {
  // Local numbering of the component's A and B items.
  const localA = new Map<number, number>();
  const localB = new Map<number, number>();
  const globalA: number[] = [];
  const globalB: number[] = [];
  let maxCost = 0;
  for (const e of edges) {
    if (!localA.has(cand.a[e])) { localA.set(cand.a[e], globalA.length); globalA.push(cand.a[e]); }
    if (!localB.has(cand.b[e])) { localB.set(cand.b[e], globalB.length); globalB.push(cand.b[e]); }
    if (cand.cost[e] > maxCost) maxCost = cand.cost[e];
  }
  // Rows are the smaller side so every row can be assigned.
  const transpose = globalA.length > globalB.length;
  const rows = transpose ? globalB.length : globalA.length;
  const cols = transpose ? globalA.length : globalB.length;
  // A matched pair costs (cost − bigM); bigM exceeds any possible sum of matched costs, so one more pair always wins.
  const bigM = (maxCost + 1) * (rows + 1);
  const w = new Float64Array(rows * cols); // 0 = "no pair here" (the row stays unmatched)
  const isPair = new Uint8Array(rows * cols);
  for (const e of edges) {
    const ia = localA.get(cand.a[e]) as number;
    const ib = localB.get(cand.b[e]) as number;
    const r = transpose ? ib : ia;
    const c = transpose ? ia : ib;
    const v = cand.cost[e] - bigM;
    if (!isPair[r * cols + c] || v < w[r * cols + c]) w[r * cols + c] = v;
    isPair[r * cols + c] = 1;
  }
  const rowToCol = hungarian(w, rows, cols);
  for (let r = 0; r < rows; r++) {
    const c = rowToCol[r];
    if (!isPair[r * cols + c]) continue;
    const a = transpose ? globalA[c] : globalA[r];
    const b = transpose ? globalB[r] : globalB[c];
    partnerOfA[a] = b;
    partnerOfB[b] = a;
  }
}

/**
 * Minimum-cost assignment of every row to a distinct column (rows ≤ cols), cost matrix row-major.
 * Shortest augmenting paths with row/column potentials; returns the column of each row.
 */
export function hungarian(cost: Float64Array, rows: number, cols: number): Int32Array {
  if (rows > cols) throw new Error(`hungarian needs rows ≤ columns, got ${rows} × ${cols}`);
  // 1-based arrays as in the textbook form; index 0 is the virtual start column.
  const u = new Float64Array(rows + 1);
  const v = new Float64Array(cols + 1);
  const p = new Int32Array(cols + 1); // p[j]: row assigned to column j (0 = none)
  const way = new Int32Array(cols + 1);
  const minv = new Float64Array(cols + 1);
  const used = new Uint8Array(cols + 1);
  for (let i = 1; i <= rows; i++) {
    // Grow a shortest-path tree from row i until it reaches a free column.
    p[0] = i;
    let j0 = 0;
    minv.fill(Infinity);
    used.fill(0);
    do {
      used[j0] = 1;
      const i0 = p[j0];
      let delta = Infinity;
      let j1 = 0;
      const base = (i0 - 1) * cols;
      for (let j = 1; j <= cols; j++) {
        if (used[j]) continue;
        const cur = cost[base + j - 1] - u[i0] - v[j];
        if (cur < minv[j]) { minv[j] = cur; way[j] = j0; }
        if (minv[j] < delta) { delta = minv[j]; j1 = j; }
      }
      for (let j = 0; j <= cols; j++) {
        if (used[j]) { u[p[j]] += delta; v[j] -= delta; } else minv[j] -= delta;
      }
      j0 = j1;
    } while (p[j0] !== 0);
    // Flip the augmenting path.
    do {
      const j1 = way[j0];
      p[j0] = p[j1];
      j0 = j1;
    } while (j0 !== 0);
  }
  const rowToCol = new Int32Array(rows).fill(-1);
  for (let j = 1; j <= cols; j++) if (p[j] > 0) rowToCol[p[j] - 1] = j - 1;
  return rowToCol;
}

function find(parent: Int32Array, x: number): number {
  while (parent[x] !== x) {
    parent[x] = parent[parent[x]];
    x = parent[x];
  }
  return x;
}

function union(parent: Int32Array, x: number, y: number): void {
  const rx = find(parent, x);
  const ry = find(parent, y);
  if (rx !== ry) parent[rx] = ry;
}
