// Unit cell: lengths and angles -> lattice basis in Cartesian Å, volume, and fractional <-> Cartesian.
// Convention: a along x, b in the xy plane, c completing a right-handed set (International Tables for
// Crystallography Vol. B, Sect. 1.1; common practice, also gemmi's orthogonalisation).
import type { CellParams } from '../types.js';

const DEG = Math.PI / 180;

/**
 * Row r of the result is lattice vector r (a, b, c) in Cartesian Å, row-major 3x3.
 * Throws when the parameters are not finite, not positive, or describe no cell (zero or negative volume).
 */
export function cellToBasis(cell: CellParams): Float64Array {
  const volumeFactor = checkCell(cell);
  const { a, b, c } = cell;
  const ca = Math.cos(cell.alpha * DEG);
  const cb = Math.cos(cell.beta * DEG);
  const cg = Math.cos(cell.gamma * DEG);
  const sg = Math.sin(cell.gamma * DEG);
  const out = new Float64Array(9);
  out[0] = a;
  out[3] = b * cg;
  out[4] = b * sg;
  out[6] = c * cb;
  out[7] = (c * (ca - cb * cg)) / sg;
  // The z component follows from the volume: V = a * b sin(gamma) * cz.
  out[8] = (c * volumeFactor) / sg;
  return out;
}

/** Cell volume in Å^3: abc sqrt(1 - cos²α - cos²β - cos²γ + 2 cosα cosβ cosγ). Throws like cellToBasis. */
export function cellVolume(cell: CellParams): number {
  return cell.a * cell.b * cell.c * checkCell(cell);
}

/** Volume of the cell spanned by the rows of a 3x3 basis (absolute determinant), Å^3. */
export function basisVolume(basis: ArrayLike<number>): number {
  const m = basis;
  return Math.abs(
    m[0]! * (m[4]! * m[8]! - m[5]! * m[7]!) - m[1]! * (m[3]! * m[8]! - m[5]! * m[6]!) + m[2]! * (m[3]! * m[7]! - m[4]! * m[6]!),
  );
}

/** Spacing in Å between the lattice planes parallel to the two basis rows other than `axis` (V / |b x c| for a). */
export function planeSpacings(basis: ArrayLike<number>): [number, number, number] {
  const v = basisVolume(basis);
  const out: [number, number, number] = [0, 0, 0];
  for (let k = 0; k < 3; k++) {
    const i = 3 * ((k + 1) % 3);
    const j = 3 * ((k + 2) % 3);
    const cx = basis[i + 1]! * basis[j + 2]! - basis[i + 2]! * basis[j + 1]!;
    const cy = basis[i + 2]! * basis[j]! - basis[i]! * basis[j + 2]!;
    const cz = basis[i]! * basis[j + 1]! - basis[i + 1]! * basis[j]!;
    out[k] = v / Math.hypot(cx, cy, cz);
  }
  return out;
}

/** Write the Cartesian position of fractional (f0, f1, f2) into out[offset..offset+2]. */
export function fracToCartesian(basis: ArrayLike<number>, f0: number, f1: number, f2: number, out: Float64Array, offset: number): void {
  out[offset] = f0 * basis[0]! + f1 * basis[3]! + f2 * basis[6]!;
  out[offset + 1] = f0 * basis[1]! + f1 * basis[4]! + f2 * basis[7]!;
  out[offset + 2] = f0 * basis[2]! + f1 * basis[5]! + f2 * basis[8]!;
}

/** Check the parameters and return the volume factor sqrt(1 - cos²α - cos²β - cos²γ + 2 cosα cosβ cosγ). */
function checkCell(cell: CellParams): number {
  for (const key of ['a', 'b', 'c'] as const) {
    const v = cell[key];
    if (!Number.isFinite(v) || v <= 0) throw new Error(`cell length ${key} = ${v} Å is not a positive number`);
  }
  for (const key of ['alpha', 'beta', 'gamma'] as const) {
    const v = cell[key];
    if (!Number.isFinite(v) || v <= 0 || v >= 180) throw new Error(`cell angle ${key} = ${v}° is not between 0° and 180°`);
  }
  const ca = Math.cos(cell.alpha * DEG);
  const cb = Math.cos(cell.beta * DEG);
  const cg = Math.cos(cell.gamma * DEG);
  const f = 1 - ca * ca - cb * cb - cg * cg + 2 * ca * cb * cg;
  // Each angle must be below the sum of the other two and the three below 360°, else f <= 0.
  if (!(f > 1e-12)) {
    throw new Error(
      `cell angles alpha = ${cell.alpha}°, beta = ${cell.beta}°, gamma = ${cell.gamma}° describe no cell (zero or negative volume): ` +
        'each angle must be smaller than the sum of the other two, and the three together below 360°',
    );
  }
  return Math.sqrt(f);
}
