// Re-expressing one crystal the ways a search finds it again: another cell choice (integer unimodular change
// of basis, operations conjugated), a supercell, another origin (operations' translations adjusted), another
// setting, expansion to P1, another atom order, and optimiser-like noise on atoms and cell.
// Convention: basis rows are the lattice vectors; a fractional row vector x gives Cartesian x^T A.
// A new basis A' = P A (P integer) gives x' = P^-T x and operations R' = Q R Q^-1, t' = Q t with Q = P^-T
// (International Tables for Crystallography Vol. A, chapter on transformations; common practice).
import type { Rng } from './prng.js';
import type { Op } from './space-groups.js';
import { basisFromCell, cellFromBasis, det, inverse, matMul, matVec, transpose, vecMat, type Mat3, type Vec3 } from './mat3.js';

export interface Expressed {
  basis: Mat3;
  /** Operations (identity included), or null when written in P1 with no operations. */
  ops: Op[] | null;
  /** Fractional coordinates, 3 per atom. */
  frac: Float64Array;
  elements: string[];
  /** Atoms per molecule, to keep molecules whole when wrapping. */
  atomsPerMolecule: number;
}

/** Integer unimodular change of basis A' = P A (det P must be +1). */
export function changeBasis(e: Expressed, p: Mat3): Expressed {
  if (Math.abs(det(p) - 1) > 1e-9) throw new Error('change of basis must have determinant +1');
  const q = transpose(inverse(p));
  const qInv = inverse(q);
  const frac = new Float64Array(e.frac.length);
  for (let i = 0; i < e.frac.length / 3; i++) {
    const v = matVec(q, [e.frac[3 * i], e.frac[3 * i + 1], e.frac[3 * i + 2]]);
    frac.set(v, 3 * i);
  }
  const ops = e.ops?.map((op) => ({ rot: matMul(matMul(q, op.rot), qInv).map(Math.round), trans: matVec(q, op.trans) })) ?? null;
  return { ...e, basis: matMul(p, e.basis), ops, frac };
}

/** Move the origin: x' = x + s, t' = t + s - R s. */
export function shiftOrigin(e: Expressed, s: Vec3): Expressed {
  const frac = new Float64Array(e.frac.length);
  for (let i = 0; i < e.frac.length; i++) frac[i] = e.frac[i] + s[i % 3];
  const ops =
    e.ops?.map((op) => {
      const rs = matVec(op.rot, s);
      return { rot: op.rot, trans: [op.trans[0] + s[0] - rs[0], op.trans[1] + s[1] - rs[1], op.trans[2] + s[2] - rs[2]] };
    }) ?? null;
  return { ...e, ops, frac };
}

/** Apply every operation to the listed atoms and write the result in P1 (molecules kept whole). */
export function expandToP1(e: Expressed): Expressed {
  if (!e.ops) return e;
  const n = e.frac.length / 3;
  const frac = new Float64Array(3 * n * e.ops.length);
  const elements: string[] = [];
  e.ops.forEach((op, g) => {
    for (let i = 0; i < n; i++) {
      const v = matVec(op.rot, [e.frac[3 * i], e.frac[3 * i + 1], e.frac[3 * i + 2]]);
      for (let r = 0; r < 3; r++) frac[3 * (g * n + i) + r] = v[r] + op.trans[r];
      elements.push(e.elements[i]);
    }
  });
  return { ...e, ops: null, frac, elements };
}

/** A supercell doubled along `axis` (P1 only): new basis row axis is twice the old one, atoms copied by the lost translation. */
export function doubleCell(e: Expressed, axis: number): Expressed {
  if (e.ops) throw new Error('doubleCell works on P1 descriptions');
  const n = e.frac.length / 3;
  const frac = new Float64Array(6 * n);
  for (let copy = 0; copy < 2; copy++)
    for (let i = 0; i < n; i++)
      for (let r = 0; r < 3; r++) {
        const v = e.frac[3 * i + r];
        frac[3 * (copy * n + i) + r] = r === axis ? (v + copy) / 2 : v;
      }
  const basis = e.basis.slice();
  for (let r = 0; r < 3; r++) basis[3 * axis + r] *= 2;
  return { ...e, basis, frac, elements: [...e.elements, ...e.elements] };
}

/** Cartesian Gaussian noise of `sigmaAngstrom` per coordinate on every listed atom (an optimiser's finite tolerance). */
export function jitterAtoms(e: Expressed, rng: Rng, sigmaAngstrom: number): Expressed {
  const inv = inverse(e.basis);
  const frac = new Float64Array(e.frac.length);
  for (let i = 0; i < e.frac.length / 3; i++) {
    const c = vecMat([e.frac[3 * i], e.frac[3 * i + 1], e.frac[3 * i + 2]], e.basis);
    const moved = vecMat([c[0] + rng.normal(sigmaAngstrom), c[1] + rng.normal(sigmaAngstrom), c[2] + rng.normal(sigmaAngstrom)], inv);
    frac.set(moved, 3 * i);
  }
  return { ...e, frac };
}

/** Write the molecules in a random order and the atoms of each molecule in a random (shared) order. */
export function shuffleAtoms(e: Expressed, rng: Rng): Expressed {
  const per = e.atomsPerMolecule;
  const nMol = e.frac.length / 3 / per;
  const molOrder = rng.shuffle(Array.from({ length: nMol }, (_, i) => i));
  const atomOrder = rng.shuffle(Array.from({ length: per }, (_, i) => i));
  const frac = new Float64Array(e.frac.length);
  const elements: string[] = [];
  let o = 0;
  for (const m of molOrder)
    for (const a of atomOrder) {
      const i = m * per + a;
      frac.set(e.frac.subarray(3 * i, 3 * i + 3), 3 * o);
      elements.push(e.elements[i]);
      o++;
    }
  return { ...e, frac, elements, atomsPerMolecule: per };
}

/** Move each whole molecule by a lattice vector so its centroid lies in [0, 1). */
export function wrapMolecules(e: Expressed): Expressed {
  const per = e.atomsPerMolecule;
  const frac = Float64Array.from(e.frac);
  for (let m = 0; m < frac.length / 3 / per; m++)
    for (let r = 0; r < 3; r++) {
      let c = 0;
      for (let a = 0; a < per; a++) c += frac[3 * (m * per + a) + r];
      const shift = Math.floor(c / per);
      for (let a = 0; a < per; a++) frac[3 * (m * per + a) + r] -= shift;
    }
  return { ...e, frac };
}

/**
 * A random integer matrix with determinant +1 made of a few unit shears, kept only if the new cell is not much
 * longer or flatter than the old one (angles 60–120 degrees, lengths at most 1.8 times the longest old one).
 */
export function randomUnimodular(rng: Rng, basis: Mat3): Mat3 {
  const [a0, b0, c0] = cellFromBasis(basis);
  const longest = Math.max(a0, b0, c0);
  for (let attempt = 0; attempt < 100; attempt++) {
    let p: Mat3 = [1, 0, 0, 0, 1, 0, 0, 0, 1];
    const shears = 1 + rng.int(3);
    for (let s = 0; s < shears; s++) {
      const i = rng.int(3);
      const j = (i + 1 + rng.int(2)) % 3;
      const e: Mat3 = [1, 0, 0, 0, 1, 0, 0, 0, 1];
      e[3 * i + j] = rng.next() < 0.5 ? 1 : -1;
      p = matMul(e, p);
    }
    // Sometimes also relabel the axes cyclically (determinant stays +1).
    if (rng.next() < 0.4) p = matMul([0, 1, 0, 0, 0, 1, 1, 0, 0], p);
    const [a, b, c, al, be, ga] = cellFromBasis(matMul(p, basis));
    if (Math.max(a, b, c) <= 1.8 * longest && [al, be, ga].every((x) => x >= 60 && x <= 120)) return p;
  }
  return [1, 0, 0, 0, 1, 0, 0, 0, 1];
}

/** The basis of a cell given as lengths and angles. */
export function basisOf(cell: readonly number[]): Mat3 {
  return basisFromCell(cell[0], cell[1], cell[2], cell[3], cell[4], cell[5]);
}
