// The exact EMD of two copies of one crystal, solved piece by piece. Each PDD's near-equal rows are grouped
// (row-groups.ts); a group of A and a group of B are linked when their leaders lie within the two radii plus LINK
// (they hold the same atom's rows up to noise). When every connected set of linked groups carries the same weight on
// both sides, transport within each set is a small problem of its own: solved one by one, their plans together
// are a feasible plan for the whole problem, and their optimal potentials, shifted within each set, are a dual
// solution for it once every cell between different sets is shown to have a non-negative reduced cost. By linear
// programming duality (complementary slackness) the combined plan is then optimal, and its cost is the EMD
// (Rubner, Tomasi & Guibas, IJCV 2000; Ahuja, Magnanti & Orlin, "Network Flows", 1993, chapter 9).
// The check between sets needs no cell at all in the usual case: for rows i in group p and j in group q,
// cost(i, j) >= |leader_p - leader_q|_inf - radius_p - radius_q (triangle inequality of the L-infinity norm).
// Anything else (unbalanced sets, a reduced cost that cannot be shown non-negative) returns NaN, and the caller
// solves the whole problem instead; the answer never depends on which path was taken beyond rounding.
import type { PackedSet } from './packed.js';
import { lastSolve, solveTransport, Workspace } from './transport.js';

/** Leaders this much (Å) beyond the two groups' radii apart are not linked. */
const LINK_ANGSTROM = 0.02;
/** Weights of a set on both sides must agree to this (the positive weights of each side add up to 1). */
const BALANCE = 1e-12;
/** A reduced cost above -TOLERANCE (Å) counts as non-negative (rounding in potentials). */
const TOLERANCE = 1e-12;

const sub = new Workspace();
let cap = 0;
let dist = new Float64Array(0);
let read = new Int32Array(0);
let unionParent = new Int32Array(0);
let setWeight = new Float64Array(0);
let minU = new Float64Array(0);
let maxV = new Float64Array(0);
let rowCap = 0;
let uOf = new Float64Array(0);
let vOf = new Float64Array(0);

function ensure(na: number, nb: number, rows: number): void {
  if (na * nb > cap || na + nb > unionParent.length) {
    cap = Math.max(cap, na * nb);
    dist = new Float64Array(cap);
    read = new Int32Array(cap);
    const nodes = Math.max(unionParent.length, na + nb);
    unionParent = new Int32Array(nodes);
    setWeight = new Float64Array(nodes);
    minU = new Float64Array(nodes);
    maxV = new Float64Array(nodes);
  }
  if (rows > rowCap) {
    rowCap = rows;
    uOf = new Float64Array(rowCap);
    vOf = new Float64Array(rowCap);
  }
}

/**
 * EMD between item a of `sa` and item b of `sb` when both are copies of one crystal up to noise, else NaN.
 * Weights are normalised per side like the full solver does; columns are read in the order `cols`.
 */
export function splitEmd(sa: PackedSet, a: number, sb: PackedSet, b: number, cols: Int32Array): number {
  const k = sa.k;
  const ga = sa.groupStart[a];
  const na = sa.groupStart[a + 1] - ga;
  const gb = sb.groupStart[b];
  const nb = sb.groupStart[b + 1] - gb;
  if (na + nb < 3) return NaN;
  const aFirst = sa.rowStart[a];
  const aCount = sa.rowStart[a + 1] - aFirst;
  const bFirst = sb.rowStart[b];
  const bCount = sb.rowStart[b + 1] - bFirst;
  ensure(na, nb, Math.max(aCount, bCount));
  const aRows = sa.rows;
  const bRows = sb.rows;
  for (let v = 0; v < na + nb; v++) unionParent[v] = v;

  // Link groups whose leaders are close; a group of A with no partner at all ends it at once (distinct crystals).
  for (let p = 0; p < na; p++) {
    const ao = sa.groupLeader[ga + p] * k;
    const rp = sa.groupRadius[ga + p];
    let linked = false;
    for (let q = 0; q < nb; q++) {
      const bo = sb.groupLeader[gb + q] * k;
      const limit = rp + sb.groupRadius[gb + q] + LINK_ANGSTROM;
      let max = 0;
      let t = 0;
      while (t < k) {
        const col = cols[t++];
        const d = Math.abs(aRows[ao + col] - bRows[bo + col]);
        if (d > max) {
          max = d;
          if (max > limit) break;
        }
      }
      dist[p * nb + q] = max;
      read[p * nb + q] = t;
      if (max <= limit) {
        linked = true;
        unite(p, na + q);
      }
    }
    if (!linked) return NaN;
  }
  // Every set must carry the same weight on both sides.
  setWeight.fill(0, 0, na + nb);
  for (let p = 0; p < na; p++) setWeight[find(p)] += sa.groupWeight[ga + p];
  for (let q = 0; q < nb; q++) setWeight[find(na + q)] -= sb.groupWeight[gb + q];
  for (let v = 0; v < na + nb; v++) if (find(v) === v && Math.abs(setWeight[v]) > BALANCE) return NaN;

  // Each set on its own: its rows, weights renormalised within the set; potentials shifted so the smallest
  // supply-side potential of the set is 0.
  let totalA = 0;
  for (let r = aFirst; r < aFirst + aCount; r++) if (sa.weights[r] > 0) totalA += sa.weights[r];
  let totalB = 0;
  for (let r = bFirst; r < bFirst + bCount; r++) if (sb.weights[r] > 0) totalB += sb.weights[r];
  sub.ensure(aCount, bCount);
  let total = 0;
  let pivots = 0;
  for (let root = 0; root < na + nb; root++) {
    if (find(root) !== root) continue;
    let m = 0;
    let wa = 0;
    for (let r = 0; r < aCount; r++) {
      const p = sa.groupOf[aFirst + r];
      if (p < 0 || find(p) !== root) continue;
      sub.rowOf[m] = aFirst + r;
      sub.supply[m] = sa.weights[aFirst + r] / totalA;
      wa += sub.supply[m++];
    }
    let n = 0;
    let wb = 0;
    for (let r = 0; r < bCount; r++) {
      const q = sb.groupOf[bFirst + r];
      if (q < 0 || find(na + q) !== root) continue;
      sub.colOf[n] = bFirst + r;
      sub.demand[n] = sb.weights[bFirst + r] / totalB;
      wb += sub.demand[n++];
    }
    for (let i = 0; i < m; i++) sub.supply[i] /= wa;
    for (let j = 0; j < n; j++) sub.demand[j] /= wb;
    total += wa * solveTransport(sub, aRows, bRows, m, n, k, cols, null);
    pivots += lastSolve.pivots;
    const pot = sub.potential;
    let lo = Infinity;
    for (let i = 0; i < m; i++) if (pot[i] < lo) lo = pot[i];
    for (let i = 0; i < m; i++) uOf[sub.rowOf[i] - aFirst] = pot[i] - lo;
    for (let j = 0; j < n; j++) vOf[sub.colOf[j] - bFirst] = pot[m + j] - lo;
  }
  for (let p = 0; p < na; p++) minU[p] = Infinity;
  for (let q = 0; q < nb; q++) maxV[q] = -Infinity;
  for (let r = 0; r < aCount; r++) {
    const p = sa.groupOf[aFirst + r];
    if (p >= 0 && uOf[r] < minU[p]) minU[p] = uOf[r];
  }
  for (let r = 0; r < bCount; r++) {
    const q = sb.groupOf[bFirst + r];
    if (q >= 0 && vOf[r] > maxV[q]) maxV[q] = vOf[r];
  }

  // Every cell between different sets must price non-negatively: cost(i, j) + u_i - v_j >= 0.
  for (let p = 0; p < na; p++) {
    const ao = sa.groupLeader[ga + p] * k;
    const rp = sa.groupRadius[ga + p];
    for (let q = 0; q < nb; q++) {
      if (find(p) === find(na + q)) continue;
      // Needed: |leader_p - leader_q| >= radius_p + radius_q + maxV_q - minU_p.
      const need = rp + sb.groupRadius[gb + q] + maxV[q] - minU[p] - TOLERANCE;
      let max = dist[p * nb + q];
      if (max < need) {
        const bo = sb.groupLeader[gb + q] * k;
        for (let t = read[p * nb + q]; t < k && max < need; t++) {
          const col = cols[t];
          const d = Math.abs(aRows[ao + col] - bRows[bo + col]);
          if (d > max) max = d;
        }
      }
      if (max >= need) continue;
      if (!cellsPrice(sa, a, p, sb, b, q, cols)) return NaN;
    }
  }
  lastSolve.pivots = pivots;
  lastSolve.rows = aCount;
  lastSolve.cols = bCount;
  lastSolve.split = true;
  return total;
}

/** Cell by cell: every row i of group p and j of group q has cost(i, j) + u_i - v_j >= -TOLERANCE. */
function cellsPrice(sa: PackedSet, a: number, p: number, sb: PackedSet, b: number, q: number, cols: Int32Array): boolean {
  const k = sa.k;
  const aFirst = sa.rowStart[a];
  const bFirst = sb.rowStart[b];
  for (let i = aFirst; i < sa.rowStart[a + 1]; i++) {
    if (sa.groupOf[i] !== p) continue;
    for (let j = bFirst; j < sb.rowStart[b + 1]; j++) {
      if (sb.groupOf[j] !== q) continue;
      const need = vOf[j - bFirst] - uOf[i - aFirst] - TOLERANCE;
      let max = 0;
      for (let t = 0; t < k && max < need; t++) {
        const col = cols[t];
        const d = Math.abs(sa.rows[i * k + col] - sb.rows[j * k + col]);
        if (d > max) max = d;
      }
      if (max < need) return false;
    }
  }
  return true;
}

function find(v: number): number {
  while (unionParent[v] !== v) {
    unionParent[v] = unionParent[unionParent[v]];
    v = unionParent[v];
  }
  return v;
}

function unite(x: number, y: number): void {
  const rx = find(x);
  const ry = find(y);
  if (rx !== ry) unionParent[rx] = ry;
}
