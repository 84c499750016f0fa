// A grid over one unit cell for the question the symmetry search asks thousands of times: which atom of a
// given element lies within the tolerance of this point (nearest lattice translate)? The cell is cut into
// bins about 1.5 Å thick; a query looks only at the one to eight bins its tolerance ball reaches, so a
// lookup costs a few distance checks whatever the cell size.
import { planeSpacings } from './cell.js';
import { wrappedLength2 } from './matrix3.js';

/** Target bin thickness (Å): a few atoms per bin in an organic crystal (about 15 Å³ per atom). */
const BIN_ANGSTROM = 1.5;

export interface MotifIndex {
  basis: Float64Array;
  /** 3*m fractional coordinates in [0,1). */
  frac: Float64Array;
  types: Int32Array;
  count: number;
  nb0: number;
  nb1: number;
  nb2: number;
  /** Tolerance as a fraction of each plane spacing (how far a ball of the tolerance reaches along each axis). */
  reach0: number;
  reach1: number;
  reach2: number;
  tol2: number;
  binStart: Int32Array;
  binAtoms: Int32Array;
}

/** Index `frac` (wrapped to [0,1) here) in the cell with basis rows `basis` (Å) for lookups within `toleranceAngstrom`. */
export function buildMotifIndex(basis: Float64Array, frac: Float64Array, types: ArrayLike<number>, toleranceAngstrom: number): MotifIndex {
  const count = types.length;
  const spacing = planeSpacings(basis);
  const binAt = (s: number) => Math.max(1, Math.min(64, Math.floor(s / Math.max(BIN_ANGSTROM, 2 * toleranceAngstrom))));
  const nb0 = binAt(spacing[0]), nb1 = binAt(spacing[1]), nb2 = binAt(spacing[2]);
  const wrapped = new Float64Array(3 * count);
  const bins = new Int32Array(count);
  const binStart = new Int32Array(nb0 * nb1 * nb2 + 1);
  for (let i = 0; i < count; i++) {
    const f0 = wrapUnit(frac[3 * i]), f1 = wrapUnit(frac[3 * i + 1]), f2 = wrapUnit(frac[3 * i + 2]);
    wrapped[3 * i] = f0;
    wrapped[3 * i + 1] = f1;
    wrapped[3 * i + 2] = f2;
    bins[i] = (binOf(f0, nb0) * nb1 + binOf(f1, nb1)) * nb2 + binOf(f2, nb2);
    binStart[bins[i] + 1]++;
  }
  for (let b = 0; b < binStart.length - 1; b++) binStart[b + 1] += binStart[b];
  const fill = binStart.slice(0, binStart.length - 1);
  const binAtoms = new Int32Array(count);
  for (let i = 0; i < count; i++) binAtoms[fill[bins[i]]++] = i;
  return {
    basis, frac: wrapped, types: Int32Array.from(types), count, nb0, nb1, nb2,
    reach0: toleranceAngstrom / spacing[0], reach1: toleranceAngstrom / spacing[1], reach2: toleranceAngstrom / spacing[2],
    tol2: toleranceAngstrom * toleranceAngstrom, binStart, binAtoms,
  };
}

/**
 * The atom of element `type` nearest to fractional (g0, g1, g2) within the tolerance, or -1. `distance2`
 * receives the squared distance (Å²) in its first slot.
 */
export function findAtom(ix: MotifIndex, g0: number, g1: number, g2: number, type: number, distance2: Float64Array): number {
  g0 = wrapUnit(g0);
  g1 = wrapUnit(g1);
  g2 = wrapUnit(g2);
  const { nb0, nb1, nb2, frac, basis: B } = ix;
  const lo0 = Math.floor((g0 - ix.reach0) * nb0), hi0 = Math.floor((g0 + ix.reach0) * nb0);
  const lo1 = Math.floor((g1 - ix.reach1) * nb1), hi1 = Math.floor((g1 + ix.reach1) * nb1);
  const lo2 = Math.floor((g2 - ix.reach2) * nb2), hi2 = Math.floor((g2 + ix.reach2) * nb2);
  let best = -1;
  let bestD2 = ix.tol2;
  // With one bin along an axis the range may name it twice; each bin is visited once.
  const n0 = Math.min(hi0 - lo0, nb0 - 1), n1 = Math.min(hi1 - lo1, nb1 - 1), n2 = Math.min(hi2 - lo2, nb2 - 1);
  for (let a0 = 0; a0 <= n0; a0++) {
    const c0 = mod(lo0 + a0, nb0);
    for (let a1 = 0; a1 <= n1; a1++) {
      const c1 = mod(lo1 + a1, nb1);
      for (let a2 = 0; a2 <= n2; a2++) {
        const bin = (c0 * nb1 + c1) * nb2 + mod(lo2 + a2, nb2);
        for (let q = ix.binStart[bin]; q < ix.binStart[bin + 1]; q++) {
          const j = ix.binAtoms[q];
          if (ix.types[j] !== type) continue;
          const dd = wrappedLength2(g0 - frac[3 * j], g1 - frac[3 * j + 1], g2 - frac[3 * j + 2], B);
          if (dd <= bestD2) {
            bestD2 = dd;
            best = j;
          }
        }
      }
    }
  }
  distance2[0] = bestD2;
  return best;
}

/** Wrap to [0,1). */
export function wrapUnit(v: number): number {
  const w = v - Math.floor(v);
  return w >= 1 ? 0 : w;
}

function binOf(f: number, n: number): number {
  const b = Math.floor(f * n);
  return b >= n ? n - 1 : b;
}

function mod(i: number, n: number): number {
  const r = i % n;
  return r < 0 ? r + n : r;
}
