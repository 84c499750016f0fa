// Lattice energy per molecule of a crystal of one rigid molecule on a general position (Z' = 1) and its gradient,
// for the demo search. Every molecule of the crystal is a symmetry copy of molecule 0, so the energy per molecule is
//   E = 1/2 sum_{i in molecule 0} sum_{j in every other molecule image} V(|x_j - x_i|)
// over all symmetry copies and lattice translations, with the pair potential of ./potential.ts (atom-atom cutoff).
// Intramolecular terms are left out: the molecule is rigid, so they are a constant (common practice).
//
// Conventions (as in src/demo/mat3.ts): basis rows are lattice vectors, a fractional row u gives Cartesian u L.
// An operation x' = W x + t on fractional columns acts on rows as u' = u W^T + t, i.e. on Cartesian rows as
// x' = x M + t L with M = L^-1 W^T L. Molecule 0 is its centroid (fractional f) plus Cartesian offsets p_i.
//
// The gradient is returned with respect to the basis L (holding f and the offsets fixed), the fractional centre f,
// and a small rotation of the offsets about the centroid (the torque). The basis gradient treats each copy's
// Cartesian operation M as fixed, which holds for any change of the cell that keeps the operations
// (a, b, c and the angles the crystal system leaves free, with cells built as in basisFromCell).
import type { Op } from '../space-groups.js';
import type { PairTable } from './potential.js';
import { COLLAPSE_ANGSTROM } from './potential.js';

export interface EnergyGradient {
  /** dE/dL, 9 entries, row-major like the basis. */
  dBasis: Float64Array;
  /** dE/df for the fractional centre. */
  dCentreFrac: Float64Array;
  /** dE/d(delta) for a rotation exp([delta]x) applied to the offsets (Cartesian rotation vector, radians). */
  torque: Float64Array;
}

/** Scratch space for one molecule size and one group, allocated once and reused by every evaluation. */
export interface EnergyWorkspace {
  nAtoms: number;
  nOps: number;
  basis: Float64Array;
  inv: Float64Array;
  /** Per operation: M (9), Q = (W^T - I) L (9), copy centre minus f (3). */
  m: Float64Array;
  q: Float64Array;
  dF: Float64Array;
  /** Offsets of every copy's atoms, nOps x nAtoms x 3. */
  o: Float64Array;
  /** Per operation and atom j: sum of pair gradients on j (for the torque). */
  aSum: Float64Array;
  /** Per atom i of molecule 0: sum of pair gradients. */
  bSum: Float64Array;
  /** Per operation: sum of pair gradients (for dE/df). */
  hSum: Float64Array;
}

export function makeWorkspace(nAtoms: number, nOps: number): EnergyWorkspace {
  return {
    nAtoms,
    nOps,
    basis: new Float64Array(9),
    inv: new Float64Array(9),
    m: new Float64Array(9 * nOps),
    q: new Float64Array(9 * nOps),
    dF: new Float64Array(3 * nOps),
    o: new Float64Array(3 * nAtoms * nOps),
    aSum: new Float64Array(3 * nAtoms * nOps),
    bSum: new Float64Array(3 * nAtoms),
    hSum: new Float64Array(3 * nOps),
  };
}

/**
 * Energy per molecule in kJ/mol; fills `grad` when given. Returns +Infinity when two atoms of different molecules
 * come closer than COLLAPSE_ANGSTROM (the exp-6 form is unphysical there) or the basis is singular.
 */
export function latticeEnergy(
  table: PairTable,
  ops: readonly Op[],
  basis: ArrayLike<number>,
  centreFrac: ArrayLike<number>,
  offsets: Float64Array,
  ws: EnergyWorkspace,
  grad?: EnergyGradient,
): number {
  const n = ws.nAtoms;
  const nOps = ops.length;
  if (offsets.length !== 3 * n || nOps !== ws.nOps) throw new Error('latticeEnergy: workspace does not match the molecule or group');
  // A typed copy of the basis keeps the hot loops monomorphic whatever array type the caller passed.
  const L = ws.basis;
  for (let k = 0; k < 9; k++) L[k] = basis[k];
  const inv = ws.inv;
  if (!invert3(L, inv)) return Infinity;

  // Each copy's Cartesian operation M, its centre relative to molecule 0, its atom offsets and Q for dE/df.
  let radius = 0;
  for (let i = 0; i < n; i++) radius = Math.max(radius, Math.hypot(offsets[3 * i], offsets[3 * i + 1], offsets[3 * i + 2]));
  for (let g = 0; g < nOps; g++) {
    const w = ops[g].rot;
    const t = ops[g].trans;
    // W^T L, then M = L^-1 (W^T L) and Q = W^T L - L.
    const wtl = tmp9;
    for (let r = 0; r < 3; r++)
      for (let c = 0; c < 3; c++) wtl[3 * r + c] = w[r] * L[c] + w[3 + r] * L[3 + c] + w[6 + r] * L[6 + c];
    for (let r = 0; r < 3; r++)
      for (let c = 0; c < 3; c++) {
        ws.m[9 * g + 3 * r + c] = inv[3 * r] * wtl[c] + inv[3 * r + 1] * wtl[3 + c] + inv[3 * r + 2] * wtl[6 + c];
        ws.q[9 * g + 3 * r + c] = wtl[3 * r + c] - L[3 * r + c];
      }
    for (let r = 0; r < 3; r++) {
      const fr = w[3 * r] * centreFrac[0] + w[3 * r + 1] * centreFrac[1] + w[3 * r + 2] * centreFrac[2] + t[r] - centreFrac[r];
      ws.dF[3 * g + r] = fr - Math.round(fr);
    }
    const mg = 9 * g;
    for (let j = 0; j < n; j++) {
      const px = offsets[3 * j];
      const py = offsets[3 * j + 1];
      const pz = offsets[3 * j + 2];
      for (let c = 0; c < 3; c++) ws.o[3 * (g * n + j) + c] = px * ws.m[mg + c] + py * ws.m[mg + 3 + c] + pz * ws.m[mg + 6 + c];
    }
  }
  if (grad) {
    grad.dBasis.fill(0);
    grad.dCentreFrac.fill(0);
    grad.torque.fill(0);
    ws.aSum.fill(0);
    ws.bSum.fill(0);
    ws.hSum.fill(0);
  }

  const rc = table.cutoffAngstrom;
  const rc2 = rc * rc;
  const collapse2 = COLLAPSE_ANGSTROM * COLLAPSE_ANGSTROM;
  // Molecule images whose centroids are further apart than this have no atom pair inside the cutoff.
  const reach = rc + 2 * radius;
  const reach2 = reach * reach;
  // An atom of molecule 0 further than this from an image's centroid has no partner in that image within the cutoff.
  const atomReach2 = (rc + radius) * (rc + radius);
  const nt = table.nTypes;
  const typeOf = table.typeOf;
  const A = table.a;
  const B = table.b;
  const C = table.c;
  const vCut = table.vCut;
  const dvCut = table.dvCut;
  const qq = table.qq;
  const irc = 1 / rc;
  const irc2 = irc * irc;
  const o = ws.o;
  const aSum = ws.aSum;
  const bSum = ws.bSum;
  const withGrad = grad !== undefined;
  let energy = 0;

  for (let g = 0; g < nOps; g++) {
    const f0 = ws.dF[3 * g];
    const f1 = ws.dF[3 * g + 1];
    const f2 = ws.dF[3 * g + 2];
    // Lattice translations that can bring copy g within reach: |dF_k| <= reach * |column k of L^-1|.
    const s0 = reach * Math.hypot(inv[0], inv[3], inv[6]);
    const s1 = reach * Math.hypot(inv[1], inv[4], inv[7]);
    const s2 = reach * Math.hypot(inv[2], inv[5], inv[8]);
    const og = 3 * g * n;
    for (let u = Math.ceil(-s0 - f0); u <= Math.floor(s0 - f0); u++)
      for (let v = Math.ceil(-s1 - f1); v <= Math.floor(s1 - f1); v++)
        for (let w = Math.ceil(-s2 - f2); w <= Math.floor(s2 - f2); w++) {
          if (g === 0 && u === 0 && v === 0 && w === 0) continue;
          const e0 = f0 + u;
          const e1 = f1 + v;
          const e2 = f2 + w;
          const dx = e0 * L[0] + e1 * L[3] + e2 * L[6];
          const dy = e0 * L[1] + e1 * L[4] + e2 * L[7];
          const dz = e0 * L[2] + e1 * L[5] + e2 * L[8];
          if (dx * dx + dy * dy + dz * dz > reach2) continue;
          let hx = 0;
          let hy = 0;
          let hz = 0;
          for (let i = 0; i < n; i++) {
            const bx = dx - offsets[3 * i];
            const by = dy - offsets[3 * i + 1];
            const bz = dz - offsets[3 * i + 2];
            if (bx * bx + by * by + bz * bz > atomReach2) continue;
            const ti = typeOf[i] * nt;
            const qi = i * n;
            for (let j = 0; j < n; j++) {
              const jx = bx + o[og + 3 * j];
              const jy = by + o[og + 3 * j + 1];
              const jz = bz + o[og + 3 * j + 2];
              const r2 = jx * jx + jy * jy + jz * jz;
              if (r2 >= rc2) continue;
              if (r2 < collapse2) return Infinity;
              const k = ti + typeOf[j];
              const r = Math.sqrt(r2);
              const rep = A[k] * Math.exp(-B[k] * r);
              const inv6 = 1 / (r2 * r2 * r2);
              const q2 = qq[qi + j];
              const ir = 1 / r;
              energy += 0.5 * (rep - C[k] * inv6 - vCut[k] - (r - rc) * dvCut[k] + q2 * (ir - irc + (r - rc) * irc2));
              if (!withGrad) continue;
              // h = dE/d(x_j - x_i) for this pair.
              const dv = -B[k] * rep + 6 * C[k] * inv6 * ir - dvCut[k] + q2 * (irc2 - ir * ir);
              const s = (0.5 * dv) / r;
              const px = s * jx;
              const py = s * jy;
              const pz = s * jz;
              hx += px;
              hy += py;
              hz += pz;
              aSum[og + 3 * j] += px;
              aSum[og + 3 * j + 1] += py;
              aSum[og + 3 * j + 2] += pz;
              bSum[3 * i] += px;
              bSum[3 * i + 1] += py;
              bSum[3 * i + 2] += pz;
            }
          }
          if (!withGrad || !grad) continue;
          // The image's centroid difference is (dF + n) L, so dE/dL_kl gets (dF + n)_k h_l.
          const gb = grad.dBasis;
          gb[0] += e0 * hx; gb[1] += e0 * hy; gb[2] += e0 * hz;
          gb[3] += e1 * hx; gb[4] += e1 * hy; gb[5] += e1 * hz;
          gb[6] += e2 * hx; gb[7] += e2 * hy; gb[8] += e2 * hz;
          ws.hSum[3 * g] += hx;
          ws.hSum[3 * g + 1] += hy;
          ws.hSum[3 * g + 2] += hz;
        }
  }
  if (!grad) return energy;

  for (let g = 0; g < nOps; g++) {
    const q = 9 * g;
    const hx = ws.hSum[3 * g];
    const hy = ws.hSum[3 * g + 1];
    const hz = ws.hSum[3 * g + 2];
    // dE/df = Q h (the copy's centre moves by f Q when f moves).
    for (let k = 0; k < 3; k++) grad.dCentreFrac[k] += ws.q[q + 3 * k] * hx + ws.q[q + 3 * k + 1] * hy + ws.q[q + 3 * k + 2] * hz;
    // Torque from the copy's atoms: p_j x (a_j M^T).
    for (let j = 0; j < n; j++) {
      const ax = ws.aSum[3 * (g * n + j)];
      const ay = ws.aSum[3 * (g * n + j) + 1];
      const az = ws.aSum[3 * (g * n + j) + 2];
      const mx = ws.m[q] * ax + ws.m[q + 1] * ay + ws.m[q + 2] * az;
      const my = ws.m[q + 3] * ax + ws.m[q + 4] * ay + ws.m[q + 5] * az;
      const mz = ws.m[q + 6] * ax + ws.m[q + 7] * ay + ws.m[q + 8] * az;
      addCross(grad.torque, offsets, j, mx, my, mz, 1);
    }
  }
  // Torque from molecule 0's own atoms: - p_i x b_i.
  for (let i = 0; i < n; i++) addCross(grad.torque, offsets, i, ws.bSum[3 * i], ws.bSum[3 * i + 1], ws.bSum[3 * i + 2], -1);
  return energy;
}

const tmp9 = new Float64Array(9);

function addCross(out: Float64Array, p: Float64Array, i: number, x: number, y: number, z: number, sign: number): void {
  const px = p[3 * i];
  const py = p[3 * i + 1];
  const pz = p[3 * i + 2];
  out[0] += sign * (py * z - pz * y);
  out[1] += sign * (pz * x - px * z);
  out[2] += sign * (px * y - py * x);
}

/** Inverse of a 3x3 row-major matrix into `out`; false when singular. */
export function invert3(a: ArrayLike<number>, out: Float64Array): boolean {
  const c0 = a[4] * a[8] - a[5] * a[7];
  const c1 = a[5] * a[6] - a[3] * a[8];
  const c2 = a[3] * a[7] - a[4] * a[6];
  const d = a[0] * c0 + a[1] * c1 + a[2] * c2;
  if (!(Math.abs(d) > 1e-12)) return false;
  out[0] = c0 / d;
  out[1] = (a[2] * a[7] - a[1] * a[8]) / d;
  out[2] = (a[1] * a[5] - a[2] * a[4]) / d;
  out[3] = c1 / d;
  out[4] = (a[0] * a[8] - a[2] * a[6]) / d;
  out[5] = (a[2] * a[3] - a[0] * a[5]) / d;
  out[6] = c2 / d;
  out[7] = (a[1] * a[6] - a[0] * a[7]) / d;
  out[8] = (a[0] * a[4] - a[1] * a[3]) / d;
  return true;
}

/**
 * Energy per molecule (kJ/mol) of a crystal given as a CIF would give it: basis rows, operations and the
 * fractional coordinates of one whole molecule (the asymmetric unit, Z' = 1). The molecule's centroid and offsets
 * are taken from those coordinates, so any cell, setting or origin of the same crystal gives the same energy.
 */
export function energyOfAtoms(table: PairTable, ops: readonly Op[], basis: ArrayLike<number>, frac: ArrayLike<number>): number {
  const n = frac.length / 3;
  if (table.typeOf.length !== n) throw new Error(`energyOfAtoms: ${n} atoms given for a ${table.typeOf.length}-atom molecule`);
  const cart = new Float64Array(3 * n);
  const centre = [0, 0, 0];
  for (let i = 0; i < n; i++)
    for (let c = 0; c < 3; c++) {
      cart[3 * i + c] = frac[3 * i] * basis[c] + frac[3 * i + 1] * basis[3 + c] + frac[3 * i + 2] * basis[6 + c];
      centre[c] += cart[3 * i + c] / n;
    }
  for (let i = 0; i < n; i++) for (let c = 0; c < 3; c++) cart[3 * i + c] -= centre[c];
  const inv = new Float64Array(9);
  if (!invert3(basis, inv)) throw new Error('energyOfAtoms: singular basis');
  const f = [0, 1, 2].map((c) => centre[0] * inv[c] + centre[1] * inv[3 + c] + centre[2] * inv[6 + c]);
  return latticeEnergy(table, ops, basis, f, cart, makeWorkspace(n, ops.length));
}
