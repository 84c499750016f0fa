// Experimental-like versions of a predicted crystal, for the locate tests and the found-threshold benchmark.
// A structure measured at room or low temperature differs from its 0 K lattice-energy minimum mainly in two ways
// (common practice): the cell is larger (thermal expansion, roughly 1-3% in volume, with the molecules keeping
// their shape) and, for X-ray data, bonds to hydrogen are short (C-H about 0.95 Å instead of about 1.09 Å,
// because X-rays see the bonding electron density). `experimentalVariant` applies both to any crystal record:
// every molecule is moved as a rigid body (its centroid keeps its fractional coordinates in the stretched cell,
// its atoms keep their Cartesian offsets from the centroid), and each hydrogen is moved along its bond towards
// the atom it is bonded to. The result is written in P1 as one CIF block.
import type { CrystalRecord } from '../types.js';
import { cellToBasis } from '../geometry/cell.js';
import { selectOrderedSites } from '../geometry/disorder.js';
import { covalentRadiusAngstrom, elementSymbol } from '../geometry/elements.js';
import { BOND_SLACK_ANGSTROM } from '../geometry/molecules.js';
import { expandSites } from '../geometry/periodic-set.js';
import { inverse } from '../demo/mat3.js';
import { writeCifBlock } from '../demo/cif-block.js';

export interface VariantOptions {
  /** New block name. */
  id: string;
  /** Factors on the cell lengths a, b, c (angles kept); [1.01, 1.01, 1.01] stretches every axis by 1%. */
  stretch?: [number, number, number];
  /** Length (Å) by which every bond to a hydrogen is shortened (0.1 turns a 1.09 Å C-H into 0.99 Å). */
  shortenHydrogenBondsAngstrom?: number;
}

export interface Variant {
  /** The variant as one P1 CIF block. */
  cif: string;
  /** Molecules moved as rigid bodies and hydrogens moved. */
  molecules: number;
  hydrogensMoved: number;
}

/** An experimental-like variant of `record`: cell stretched with rigid molecules, bonds to hydrogen shortened. */
export function experimentalVariant(record: CrystalRecord, opts: VariantOptions): Variant {
  const ex = expandSites(record, selectOrderedSites(record.sites).kept);
  const n = ex.count;
  const basis = Array.from(ex.basis);
  const whole = unwrapMolecules(basis, ex.frac, ex.atomicNumbers, n);
  const frac = whole.frac;

  // Cartesian positions of the whole molecules.
  const cart = new Float64Array(3 * n);
  for (let i = 0; i < n; i++) for (let r = 0; r < 3; r++) cart[3 * i + r] = frac[3 * i] * basis[r] + frac[3 * i + 1] * basis[3 + r] + frac[3 * i + 2] * basis[6 + r];

  // Shorten X-H bonds: each hydrogen moves towards its nearest bonded non-hydrogen atom.
  const shorten = opts.shortenHydrogenBondsAngstrom ?? 0;
  let hydrogensMoved = 0;
  if (shorten !== 0) {
    const moved = new Float64Array(cart);
    for (let i = 0; i < n; i++) {
      if (ex.atomicNumbers[i] !== 1) continue;
      let best = -1;
      let bestD = Infinity;
      for (const j of whole.bonded[i]) {
        if (ex.atomicNumbers[j] === 1) continue;
        const d = Math.hypot(cart[3 * j] - cart[3 * i], cart[3 * j + 1] - cart[3 * i + 1], cart[3 * j + 2] - cart[3 * i + 2]);
        if (d < bestD) {
          bestD = d;
          best = j;
        }
      }
      if (best < 0) continue;
      for (let r = 0; r < 3; r++) moved[3 * i + r] = cart[3 * i + r] + ((cart[3 * best + r] - cart[3 * i + r]) * shorten) / bestD;
      hydrogensMoved++;
    }
    cart.set(moved);
  }

  // Stretch the cell; molecules keep their shape, their centroids their fractional coordinates.
  const s = opts.stretch ?? [1, 1, 1];
  const c = record.cell;
  const newBasis = Array.from(cellToBasis({ ...c, a: c.a * s[0], b: c.b * s[1], c: c.c * s[2] }));
  const newInverse = inverse(newBasis);
  const oldInverse = inverse(basis);
  const out = new Float64Array(3 * n);
  for (let m = 0; m < whole.molecules.length; m++) {
    const atoms = whole.molecules[m];
    // The centroid of the (possibly moved) atoms, in Cartesian Å and in fractions of the original cell.
    const centroidCart = [0, 0, 0];
    for (const i of atoms) for (let r = 0; r < 3; r++) centroidCart[r] += cart[3 * i + r] / atoms.length;
    const centroidFrac = [0, 1, 2].map((r) => centroidCart[0] * oldInverse[r] + centroidCart[1] * oldInverse[3 + r] + centroidCart[2] * oldInverse[6 + r]);
    for (const i of atoms) {
      const o = [cart[3 * i] - centroidCart[0], cart[3 * i + 1] - centroidCart[1], cart[3 * i + 2] - centroidCart[2]];
      for (let r = 0; r < 3; r++) out[3 * i + r] = centroidFrac[r] + o[0] * newInverse[r] + o[1] * newInverse[3 + r] + o[2] * newInverse[6 + r];
    }
  }
  for (let i = 0; i < out.length; i++) out[i] -= Math.floor(out[i]);
  const elements = Array.from(ex.atomicNumbers, (z) => elementSymbol(z));
  const cif = writeCifBlock(
    { basis: newBasis, ops: null, frac: out, elements, atomsPerMolecule: 1 },
    { id: opts.id, symbol: 'P 1', itNumber: 1, listOps: false },
  );
  return { cif, molecules: whole.molecules.length, hydrogensMoved };
}

/**
 * Molecules made whole: bonds by covalent radii plus the usual 0.4 Å slack ("Covalent radii revisited",
 * Dalton Trans. 2008; common practice), followed from atom to atom across cell faces, so every molecule's atoms
 * get fractional coordinates next to each other. Brute force over the 27 neighbouring cells (small test cells).
 */
function unwrapMolecules(
  basis: number[],
  wrapped: Float64Array,
  z: Uint8Array,
  n: number,
): { frac: Float64Array; molecules: number[][]; bonded: number[][] } {
  const bonded: number[][] = Array.from({ length: n }, () => []);
  const shift: Array<Map<number, [number, number, number]>> = Array.from({ length: n }, () => new Map());
  for (let i = 0; i < n; i++) {
    const ri = covalentRadiusAngstrom(z[i]) ?? 1.5;
    for (let j = 0; j < n; j++) {
      if (j === i) continue;
      const cut = ri + (covalentRadiusAngstrom(z[j]) ?? 1.5) + BOND_SLACK_ANGSTROM;
      for (let a = -1; a <= 1; a++)
        for (let b = -1; b <= 1; b++)
          for (let c = -1; c <= 1; c++) {
            const d0 = wrapped[3 * j] + a - wrapped[3 * i];
            const d1 = wrapped[3 * j + 1] + b - wrapped[3 * i + 1];
            const d2 = wrapped[3 * j + 2] + c - wrapped[3 * i + 2];
            const x = d0 * basis[0] + d1 * basis[3] + d2 * basis[6];
            const y = d0 * basis[1] + d1 * basis[4] + d2 * basis[7];
            const w = d0 * basis[2] + d1 * basis[5] + d2 * basis[8];
            if (x * x + y * y + w * w < cut * cut && !shift[i].has(j)) {
              bonded[i].push(j);
              shift[i].set(j, [a, b, c]);
            }
          }
    }
  }
  const frac = new Float64Array(wrapped);
  const seen = new Uint8Array(n);
  const molecules: number[][] = [];
  for (let start = 0; start < n; start++) {
    if (seen[start]) continue;
    seen[start] = 1;
    const members = [start];
    for (let q = 0; q < members.length; q++) {
      const i = members[q];
      for (const j of bonded[i]) {
        if (seen[j]) continue;
        seen[j] = 1;
        const t = shift[i].get(j)!;
        // j's image bonded to i, placed next to i's (already unwrapped) position.
        for (let r = 0; r < 3; r++) frac[3 * j + r] = wrapped[3 * j + r] + t[r] + (frac[3 * i + r] - wrapped[3 * i + r]);
        members.push(j);
      }
    }
    molecules.push(members);
  }
  return { frac, molecules, bonded };
}
