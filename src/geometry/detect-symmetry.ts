// Symmetry of a crystal as it is, whatever cell and space group its file was written in: the space group
// (number, Hermann–Mauguin and Hall symbols), its operations in the given cell, the primitive and
// conventional cells and the change of basis to the standard setting, all within a distance tolerance.
//
// Steps (the published approach of symmetry finders: R. W. Grosse-Kunstleve, "Algorithms for deriving
// crystallographic space-group information", Acta Cryst. A 55, 1999; A. Togo & I. Tanaka, "Spglib: a
// software library for crystal symmetry search", arXiv:1808.01590, 2018):
//   1. reduce the cell (LLL, ./reduce.ts) and find the pure translations that map the motif onto itself:
//      a supercell has more than the lattice's; they give the primitive lattice (./integer-lattice.ts);
//   2. the rotations of the reduced primitive lattice (./lattice-symmetry.ts) are the only candidates;
//   3. for each, the translations that map every atom onto an atom of its element (./motif-operations.ts);
//   4. the operations must form a group; then the group is named (./space-group-match.ts).
// When a step fails (operations that do not close into a group, no group that fits), the tolerance is
// lowered by a tenth and the search repeated, a few times; then detection reports failure with the reason.
//
// Tolerance: the largest distance (Å) between an atom's image under an operation and the atom of the same
// element it lands on (nearest lattice translate); lattice vectors may likewise move by up to the tolerance.
// This is the meaning of spglib's `symprec` (a Cartesian distance in Å), so the two compare one to one.
import type { CellParams, SymOp } from '../types.js';
import { determinant, inverse, reduceBasis } from './reduce.js';
import { basisVolume } from './cell.js';
import { buildMotifIndex, wrapUnit } from './motif-index.js';
import { motifOperations } from './motif-operations.js';
import { latticeRotations } from './lattice-symmetry.js';
import { latticeBasis } from './integer-lattice.js';
import { matchSpaceGroup } from './space-group-match.js';
import { pointGroupSymbol, type CrystalSystem } from './point-group.js';
import { mul3, mulVec3, roundedInteger3, transpose3, wrappedLength2 } from './matrix3.js';

/**
 * Default tolerance (Å) of symmetry detection, chosen from measurements on the generator's landscapes
 * (`npm run bench symmetry-tolerance`): copies written in P1 and in P1 supercells with optimiser-like noise of
 * 0.001 / 0.002 / 0.003 / 0.005 Å per coordinate need at most 0.009 / 0.018 / 0.027 / 0.045 Å to be found in
 * their group; crystals of lower symmetry made by turning the molecules outside an index-2 subgroup by 2° (EMD
 * 0.07-0.08 Å from the untouched packing, distinct for the duplicate tolerance) need at least 0.086 Å to be
 * reported in the higher group. 0.06 Å lies between (about their geometric middle). A 1° turn (EMD about 0.04 Å,
 * at the duplicate tolerance) needs 0.037-0.06 Å, inside the noise of a loose optimiser: no tolerance tells those apart.
 */
export const DEFAULT_SYMMETRY_TOLERANCE_ANGSTROM = 0.06;

/** Times the tolerance is lowered (each time by a tenth) when the operations found do not make a space group. */
const RETRIES = 5;

export interface SymmetryCell {
  /** Basis rows a, b, c in Cartesian Å (row-major 3x3). */
  basis: ArrayLike<number>;
  /** 3*m fractional coordinates. */
  frac: ArrayLike<number>;
  /** Element (atomic number) of each atom: atoms map only onto atoms of their element. */
  types: ArrayLike<number>;
}

export interface DetectedSymmetry {
  /** International Tables number, 1..230. */
  number: number;
  /** Short Hermann–Mauguin symbol without spaces, one spelling per group ('P21/c', 'P-1', 'Pna21'). */
  symbol: string;
  /** Hermann–Mauguin symbol of the default setting as International Tables write it ('P 1 21/c 1'). */
  hm: string;
  /** Full Hermann–Mauguin symbol ('P 1 21/c 1', 'P 21/b 21/c 21/a'). */
  full: string;
  /** Hall symbol of the default setting ('-P 2ybc'). */
  hall: string;
  pointGroup: string;
  crystalSystem: CrystalSystem;
  /** The tolerance that gave this answer (the one asked for, or lower after retries). */
  toleranceAngstrom: number;
  /** Largest distance (Å) between an atom's image and its partner over all operations, after refinement. */
  deviationAngstrom: number;
  /** The group's operations in the given cell (pure translations of a supercell included), identity first. */
  operations: SymOp[];
  /** Lattice points per given cell (1 unless the cell is a supercell of the primitive lattice). */
  latticePointsPerCell: number;
  /** Reduced primitive cell: basis rows (Å) and atom count. */
  primitiveBasis: number[];
  primitiveAtoms: number;
  /** Conventional cell of the default setting: basis rows (Å) and parameters. */
  conventionalBasis: number[];
  conventionalCell: CellParams;
  /** Change to the default setting: x_standard = transformation * x_given + originShift (fractional columns). */
  transformation: number[];
  originShift: [number, number, number];
  /** Per atom of the given cell, the first atom of its symmetry orbit. */
  equivalentAtoms: Int32Array;
}

export type SymmetryDetection = { ok: true; symmetry: DetectedSymmetry } | { ok: false; reason: string };

/** Detect the space group of the atoms in `cell` within `toleranceAngstrom` (see the top of this file). */
export function detectSymmetry(cell: SymmetryCell, toleranceAngstrom = DEFAULT_SYMMETRY_TOLERANCE_ANGSTROM): SymmetryDetection {
  const m = cell.types.length;
  if (m === 0) return { ok: false, reason: 'no atoms' };
  if (!(toleranceAngstrom > 0)) throw new Error(`the symmetry tolerance must be a positive distance in Å, not ${toleranceAngstrom}`);
  for (let i = 0; i < 3 * m; i++) if (!Number.isFinite(cell.frac[i])) return { ok: false, reason: 'an atom has coordinates that are not numbers' };
  let tol = toleranceAngstrom;
  let reason = '';
  for (let attempt = 0; attempt <= RETRIES; attempt++) {
    const r = detectOnce(cell, tol);
    if (r.ok) return r;
    reason = r.reason;
    tol *= 0.9;
  }
  return { ok: false, reason: `${reason} (also at tolerances down to ${fmt(tol / 0.9)} Å)` };
}

function detectOnce(cell: SymmetryCell, tol: number): SymmetryDetection {
  const m = cell.types.length;
  const basisIn = Array.from({ length: 9 }, (_, i) => cell.basis[i]);
  // 1. Reduced cell and its pure translations.
  const red = reduceBasis(basisIn, 3);
  const fracR = transformCoordinates(transpose3(inverse(red.transform, 3)), cell.frac, m, true);
  const types = Int32Array.from(cell.types);
  const ixIn = buildMotifIndex(red.basis, fracR, types, tol);
  // The zero translation first, so that the identity leads the operations in the given cell.
  const pure = motifOperations(ixIn, [[1, 0, 0, 0, 1, 0, 0, 0, 1]], true).sort(
    (a, b) => (isZero(a.trans) ? 0 : 1) - (isZero(b.trans) ? 0 : 1),
  );
  const n = pure.length;
  if (n === 0 || m % n !== 0) return { ok: false, reason: `the pure translations found within ${fmt(tol)} Å do not divide the cell evenly` };

  // Primitive lattice: generated by the cell's lattice and the pure translations (all multiples of 1/n).
  let primitiveR = red.basis;
  if (n > 1) {
    const gens: number[][] = [[n, 0, 0], [0, n, 0], [0, 0, n]];
    for (const op of pure) {
      const v = op.trans.map((t) => Math.round(t * n));
      if (op.trans.some((t, i) => Math.abs(t * n - v[i]) > 0.25)) {
        return { ok: false, reason: `the pure translations found within ${fmt(tol)} Å are not fractions 1/${n} of the cell` };
      }
      gens.push(v);
    }
    const h = latticeBasis(gens);
    if (Math.abs(determinant(h.flat(), 3)) !== n * n) {
      return { ok: false, reason: `the pure translations found within ${fmt(tol)} Å do not form a lattice` };
    }
    primitiveR = Float64Array.from(mul3(h.flat().map((x) => x / n), red.basis));
  }
  const prim = reduceBasis(primitiveR, 3);
  const bp = Array.from(prim.basis);
  // The given cell is an integer multiple of the primitive one: basis_in = K basis_p, x_p = K^T x_in.
  const k = roundedInteger3(mul3(basisIn, inverse(bp, 3)), 1e-4);
  if (k === null) return { ok: false, reason: `the primitive cell found within ${fmt(tol)} Å does not fit the given cell` };
  const kT = transpose3(k);

  // Primitive motif: one atom per orbit of the pure translations, at the mean position of the orbit.
  const atomOf = new Int32Array(m).fill(-1);
  const pm = m / n;
  const fracP = new Float64Array(3 * pm);
  const typesP = new Int32Array(pm);
  const inP = transformCoordinates(kT, cell.frac, m, false);
  let p = 0;
  for (let i = 0; i < m; i++) {
    if (atomOf[i] >= 0) continue;
    let s0 = 0, s1 = 0, s2 = 0;
    for (const op of pure) {
      const j = op.perm[i];
      if (atomOf[j] >= 0) return { ok: false, reason: `the pure translations found within ${fmt(tol)} Å do not map atoms one to one` };
      atomOf[j] = p;
      // Members of an orbit differ by primitive lattice vectors: whole numbers in primitive coordinates.
      const d0 = inP[3 * j] - inP[3 * i], d1 = inP[3 * j + 1] - inP[3 * i + 1], d2 = inP[3 * j + 2] - inP[3 * i + 2];
      s0 += d0 - Math.round(d0);
      s1 += d1 - Math.round(d1);
      s2 += d2 - Math.round(d2);
    }
    fracP[3 * p] = wrapUnit(inP[3 * i] + s0 / n);
    fracP[3 * p + 1] = wrapUnit(inP[3 * i + 1] + s1 / n);
    fracP[3 * p + 2] = wrapUnit(inP[3 * i + 2] + s2 / n);
    typesP[p] = types[i];
    p++;
  }
  if (p !== pm) return { ok: false, reason: `the pure translations found within ${fmt(tol)} Å do not map atoms one to one` };

  // 2-3. Lattice rotations, then the operations that map the primitive motif onto itself.
  const ixP = buildMotifIndex(prim.basis, fracP, typesP, tol);
  const found = motifOperations(ixP, latticeRotations(bp, tol), false);
  const closure = closureProblem(found, bp, tol);
  if (closure !== null) return { ok: false, reason: closure };

  // 4. Name the group.
  const ops: SymOp[] = found.map((o) => ({ rot: o.rot, trans: o.trans.slice() }));
  const match = matchSpaceGroup(ops, bp, tol);
  if (match === null) return { ok: false, reason: `no space group fits the ${ops.length} operations found within ${fmt(tol)} Å` };

  // Operations in the given cell: W_in = K^-T W K^T, t_in = K^-T t, times every pure translation.
  const kInvT = transpose3(inverse(k, 3));
  // (Float64Arrays: a zero translation and a fractional one must look alike to the compiler.)
  const pureIn = pure.map((op) => {
    const x = mulVec3(transpose3(red.transform), op.trans);
    return Float64Array.of(wrapUnit(Math.round(x[0] * n) / n), wrapUnit(Math.round(x[1] * n) / n), wrapUnit(Math.round(x[2] * n) / n));
  });
  const operations: SymOp[] = [];
  for (const pureT of pureIn) {
    for (const o of found) {
      const rot = roundedInteger3(mul3(mul3(kInvT, o.rot), kT), 1e-6);
      if (rot === null) return { ok: false, reason: 'an operation has no integer form in the given cell' };
      const t = Float64Array.from(mulVec3(kInvT, o.trans));
      operations.push({ rot, trans: [clean(wrapUnit(t[0] + pureT[0])), clean(wrapUnit(t[1] + pureT[1])), clean(wrapUnit(t[2] + pureT[2]))] });
    }
  }

  // Orbits: primitive atoms joined by the operations, then spread to the given cell's atoms.
  const root = Int32Array.from({ length: pm }, (_, i) => i);
  const find = (a: number): number => (root[a] === a ? a : (root[a] = find(root[a])));
  for (const o of found) for (let a = 0; a < pm; a++) {
    const ra = find(a), rb = find(o.perm[a]);
    if (ra !== rb) root[Math.max(ra, rb)] = Math.min(ra, rb);
  }
  const firstOfOrbit = new Int32Array(pm).fill(-1);
  for (let i = 0; i < m; i++) {
    const r = find(atomOf[i]);
    if (firstOfOrbit[r] < 0) firstOfOrbit[r] = i;
  }
  const equivalentAtoms = new Int32Array(m);
  for (let i = 0; i < m; i++) equivalentAtoms[i] = firstOfOrbit[find(atomOf[i])];

  const mInvT = transpose3(inverse(match.conventional, 3));
  const conventionalBasis = mul3(match.conventional, bp);
  const setting = match.setting;
  let deviation = 0;
  for (const o of found) deviation = Math.max(deviation, o.deviationAngstrom);
  for (const o of pure) deviation = Math.max(deviation, o.deviationAngstrom);
  return {
    ok: true,
    symmetry: {
      number: setting.number,
      symbol: setting.short,
      hm: setting.hm,
      full: setting.full,
      hall: setting.hall,
      pointGroup: pointGroupSymbol(setting.hm),
      crystalSystem: match.system,
      toleranceAngstrom: tol,
      deviationAngstrom: deviation,
      operations,
      latticePointsPerCell: n,
      primitiveBasis: bp,
      primitiveAtoms: pm,
      conventionalBasis,
      conventionalCell: cellOf(conventionalBasis),
      transformation: mul3(mInvT, kT).map(clean),
      originShift: match.originShift.map(clean) as [number, number, number],
      equivalentAtoms,
    },
  };
}

/** Fractional coordinates of m atoms under the matrix `t` (x' = t x), optionally wrapped to [0,1). */
function transformCoordinates(t: ArrayLike<number>, frac: ArrayLike<number>, m: number, wrap: boolean): Float64Array {
  const out = new Float64Array(3 * m);
  for (let i = 0; i < m; i++) {
    const x = frac[3 * i], y = frac[3 * i + 1], z = frac[3 * i + 2];
    const a = t[0] * x + t[1] * y + t[2] * z, b = t[3] * x + t[4] * y + t[5] * z, c = t[6] * x + t[7] * y + t[8] * z;
    out[3 * i] = wrap ? wrapUnit(a) : a;
    out[3 * i + 1] = wrap ? wrapUnit(b) : b;
    out[3 * i + 2] = wrap ? wrapUnit(c) : c;
  }
  return out;
}

/**
 * Why the operations are not a group (a product missing, or present with another translation beyond the
 * tolerance), or null when they are one.
 */
function closureProblem(found: { rot: number[]; trans: number[] }[], basis: number[], tol: number): string | null {
  const byRot = new Map<number, number[]>();
  for (const o of found) byRot.set(rotationKey(o.rot), o.trans);
  const tol2 = (2 * tol) * (2 * tol);
  for (const a of found) {
    for (const b of found) {
      const rot = mul3(a.rot, b.rot);
      const t = byRot.get(rotationKey(rot));
      if (t === undefined) return `the operations found within ${fmt(tol)} Å are not closed under products`;
      const wb = mulVec3(a.rot, b.trans);
      if (wrappedLength2(wb[0] + a.trans[0] - t[0], wb[1] + a.trans[1] - t[1], wb[2] + a.trans[2] - t[2], basis) > tol2) return `the translations of the operations found within ${fmt(tol)} Å do not compose`;
    }
  }
  return null;
}

/** Cell lengths (Å) and angles (°) of basis rows. */
export function cellOf(basis: ArrayLike<number>): CellParams {
  const len = (r: number) => Math.hypot(basis[3 * r], basis[3 * r + 1], basis[3 * r + 2]);
  const angle = (r: number, s: number) => {
    const d = basis[3 * r] * basis[3 * s] + basis[3 * r + 1] * basis[3 * s + 1] + basis[3 * r + 2] * basis[3 * s + 2];
    return (Math.acos(Math.max(-1, Math.min(1, d / (len(r) * len(s))))) * 180) / Math.PI;
  };
  return { a: len(0), b: len(1), c: len(2), alpha: angle(1, 2), beta: angle(0, 2), gamma: angle(0, 1) };
}

/** Volume of the conventional cell over that of the given cell (to turn molecules per given cell into Z). */
export function conventionalPerGiven(symmetry: DetectedSymmetry, givenBasis: ArrayLike<number>): number {
  return basisVolume(symmetry.conventionalBasis) / basisVolume(givenBasis);
}

/** A number naming an integer rotation of a reduced cell (entries within ±7; others get NaN, which matches nothing). */
function rotationKey(w: ArrayLike<number>): number {
  let k = 0;
  for (let i = 0; i < 9; i++) {
    if (w[i] < -7 || w[i] > 7) return Number.NaN;
    k = k * 15 + (w[i] + 7);
  }
  return k;
}

function isZero(t: number[]): boolean {
  return t.every((v) => v === 0);
}

function fmt(v: number): string {
  return String(Math.round(v * 10000) / 10000);
}

/** Round away floating-point dust (1e-12) so exact fractions print exactly and -0 becomes 0. */
function clean(v: number): number {
  const r = Math.round(v * 1e12) / 1e12;
  return r + 0;
}
