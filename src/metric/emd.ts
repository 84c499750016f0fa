// Earth mover's distance between two PDDs (Rubner, Tomasi & Guibas, "The Earth Mover's Distance as a Metric
// for Image Retrieval", IJCV 2000): rows are weighted points, the ground distance between two rows is their
// L-infinity distance, and the distance is the cost of the cheapest transport of one weight distribution onto
// the other, solved exactly. Two solvers, one answer:
// - copies of one crystal (the same atoms' rows, up to noise, on both sides) are solved group by group
//   (emd-split.ts), a few small problems and a certificate of optimality;
// - every other pair by the network simplex on the whole problem (transport.ts), whose lazy ground distances start
//   from lower bounds given by the row groups of both PDDs (row-groups.ts): for rows i in group p and j in group q,
//   cost(i, j) >= |leader_p - leader_q|_inf - radius_p - radius_q.
// Every pair is solved in one fixed orientation and along one fixed path, so emd(a, b) === emd(b, a) bit for bit,
// identical PDDs give exactly 0, and the same pair gives the same number wherever it is asked (a search, a matrix,
// a standalone call).
//
// Also here: the AMD distance, the L-infinity distance between AMD vectors, which never exceeds the EMD
// ("Average minimum distances of periodic point sets", MATCH Commun. Math. Comput. Chem. 2022), and the
// row-minimum lower bound.
import type { Pdd } from '../types.js';
import { checkPdd } from './check.js';
import { packItems, type PackedSet } from './packed.js';
import { splitEmd } from './emd-split.js';
import { lastSolve, solveTransport, Workspace } from './transport.js';

export { checkPdd, NEGATIVE_WEIGHT_TOLERANCE } from './check.js';
export { lastSolve } from './transport.js';

/**
 * EMD in Å between two PDDs with the L-infinity ground distance between rows.
 * Weights are renormalised to add up to 1 on each side; zero-weight rows carry no mass.
 * Identical PDDs give exactly 0, and `emd(a, b) === emd(b, a)` bit for bit.
 */
export function emd(a: Pdd, b: Pdd): number {
  checkPdd(a, 'first');
  checkPdd(b, 'second');
  if (a.k !== b.k) throw new Error(`EMD needs PDDs of the same depth k, got k = ${a.k} and k = ${b.k}`);
  const set = packItems([{ pdd: a }, { pdd: b }], false);
  return emdItems(set, 0, set, 1, set.columns);
}

/**
 * The AMD distance: max_j |a_j - b_j| (Å), a lower bound of the EMD between the PDDs the AMDs come from.
 */
export function amdDistance(a: Float64Array, b: Float64Array): number {
  if (a.length !== b.length) throw new Error(`AMD distance needs vectors of the same length, got ${a.length} and ${b.length}`);
  let max = 0;
  for (let j = 0; j < a.length; j++) {
    const d = Math.abs(a[j] - b[j]);
    if (d > max || d !== d) max = d;
  }
  return max;
}


/** Cells from which on the ground distances start from the row groups' bounds (below it the groups do not pay). */
const FLOOR_CELLS = 256;
/** Columns read (in the set's order) of each pair of leaders for those bounds. */
const FLOOR_COLUMNS = 64;

/** Blocks of cells (group p x group q) whose merged reduced cost exceeds 2(radius_p + radius_q) + this (Å) start
 * outside the problem the simplex works on (they are priced at the end and join if they would improve it). */
const SLACK_ANGSTROM = 0.005;

const ws = new Workspace();
const mergedWs = new Workspace();
// What the floor callback needs about the pair being solved (set just before the solve).
let floorA: PackedSet;
let floorB: PackedSet;
let floorItemA = 0;
let floorItemB = 0;
let floorCols: Int32Array;
let groupBound = new Float64Array(0);

/**
 * EMD between item a of `sa` and item b of `sb` (packed sets of one depth k), reading columns in the order `cols`
 * (a permutation of 0..k-1; the result does not depend on it). The single path every caller takes.
 */
export function emdItems(sa: PackedSet, a: number, sb: PackedSet, b: number, cols: Int32Array): number {
  const k = sa.k;
  const aFirst = sa.rowStart[a];
  const aCount = sa.rowStart[a + 1] - aFirst;
  const bFirst = sb.rowStart[b];
  const bCount = sb.rowStart[b + 1] - bFirst;
  // Solve in a canonical order so that the result does not depend on the argument order.
  const c = comparePacked(sa.rows, sa.weights, aFirst, aCount, sb.rows, sb.weights, bFirst, bCount, k);
  if (c === 0) return 0;
  return c > 0 ? solveOriented(sb, b, sa, a, cols) : solveOriented(sa, a, sb, b, cols);
}

function solveOriented(sa: PackedSet, a: number, sb: PackedSet, b: number, cols: Int32Array): number {
  lastSolve.split = false;
  const split = splitEmd(sa, a, sb, b, cols);
  if (split === split) return split;
  lastSolve.split = false;
  const k = sa.k;
  const aFirst = sa.rowStart[a];
  const aCount = sa.rowStart[a + 1] - aFirst;
  const bFirst = sb.rowStart[b];
  const bCount = sb.rowStart[b + 1] - bFirst;
  ws.ensure(aCount, bCount);
  const { supply, demand, rowOf, colOf } = ws;
  // Keep the rows that carry mass; renormalise each side to total 1 (negative rounding residue counts as 0).
  let totalA = 0;
  for (let r = 0; r < aCount; r++) {
    const w = sa.weights[aFirst + r];
    if (w > 0) totalA += w;
  }
  let totalB = 0;
  for (let r = 0; r < bCount; r++) {
    const w = sb.weights[bFirst + r];
    if (w > 0) totalB += w;
  }
  let m = 0;
  for (let r = 0; r < aCount; r++) {
    const w = sa.weights[aFirst + r];
    if (w > 0) {
      supply[m] = w / totalA;
      rowOf[m++] = aFirst + r;
    }
  }
  let n = 0;
  for (let r = 0; r < bCount; r++) {
    const w = sb.weights[bFirst + r];
    if (w > 0) {
      demand[n] = w / totalB;
      colOf[n++] = bFirst + r;
    }
  }
  const na = sa.groupStart[a + 1] - sa.groupStart[a];
  const nb = sb.groupStart[b + 1] - sb.groupStart[b];
  const useFloor = m * n >= FLOOR_CELLS && 4 * na * nb <= m * n;
  if (useFloor) {
    floorA = sa;
    floorB = sb;
    floorItemA = a;
    floorItemB = b;
    floorCols = cols;
  }
  const restrict = useFloor && na > 1 && nb > 1 && markLikelyCells(sa, a, sb, b, cols, m, n);
  return solveTransport(ws, sa.rows, sb.rows, m, n, k, cols, useFloor ? groupFloor : null, restrict);
}

/**
 * Solve the merged problem (leader rows carrying their groups' weights) and mark in ws.active the cells of the
 * blocks (p, q) whose merged reduced cost is small enough for the block to hold optimal flow: rows of a group lie
 * within its radius of the leader, so a cell's cost and the final potentials differ from the merged ones by about
 * the two radii. Only a first guess: the transport solver prices the rest before it stops.
 */
function markLikelyCells(sa: PackedSet, a: number, sb: PackedSet, b: number, cols: Int32Array, m: number, n: number): boolean {
  const k = sa.k;
  const ga = sa.groupStart[a];
  const na = sa.groupStart[a + 1] - ga;
  const gb = sb.groupStart[b];
  const nb = sb.groupStart[b + 1] - gb;
  mergedWs.ensure(na, nb);
  for (let p = 0; p < na; p++) {
    mergedWs.supply[p] = sa.groupWeight[ga + p];
    mergedWs.rowOf[p] = sa.groupLeader[ga + p];
  }
  for (let q = 0; q < nb; q++) {
    mergedWs.demand[q] = sb.groupWeight[gb + q];
    mergedWs.colOf[q] = sb.groupLeader[gb + q];
  }
  solveTransport(mergedWs, sa.rows, sb.rows, na, nb, k, cols, null);
  const pot = mergedWs.potential;
  const lb = mergedWs.cost;
  const { active, rowOf, colOf } = ws;
  for (let i = 0; i < m; i++) {
    const p = sa.groupOf[rowOf[i]];
    const rp = sa.groupRadius[ga + p];
    const base = i * n;
    for (let j = 0; j < n; j++) {
      const q = sb.groupOf[colOf[j]];
      const rc = lb[p * nb + q] + pot[p] - pot[na + q];
      active[base + j] = rc <= 2 * (rp + sb.groupRadius[gb + q]) + SLACK_ANGSTROM ? 1 : 0;
    }
  }
  return true;
}

/** Raise each cell's lower bound to |leader_p - leader_q| (first FLOOR_COLUMNS columns) - radius_p - radius_q. */
function groupFloor(w: Workspace, m: number, n: number): void {
  const sa = floorA;
  const sb = floorB;
  const k = sa.k;
  const ga = sa.groupStart[floorItemA];
  const na = sa.groupStart[floorItemA + 1] - ga;
  const gb = sb.groupStart[floorItemB];
  const nb = sb.groupStart[floorItemB + 1] - gb;
  if (groupBound.length < na * nb) groupBound = new Float64Array(Math.max(na * nb, 2 * groupBound.length));
  const cols = floorCols;
  const reads = Math.min(k, FLOOR_COLUMNS);
  for (let p = 0; p < na; p++) {
    const ao = sa.groupLeader[ga + p] * k;
    for (let q = 0; q < nb; q++) {
      const bo = sb.groupLeader[gb + q] * k;
      let max = 0;
      for (let t = 0; t < reads; t++) {
        const col = cols[t];
        const d = Math.abs(sa.rows[ao + col] - sb.rows[bo + col]);
        if (d > max) max = d;
      }
      // Less a hair, so that rounding in this bound never lifts it above the cost it bounds.
      groupBound[p * nb + q] = max - sa.groupRadius[ga + p] - sb.groupRadius[gb + q] - 1e-12 * (1 + max);
    }
  }
  const { cost, rowOf, colOf } = w;
  for (let i = 0; i < m; i++) {
    const p = sa.groupOf[rowOf[i]];
    const base = i * n;
    for (let j = 0; j < n; j++) {
      const v = groupBound[p * nb + sb.groupOf[colOf[j]]];
      if (v > cost[base + j]) cost[base + j] = v;
    }
  }
}

/**
 * Order two packed PDDs by what they carry (rows without weight are skipped): by row count, then row values, then
 * weights. 0 means identical content. Used to solve every pair in one fixed orientation.
 */
function comparePacked(
  aRows: Float64Array,
  aWeights: Float64Array,
  aFirst: number,
  aCount: number,
  bRows: Float64Array,
  bWeights: Float64Array,
  bFirst: number,
  bCount: number,
  k: number,
): number {
  let na = 0;
  for (let r = aFirst; r < aFirst + aCount; r++) if (aWeights[r] > 0) na++;
  let nb = 0;
  for (let r = bFirst; r < bFirst + bCount; r++) if (bWeights[r] > 0) nb++;
  if (na !== nb) return na < nb ? -1 : 1;
  let ra = aFirst;
  let rb = bFirst;
  for (let r = 0; r < na; r++, ra++, rb++) {
    while (!(aWeights[ra] > 0)) ra++;
    while (!(bWeights[rb] > 0)) rb++;
    const ao = ra * k;
    const bo = rb * k;
    for (let t = 0; t < k; t++) {
      const x = aRows[ao + t];
      const y = bRows[bo + t];
      if (x !== y) return x < y ? -1 : 1;
    }
  }
  ra = aFirst;
  rb = bFirst;
  for (let r = 0; r < na; r++, ra++, rb++) {
    while (!(aWeights[ra] > 0)) ra++;
    while (!(bWeights[rb] > 0)) rb++;
    const x = aWeights[ra];
    const y = bWeights[rb];
    if (x !== y) return x < y ? -1 : 1;
  }
  return 0;
}

/**
 * A lower bound of the EMD that needs no transport solve: every unit of A's row i travels at least
 * min_j cost(i, j), so EMD >= sum_i w_i min_j cost(i, j) (the relaxation of the transportation problem that
 * drops the demand constraints; Rubner, Tomasi & Guibas, IJCV 2000, use the same idea for their bounds).
 * Each cost is abandoned as soon as it cannot lower the current row minimum, and the sum stops as soon as it
 * exceeds `limit` (the returned value is then only known to exceed `limit`). Same packed layout as `emdPacked`.
 */
export function rowMinBound(
  aRows: Float64Array,
  aWeights: Float64Array,
  aFirst: number,
  aCount: number,
  bRows: Float64Array,
  bFirst: number,
  bCount: number,
  k: number,
  limit: number,
): number {
  let totalA = 0;
  for (let r = 0; r < aCount; r++) {
    const w = aWeights[aFirst + r];
    if (w > 0) totalA += w;
  }
  let sum = 0;
  for (let i = 0; i < aCount; i++) {
    const w = aWeights[aFirst + i];
    if (!(w > 0)) continue;
    const ao = (aFirst + i) * k;
    // Start with the row at the same relative position: rows are sorted, so it is often the closest one.
    const j0 = Math.min(bCount - 1, Math.floor((i * bCount) / aCount));
    let best = Infinity;
    for (let s = 0; s < bCount; s++) {
      const j = s === 0 ? j0 : s <= j0 ? s - 1 : s;
      const bo = (bFirst + j) * k;
      let max = 0;
      let t = 0;
      for (; t < k; t++) {
        const d = aRows[ao + t] - bRows[bo + t];
        if (d > max) max = d;
        else if (-d > max) max = -d;
        else continue;
        if (max >= best) break;
      }
      if (t === k && max < best) best = max;
    }
    sum += (w / totalA) * best;
    if (sum > limit) return sum;
  }
  return sum;
}

