// HDBSCAN on a precomputed metric: density-based hierarchy with stability-based cluster selection.
//
// Method: Campello, Moulavi & Sander, "Density-based clustering based on hierarchical density
// estimates", PAKDD 2013; McInnes & Healy, "Accelerated hierarchical density based clustering",
// ICDMW 2017. Reference implementation matched step by step: scikit-learn's
// `sklearn.cluster.HDBSCAN(metric="precomputed")` with its defaults (cluster_selection_method="eom",
// allow_single_cluster=False, alpha=1.0, cluster_selection_epsilon=0), version 1.9.
//
// Conventions (all as in scikit-learn):
// - The core distance of point i with `minSamples = s` is the s-th smallest entry of row i of the
//   distance matrix, the zero on the diagonal included: the distance to the (s-1)-th nearest OTHER
//   point (0 when s = 1). Exact duplicates count as neighbours.
// - Mutual reachability: mr(i, j) = max(core_i, core_j, d_ij).
// - Minimum spanning tree by Prim's algorithm started at point 0; among equally near candidates the
//   lowest index is taken, and each tree edge is recorded as (last added point, new point). That
//   edge list is a path in Prim order, which gives the same single-linkage hierarchy as the true
//   tree edges (at any threshold the components are contiguous runs of Prim order).
// - Single-linkage tree: edges sorted by weight, merged with a union-find; node n + t is the t-th merge.
// - Condensed tree with `minClusterSize`, stability (excess of mass), selection excluding the root.
//
// Ties: when several spanning-tree edges have equal weight (mutual reachability makes this common,
// since many edges take the value of one point's core distance), the order in which they are merged
// can change the binary single-linkage tree and hence the condensed tree: for example three parts
// meeting at one level, two of them at least `minClusterSize`, split into two children with a point
// falling out either of the root or of one child. scikit-learn sorts the edges with numpy's default
// (not stable) sort, so its order among equal weights is an implementation detail of numpy. Here the
// sort is stable: equal weights keep Prim order. Measured on invented data: with min_samples > 1,
// 2-D blob and ring sets often give partitions that depend on the tie order (spurious clusters of
// zero stability appear or vanish), 5-D blobs and PDD/EMD sets less often. The tests therefore match
// scikit-learn's public estimator exactly where its own pipeline gives the same partition under eight
// different tie orders, and match its pipeline re-run with a stable sort everywhere else.
//
// Label numbering (ours): clusters are numbered 0, 1, ... in order of their smallest member index;
// -1 is noise. Membership probabilities follow scikit-learn: lambda at which a point leaves its
// cluster, capped at and divided by the largest lambda among the selected cluster's direct children.
import { selectKth } from './select-kth.js';

export interface HdbscanOptions {
  /** Smallest group that counts as a cluster (scikit-learn `min_cluster_size`, at least 2). */
  minClusterSize: number;
  /** Neighbour count for core distances, the point itself included (scikit-learn `min_samples`); default `minClusterSize`. */
  minSamples?: number;
}

export interface HdbscanResult {
  /** Cluster per point, -1 for noise; clusters numbered by their smallest member index. */
  labels: Int32Array;
  /** Membership strength in [0, 1] per point (0 for noise). */
  probabilities: Float64Array;
}

/** An exact k-nearest-neighbour graph: row i lists the k nearest other points of i and their distances. */
export interface KnownNeighbours {
  k: number;
  /** n*k point indices, row-major. */
  indices: Int32Array;
  /** n*k distances matching `indices`, ascending per row; must be the values `distance` returns. */
  distances: Float64Array;
}

export interface LazyHdbscanOptions extends HdbscanOptions {
  /**
   * The exact neighbour graph the core distances came from, if at hand. Its distances are then used
   * without calling `distance`, and a pair outside both points' lists is at least as far apart as
   * either point's k-th neighbour, which rules out most pairs before any bound is computed.
   */
  neighbours?: KnownNeighbours;
  /**
   * A dearer bracket of a distance, lower <= distance(i, j) <= upper (for PDDs, the merged-row EMD), asked before
   * `distance` for a pair that the cheap floors did not rule out: when upper is at most the two core distances the
   * mutual reachability is their maximum exactly, and when lower is at least the best value found the pair cannot
   * improve it; only otherwise is `distance` called. Writes the bracket into `out`.
   */
  bracket?: (i: number, j: number, out: { lower: number; upper: number }) => void;
}

export interface LazyHdbscanResult extends HdbscanResult {
  /** How many times `distance` was called while building the spanning tree. */
  distanceEvaluations: number;
}

/**
 * HDBSCAN labels from a dense symmetric n*n distance matrix (row-major).
 * Throws on a matrix of the wrong size, negative or NaN entries, or `minSamples` > n.
 */
export function hdbscanDense(dist: Float64Array, n: number, opts: HdbscanOptions): HdbscanResult {
  const { minSamples } = checkOptions(n, opts);
  if (dist.length !== n * n) throw new Error(`hdbscanDense: distance matrix has ${dist.length} entries, expected ${n}*${n}`);
  for (let t = 0; t < dist.length; t++) {
    const v = dist[t];
    if (!(v >= 0)) throw new Error(`hdbscanDense: distance (${Math.floor(t / n)}, ${t % n}) is ${v}; distances must be >= 0`);
  }
  if (n < 2) return trivialResult(n);
  const core = coreDistancesDense(dist, n, minSamples);
  const mst = primDense(dist, n, core);
  return labelsFromSpanningTree(mst, n, opts.minClusterSize);
}

/**
 * The same result as `hdbscanDense` without an n*n matrix. `distance(i, j)` is the metric,
 * `lowerBound(i, j) <= distance(i, j)` a cheap bound (for PDDs the AMD L-infinity bound), and
 * `coreDistances` the exact core distances for `opts.minSamples` (see `coreDistancesFromNeighbours`).
 * Prim's algorithm keeps, for each point outside the tree, the best mutual reachability found so
 * far and a floor for the pairs not yet evaluated (max of the two core distances, the two k-th
 * neighbour distances when `opts.neighbours` is given, and the bound). Only the candidate with the
 * smallest value is settled, its open pairs evaluated in order of increasing floor until the floor
 * reaches the best value found. Minima are exact and ties go to the lowest index as in the dense
 * version, so the spanning tree (every tie included) and the labels are the dense version's.
 * Cost: O(n^2) cheap floor updates and bound calls at most; the expensive `distance` calls are what
 * the floors save (about half of all pairs on clustered PDD sets with the AMD bound, measured).
 */
export function hdbscanLazy(
  n: number,
  distance: (i: number, j: number) => number,
  lowerBound: (i: number, j: number) => number,
  coreDistances: Float64Array,
  opts: LazyHdbscanOptions,
): LazyHdbscanResult {
  checkOptions(n, opts);
  const graph = opts.neighbours;
  if (graph && (graph.indices.length !== n * graph.k || graph.distances.length !== n * graph.k)) {
    throw new Error(`hdbscanLazy: neighbour graph has ${graph.indices.length} entries, expected ${n}*${graph.k}`);
  }
  if (coreDistances.length !== n) throw new Error(`hdbscanLazy: ${coreDistances.length} core distances for ${n} points`);
  for (let i = 0; i < n; i++) {
    if (!(coreDistances[i] >= 0)) throw new Error(`hdbscanLazy: core distance of point ${i} is ${coreDistances[i]}`);
  }
  if (n < 2) return { ...trivialResult(n), distanceEvaluations: 0 };
  const counter = { evaluations: 0 };
  const mst = primLazy(n, distance, lowerBound, coreDistances, graph ?? null, counter, opts.bracket ?? null);
  return { ...labelsFromSpanningTree(mst, n, opts.minClusterSize), distanceEvaluations: counter.evaluations };
}

/** Core distances from a dense matrix: the `minSamples`-th smallest entry of each row, diagonal included. */
export function coreDistancesDense(dist: Float64Array, n: number, minSamples: number): Float64Array {
  if (!Number.isInteger(minSamples) || minSamples < 1 || minSamples > n) {
    throw new Error(`coreDistancesDense: minSamples must be an integer in 1..${n}, got ${minSamples}`);
  }
  const core = new Float64Array(n);
  const row = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    row.set(dist.subarray(i * n, i * n + n));
    core[i] = selectKth(row, minSamples - 1);
  }
  return core;
}

/**
 * Core distances from an exact nearest-neighbour graph: `neighbourDistances` holds, per point, the
 * distances to its `k` nearest OTHER points in ascending order (n*k, row-major). With the point itself
 * counted (scikit-learn's convention) the core distance is the (minSamples-1)-th of them, 0 when
 * minSamples = 1. Needs k >= minSamples - 1.
 */
export function coreDistancesFromNeighbours(neighbourDistances: Float64Array, n: number, k: number, minSamples: number): Float64Array {
  if (!Number.isInteger(minSamples) || minSamples < 1) throw new Error(`coreDistancesFromNeighbours: minSamples must be a positive integer, got ${minSamples}`);
  if (neighbourDistances.length !== n * k) throw new Error(`coreDistancesFromNeighbours: ${neighbourDistances.length} distances, expected ${n}*${k}`);
  if (minSamples - 1 > k) throw new Error(`coreDistancesFromNeighbours: minSamples ${minSamples} needs at least ${minSamples - 1} neighbours per point, the graph has ${k}`);
  const core = new Float64Array(n);
  if (minSamples === 1) return core;
  for (let i = 0; i < n; i++) core[i] = neighbourDistances[i * k + minSamples - 2];
  return core;
}

// ---------------------------------------------------------------------------------------------
// Spanning tree (Prim) over mutual reachability

/** Edges in Prim order: from[t] (last added point), to[t] (new point), weight[t]. */
interface SpanningTree {
  from: Int32Array;
  to: Int32Array;
  weight: Float64Array;
}

function primDense(dist: Float64Array, n: number, core: Float64Array): SpanningTree {
  const tree = allocTree(n);
  const inTree = new Uint8Array(n);
  const best = new Float64Array(n).fill(Infinity);
  let current = 0;
  for (let t = 0; t < n - 1; t++) {
    inTree[current] = 1;
    const coreC = core[current];
    const rowOffset = current * n;
    // relax every outside point against the point just added, and pick the nearest (lowest index on ties)
    let next = -1;
    let nextWeight = Infinity;
    for (let j = 0; j < n; j++) {
      if (inTree[j]) continue;
      let r = dist[rowOffset + j];
      if (coreC > r) r = coreC;
      if (core[j] > r) r = core[j];
      if (r < best[j]) best[j] = r;
      if (next < 0 || best[j] < nextWeight) {
        next = j;
        nextWeight = best[j];
      }
    }
    tree.from[t] = current;
    tree.to[t] = next;
    tree.weight[t] = nextWeight;
    current = next;
  }
  return tree;
}

function primLazy(
  n: number,
  distance: (i: number, j: number) => number,
  lowerBound: (i: number, j: number) => number,
  core: Float64Array,
  graph: KnownNeighbours | null,
  counter: { evaluations: number },
  bracket: ((i: number, j: number, out: { lower: number; upper: number }) => void) | null,
): SpanningTree {
  const range = { lower: 0, upper: Infinity };
  const tree = allocTree(n);
  const inTree = new Uint8Array(n);
  // best[j]: smallest mutual reachability from j to the tree among the pairs looked at so far (exact
  // values); pending[j]: a floor for the pairs (tree point, j) not looked at yet, which are the tree
  // points added at positions seen[j] .. size-1 of `order`. j's true distance to the tree is
  // min(best[j], what the pending pairs give) >= min(best[j], pending[j]).
  const best = new Float64Array(n).fill(Infinity);
  const pending = new Float64Array(n).fill(Infinity);
  const seen = new Int32Array(n);
  const order = new Int32Array(n);
  let size = 0;
  // from the neighbour graph: each point's k-th neighbour distance, and for each point the points
  // listing it (reverse lists), so both directions of a known pair are found in O(k)
  const k = graph ? graph.k : 0;
  const radius = new Float64Array(n);
  const known = new Float64Array(n);
  const knownFor = new Int32Array(n).fill(-1);
  const revStart = new Int32Array(n + 1);
  const revFrom = new Int32Array(n * k);
  const revDist = new Float64Array(n * k);
  if (graph && k > 0) {
    for (let i = 0; i < n; i++) radius[i] = graph.distances[i * k + k - 1];
    for (let t = 0; t < n * k; t++) revStart[graph.indices[t] + 1]++;
    for (let i = 0; i < n; i++) revStart[i + 1] += revStart[i];
    const fill = revStart.slice(0, n);
    for (let i = 0; i < n; i++) {
      for (let t = i * k; t < i * k + k; t++) {
        const j = graph.indices[t];
        revFrom[fill[j]] = i;
        revDist[fill[j]++] = graph.distances[t];
      }
    }
  }
  // distances known for free from point c: mark them in `known` (valid while knownFor[j] === c)
  const markKnown = (c: number) => {
    if (!graph || k === 0) return;
    for (let q = c * k; q < c * k + k; q++) {
      known[graph.indices[q]] = graph.distances[q];
      knownFor[graph.indices[q]] = c;
    }
    for (let q = revStart[c]; q < revStart[c + 1]; q++) {
      known[revFrom[q]] = revDist[q];
      knownFor[revFrom[q]] = c;
    }
  };
  // settle j's pending pairs: free ones directly, the others in order of increasing floor, so that
  // only pairs whose floor is below j's final distance to the tree are evaluated
  const candFrom = new Int32Array(n);
  const candFloor = new Float64Array(n);
  const candOrder = new Int32Array(n);
  const nearJ = new Float64Array(n);
  const nearJStamp = new Int32Array(n).fill(-1);
  let resolveId = 0;
  const resolve = (j: number) => {
    // j's graph neighbours in both directions, with their distances, stamped for this call
    resolveId++;
    if (graph && k > 0) {
      for (let q = j * k; q < j * k + k; q++) {
        nearJ[graph.indices[q]] = graph.distances[q];
        nearJStamp[graph.indices[q]] = resolveId;
      }
      for (let q = revStart[j]; q < revStart[j + 1]; q++) {
        nearJ[revFrom[q]] = revDist[q];
        nearJStamp[revFrom[q]] = resolveId;
      }
    }
    let m = 0;
    for (let p = seen[j]; p < size; p++) {
      const c = order[p];
      let floor = core[c] > core[j] ? core[c] : core[j];
      if (floor >= best[j]) continue;
      if (nearJStamp[c] === resolveId) {
        const r = mutualReachability(core[c], core[j], nearJ[c]);
        if (r < best[j]) best[j] = r;
        continue;
      }
      // outside both neighbour lists: at least as far as either point's k-th neighbour
      if (radius[c] > floor) floor = radius[c];
      if (radius[j] > floor) floor = radius[j];
      if (floor >= best[j]) continue;
      const lb = lowerBound(c, j);
      if (lb > floor) floor = lb;
      if (floor >= best[j]) continue;
      candFrom[m] = c;
      candFloor[m] = floor;
      candOrder[m] = m;
      m++;
    }
    const ranked = candOrder.subarray(0, m).sort((a, b) => candFloor[a] - candFloor[b] || a - b);
    for (let t = 0; t < m; t++) {
      const q = ranked[t];
      if (candFloor[q] >= best[j]) break;
      const c = candFrom[q];
      if (bracket) {
        bracket(c, j, range);
        const coreMax = core[c] > core[j] ? core[c] : core[j];
        if (range.upper <= coreMax) {
          // mutual reachability = max(core_c, core_j, d) with d <= coreMax: exactly coreMax
          if (coreMax < best[j]) best[j] = coreMax;
          continue;
        }
        if ((range.lower > coreMax ? range.lower : coreMax) >= best[j]) continue;
      }
      const d = distance(c, j);
      counter.evaluations++;
      if (!(d >= 0)) throw new Error(`hdbscanLazy: distance(${c}, ${j}) is ${d}; distances must be >= 0`);
      const r = mutualReachability(core[c], core[j], d);
      if (r < best[j]) best[j] = r;
    }
    seen[j] = size;
    pending[j] = Infinity;
  };
  const listIdx = new Int32Array(SHORT);
  const listKey = new Float64Array(SHORT);
  let current = 0;
  for (let t = 0; t < n - 1; t++) {
    inTree[current] = 1;
    order[size++] = current;
    markKnown(current);
    const coreC = core[current];
    const radiusC = radius[current];
    // cheap floors for the new pairs (current, j); free exact values for graph neighbours
    for (let j = 0; j < n; j++) {
      if (inTree[j]) continue;
      const floor = coreC > core[j] ? coreC : core[j];
      if (knownFor[j] === current) {
        const r = mutualReachability(coreC, core[j], known[j]);
        if (r < best[j]) best[j] = r;
        // the pair is settled; if it was j's only pending one, nothing is pending any more
        if (seen[j] === size - 1) seen[j] = size;
        else if (floor < pending[j]) pending[j] = floor;
      } else {
        let f = floor;
        if (radiusC > f) f = radiusC;
        if (radius[j] > f) f = radius[j];
        // the bound only matters when it could lower j's pending floor below what is known
        if (f < pending[j] && f < best[j]) {
          const lb = lowerBound(current, j);
          if (lb > f) f = lb;
        }
        if (f < pending[j]) pending[j] = f;
      }
    }
    // the next point is the one with the smallest distance to the tree (lowest index on ties), as
    // the dense version picks it. Candidates are ordered by (value, index), value = min(best, pending)
    // being a floor of the true distance; the smallest is settled until it needs no settling. A
    // short list holds the SHORT smallest candidates; points outside it stay above its last entry
    // (settling only raises the settled point's value), so the list is rebuilt only when it empties.
    let next = -1;
    let count = 0;
    let thresholdKey = Infinity;
    let thresholdIdx = n;
    for (;;) {
      if (count === 0) {
        count = shortList(n, inTree, best, pending, listIdx, listKey);
        if (count === SHORT) {
          thresholdKey = listKey[SHORT - 1];
          thresholdIdx = listIdx[SHORT - 1];
        } else {
          thresholdKey = Infinity;
          thresholdIdx = n;
        }
      }
      // smallest (value, index) in the list
      let pos = 0;
      for (let q = 1; q < count; q++) {
        if (listKey[q] < listKey[pos] || (listKey[q] === listKey[pos] && listIdx[q] < listIdx[pos])) pos = q;
      }
      next = listIdx[pos];
      if (!(pending[next] < best[next])) break;
      resolve(next);
      listKey[pos] = best[next];
      // beyond the threshold it can no longer be compared with the points outside the list
      if (listKey[pos] > thresholdKey || (listKey[pos] === thresholdKey && next > thresholdIdx)) {
        count--;
        listIdx[pos] = listIdx[count];
        listKey[pos] = listKey[count];
      }
    }
    tree.from[t] = current;
    tree.to[t] = next;
    tree.weight[t] = best[next];
    current = next;
  }
  return tree;
}

/** Length of the candidate short list of the lazy Prim step. */
const SHORT = 64;

/**
 * The (up to) SHORT points outside the tree with the smallest (min(best, pending), index), written to
 * idx/key in ascending order; returns how many.
 */
function shortList(n: number, inTree: Uint8Array, best: Float64Array, pending: Float64Array, idx: Int32Array, key: Float64Array): number {
  let count = 0;
  for (let j = 0; j < n; j++) {
    if (inTree[j]) continue;
    const kj = pending[j] < best[j] ? pending[j] : best[j];
    // points are visited in index order, so an equal value never goes before an entry already there
    if (count === SHORT && !(kj < key[SHORT - 1])) continue;
    let pos = count < SHORT ? count++ : SHORT - 1;
    while (pos > 0 && key[pos - 1] > kj) {
      key[pos] = key[pos - 1];
      idx[pos] = idx[pos - 1];
      pos--;
    }
    key[pos] = kj;
    idx[pos] = j;
  }
  return count;
}

/** max(core_i, core_j, d): the mutual reachability itself (the bound only decides whether to look). */
function mutualReachability(a: number, b: number, d: number): number {
  let r = d;
  if (a > r) r = a;
  if (b > r) r = b;
  return r;
}

function allocTree(n: number): SpanningTree {
  return { from: new Int32Array(n - 1), to: new Int32Array(n - 1), weight: new Float64Array(n - 1) };
}

// ---------------------------------------------------------------------------------------------
// Single-linkage tree, condensed tree, stability, selection, labels

function labelsFromSpanningTree(mst: SpanningTree, n: number, minClusterSize: number): HdbscanResult {
  const linkage = singleLinkage(mst, n);
  const condensed = condenseTree(linkage, n, minClusterSize);
  return selectAndLabel(condensed, n);
}

/** scipy-style linkage: merge t joins `left[t]` and `right[t]` at `height[t]` into node n + t of `size[t]` points. */
interface Linkage {
  left: Int32Array;
  right: Int32Array;
  height: Float64Array;
  size: Int32Array;
}

function singleLinkage(mst: SpanningTree, n: number): Linkage {
  const m = n - 1;
  // stable sort of the edges by weight: equal weights keep Prim order (see the note on ties above)
  const order = new Int32Array(m);
  for (let t = 0; t < m; t++) order[t] = t;
  const w = mst.weight;
  const sorted = Array.from(order).sort((a, b) => w[a] - w[b] || a - b);
  const parent = new Int32Array(2 * n - 1).fill(-1);
  const sizeOf = new Int32Array(2 * n - 1);
  for (let i = 0; i < n; i++) sizeOf[i] = 1;
  const out: Linkage = { left: new Int32Array(m), right: new Int32Array(m), height: new Float64Array(m), size: new Int32Array(m) };
  for (let t = 0; t < m; t++) {
    const e = sorted[t];
    const a = findRoot(parent, mst.from[e]);
    const b = findRoot(parent, mst.to[e]);
    const node = n + t;
    out.left[t] = a;
    out.right[t] = b;
    out.height[t] = w[e];
    out.size[t] = sizeOf[a] + sizeOf[b];
    sizeOf[node] = out.size[t];
    parent[a] = node;
    parent[b] = node;
  }
  return out;
}

/** Root of x's tree with path compression (the merge tree only grows upwards). */
function findRoot(parent: Int32Array, x: number): number {
  let r = x;
  while (parent[r] !== -1) r = parent[r];
  while (parent[x] !== -1 && parent[x] !== r) {
    const up = parent[x];
    parent[x] = r;
    x = up;
  }
  return r;
}

/**
 * Condensed tree as parallel arrays of rows (parent cluster, child, lambda = 1/distance, child size).
 * Points have ids 0..n-1, clusters n (the root), n+1, ... in order of birth. Rows come in the order
 * scikit-learn emits them (breadth-first over the single-linkage tree), so sums over rows add up in
 * the same order.
 */
interface CondensedTree {
  rows: number;
  parent: Int32Array;
  child: Int32Array;
  lambda: Float64Array;
  childSize: Int32Array;
  /** Number of cluster ids used: clusters are n .. n + clusterCount - 1. */
  clusterCount: number;
}

function condenseTree(linkage: Linkage, n: number, minClusterSize: number): CondensedTree {
  const root = 2 * n - 2;
  const capacity = 2 * n;
  const parentOut = new Int32Array(capacity);
  const childOut = new Int32Array(capacity);
  const lambdaOut = new Float64Array(capacity);
  const sizeOut = new Int32Array(capacity);
  let rows = 0;
  const push = (p: number, c: number, l: number, s: number) => {
    parentOut[rows] = p;
    childOut[rows] = c;
    lambdaOut[rows] = l;
    sizeOut[rows] = s;
    rows++;
  };
  const relabel = new Int32Array(root + 1);
  relabel[root] = n;
  let nextLabel = n + 1;
  const ignore = new Uint8Array(root + 1);
  const nodeSize = (x: number) => (x >= n ? linkage.size[x - n] : 1);
  const queue = new Int32Array(root + 1);
  // emit every point under `sub` as falling out of cluster `label` at `lambda`, and skip its merges
  const dropSubtree = (sub: number, label: number, lambda: number) => {
    let head = 0;
    let tail = 0;
    queue[tail++] = sub;
    while (head < tail) {
      const x = queue[head++];
      if (x < n) push(label, x, lambda, 1);
      else {
        queue[tail++] = linkage.left[x - n];
        queue[tail++] = linkage.right[x - n];
      }
      ignore[x] = 1;
    }
  };
  // breadth-first order over the single-linkage tree from the root
  const order = bfsOrder(linkage, n, root);
  for (let q = 0; q < order.length; q++) {
    const node = order[q];
    if (ignore[node] || node < n) continue;
    const left = linkage.left[node - n];
    const right = linkage.right[node - n];
    const distance = linkage.height[node - n];
    const lambda = distance > 0 ? 1 / distance : Infinity;
    const leftCount = nodeSize(left);
    const rightCount = nodeSize(right);
    const label = relabel[node];
    if (leftCount >= minClusterSize && rightCount >= minClusterSize) {
      // a true split: both sides become new clusters
      relabel[left] = nextLabel++;
      push(label, relabel[left], lambda, leftCount);
      relabel[right] = nextLabel++;
      push(label, relabel[right], lambda, rightCount);
    } else if (leftCount < minClusterSize && rightCount < minClusterSize) {
      // the cluster dissolves: every point leaves it here
      dropSubtree(left, label, lambda);
      dropSubtree(right, label, lambda);
    } else if (leftCount < minClusterSize) {
      relabel[right] = label;
      dropSubtree(left, label, lambda);
    } else {
      relabel[left] = label;
      dropSubtree(right, label, lambda);
    }
  }
  return {
    rows,
    parent: parentOut.subarray(0, rows),
    child: childOut.subarray(0, rows),
    lambda: lambdaOut.subarray(0, rows),
    childSize: sizeOut.subarray(0, rows),
    clusterCount: nextLabel - n,
  };
}

function bfsOrder(linkage: Linkage, n: number, root: number): Int32Array {
  const out = new Int32Array(2 * n - 1);
  let head = 0;
  let tail = 0;
  out[tail++] = root;
  while (head < tail) {
    const x = out[head++];
    if (x >= n) {
      out[tail++] = linkage.left[x - n];
      out[tail++] = linkage.right[x - n];
    }
  }
  return out;
}

function selectAndLabel(tree: CondensedTree, n: number): HdbscanResult {
  const clusters = tree.clusterCount;
  // birth lambda of each cluster (root born at 0), stability = sum over its rows of (lambda - birth) * size
  const birth = new Float64Array(clusters);
  const stability = new Float64Array(clusters);
  const deathLambda = new Float64Array(clusters);
  const clusterParent = new Int32Array(clusters).fill(-1);
  const pointParent = new Int32Array(n);
  const pointLambda = new Float64Array(n);
  for (let r = 0; r < tree.rows; r++) {
    const c = tree.child[r];
    if (c >= n) {
      birth[c - n] = tree.lambda[r];
      clusterParent[c - n] = tree.parent[r] - n;
    } else {
      pointParent[c] = tree.parent[r] - n;
      pointLambda[c] = tree.lambda[r];
    }
  }
  birth[0] = 0;
  for (let r = 0; r < tree.rows; r++) {
    const p = tree.parent[r] - n;
    stability[p] += (tree.lambda[r] - birth[p]) * tree.childSize[r];
    if (tree.lambda[r] > deathLambda[p]) deathLambda[p] = tree.lambda[r];
  }
  // children of each cluster (0 or 2), in row order
  const firstChild = new Int32Array(clusters).fill(-1);
  const secondChild = new Int32Array(clusters).fill(-1);
  for (let r = 0; r < tree.rows; r++) {
    const c = tree.child[r];
    if (c < n) continue;
    const p = tree.parent[r] - n;
    if (firstChild[p] < 0) firstChild[p] = c - n;
    else secondChild[p] = c - n;
  }
  // excess of mass: leaves upwards (cluster ids grow with depth), the root never selected
  const selected = new Uint8Array(clusters);
  for (let c = clusters - 1; c >= 1; c--) selected[c] = 1;
  for (let c = clusters - 1; c >= 1; c--) {
    let childSum = 0;
    if (firstChild[c] >= 0) childSum += stability[firstChild[c]];
    if (secondChild[c] >= 0) childSum += stability[secondChild[c]];
    if (childSum > stability[c]) {
      selected[c] = 0;
      stability[c] = childSum;
    } else {
      unselectDescendants(c, firstChild, secondChild, selected);
    }
  }
  // each point belongs to its nearest selected ancestor cluster, or is noise
  const owner = new Int32Array(clusters).fill(-1);
  for (let c = 1; c < clusters; c++) {
    // parents have smaller ids than children, so owner[parent] is final when read
    if (selected[c]) owner[c] = c;
    else if (clusterParent[c] >= 0) owner[c] = owner[clusterParent[c]];
  }
  const labels = new Int32Array(n).fill(-1);
  const probabilities = new Float64Array(n);
  const labelOf = new Int32Array(clusters).fill(-1);
  let nextLabel = 0;
  for (let i = 0; i < n; i++) {
    const c = owner[pointParent[i]];
    if (c < 0) continue;
    if (labelOf[c] < 0) labelOf[c] = nextLabel++;
    labels[i] = labelOf[c];
    const maxLambda = deathLambda[c];
    const l = pointLambda[i];
    if (maxLambda === 0 || l === Infinity) probabilities[i] = 1;
    else probabilities[i] = (l < maxLambda ? l : maxLambda) / maxLambda;
  }
  return { labels, probabilities };
}

function unselectDescendants(c: number, firstChild: Int32Array, secondChild: Int32Array, selected: Uint8Array): void {
  const stack = [firstChild[c], secondChild[c]];
  while (stack.length > 0) {
    const x = stack.pop() as number;
    if (x < 0) continue;
    selected[x] = 0;
    stack.push(firstChild[x], secondChild[x]);
  }
}

// ---------------------------------------------------------------------------------------------
// helpers

function checkOptions(n: number, opts: HdbscanOptions): { minSamples: number } {
  if (!Number.isInteger(n) || n < 0) throw new Error(`HDBSCAN: point count must be a non-negative integer, got ${n}`);
  const { minClusterSize } = opts;
  if (!Number.isInteger(minClusterSize) || minClusterSize < 2) {
    throw new Error(`HDBSCAN: minimum cluster size must be an integer >= 2, got ${minClusterSize}`);
  }
  const minSamples = opts.minSamples ?? minClusterSize;
  if (!Number.isInteger(minSamples) || minSamples < 1) throw new Error(`HDBSCAN: minimum samples must be a positive integer, got ${minSamples}`);
  if (n >= 2 && minSamples > n) {
    throw new Error(`HDBSCAN: minimum samples (${minSamples}) must be at most the number of points (${n})`);
  }
  return { minSamples };
}

/** Fewer than two points: nothing to cluster, everything is noise (scikit-learn refuses n = 1). */
function trivialResult(n: number): HdbscanResult {
  return { labels: new Int32Array(n).fill(-1), probabilities: new Float64Array(n) };
}
