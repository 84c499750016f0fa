// Point-group facts read off integer rotation matrices in any lattice basis: the type of each rotation
// (from its determinant and trace), the crystal class as the multiset of types, the crystal system, and
// the point-group symbol of a space-group symbol.
// The type of a crystallographic rotation follows from det W and tr W alone (International Tables for
// Crystallography Vol. A, Part 11; the counting of types identifies each of the 32 classes, R. W.
// Grosse-Kunstleve, Acta Cryst. A 55, 1999, Table 6).
import { determinant } from './reduce.js';

export type CrystalSystem = 'triclinic' | 'monoclinic' | 'orthorhombic' | 'tetragonal' | 'trigonal' | 'hexagonal' | 'cubic';

/** Types in the order of the class key: improper -6 -4 -3 -2(mirror) -1(inversion), proper 1 2 3 4 6. */
const TYPES = [-6, -4, -3, -2, -1, 1, 2, 3, 4, 6];

/**
 * Type of a crystallographic rotation: its proper part's order, negative for improper ones (-1 inversion,
 * -2 mirror, -3, -4, -6 rotoinversions). Throws for a matrix that is no crystallographic rotation.
 */
export function rotationType(w: ArrayLike<number>): number {
  const det = determinant(w, 3);
  const trace = det * (w[0] + w[4] + w[8]);
  const order = trace === 3 ? 1 : trace === -1 ? 2 : trace === 0 ? 3 : trace === 1 ? 4 : trace === 2 ? 6 : 0;
  if (order === 0 || (det !== 1 && det !== -1)) throw new Error(`not a crystallographic rotation: ${Array.from(w).join(',')}`);
  return det * order;
}

/** The crystal class as a key: counts of each rotation type among the distinct rotations, e.g. '0,0,0,1,1,1,1,0,0,0' for 2/m. */
export function classKey(rotations: ArrayLike<number>[]): string {
  const counts = new Array<number>(TYPES.length).fill(0);
  for (const w of rotations) counts[TYPES.indexOf(rotationType(w))]++;
  return counts.join(',');
}

/** Crystal system from the rotation types (trigonal and hexagonal are told apart by a 6-fold axis). */
export function crystalSystem(rotations: ArrayLike<number>[]): CrystalSystem {
  let threes = 0, fours = 0, sixes = 0, twos = 0;
  for (const w of rotations) {
    const order = Math.abs(rotationType(w));
    if (order === 3) threes++;
    else if (order === 4) fours++;
    else if (order === 6) sixes++;
    else if (order === 2) twos++;
  }
  // Types count proper parts: the inversion's is the identity (type -1), a mirror's a 2-fold (type -2).
  if (threes >= 8) return 'cubic';
  if (sixes > 0) return 'hexagonal';
  if (threes > 0) return 'trigonal';
  if (fours > 0) return 'tetragonal';
  if (twos >= 3) return 'orthorhombic';
  if (twos >= 1) return 'monoclinic';
  return 'triclinic';
}

/**
 * The point-group symbol of a space-group Hermann–Mauguin symbol written with spaces ('P 1 21/c 1' -> '2/m',
 * 'P b c a' -> 'mmm', 'F d -3 m' -> 'm-3m'): screw subscripts dropped, glide letters become m, the lattice
 * letter and placeholder 1s go.
 */
export function pointGroupSymbol(hm: string): string {
  const parts = hm.trim().split(/\s+/).slice(1);
  const mapped = parts.map((p) =>
    p
      .split('/')
      .map((q) => (/^[abcnde]$/.test(q) ? 'm' : q.replace(/^(-?[2346])[1-5]$/, '$1')))
      .join('/'),
  );
  const meaningful = mapped.filter((p) => p !== '1');
  return meaningful.length === 0 ? '1' : meaningful.join('');
}
