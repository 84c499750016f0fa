// Deciding between space-group settings a symbol leaves open (typically the two origin choices of a group
// written without ':1' or ':2') from the listed atom sites.
//
// The rule (ours, checked on the real files in test/data/real): coordinates written for one origin put atoms on
// that setting's special positions, so its operations map each such atom onto itself and the cell holds few
// atoms; the other origin's operations move the same points off its special positions, which multiplies them
// and often stacks images on top of each other. So, among the open settings, prefer
//   1. the fewest pairs of non-hydrogen atoms closer than OVERLAP_ANGSTROM (no real crystal has them), then
//   2. the fewest atoms per cell;
// and decide only when one setting is strictly best, and only between settings with as many operations (one cell). Hydrogens and the alternatives the disorder policy leaves
// out are not counted (their positions are short or split by design).
import type { CellParams, Site, SymOp } from '../types.js';
import { selectOrderedSites } from './disorder.js';
import { expandSites } from './periodic-set.js';

/** Non-hydrogen atoms closer than this are two copies of one atom, not neighbours (the shortest bonds between non-hydrogen atoms are about 1 Å; common practice). */
export const OVERLAP_ANGSTROM = 0.7;
/** Above this many atoms per cell for any setting, the pair count is not attempted (it is quadratic). */
const MAX_ATOMS = 4000;

export interface SettingFit {
  /** Atoms per cell (ordered structure, hydrogens included). */
  atoms: number;
  /** Pairs of non-hydrogen atoms closer than OVERLAP_ANGSTROM. */
  overlaps: number;
}

/**
 * Index of the operation set (one per open setting) that fits the sites strictly best, or null when none is
 * strictly best; with the fit of every set, for the note.
 */
export function settingFromSites(cell: CellParams, sites: Site[], opSets: SymOp[][]): { best: number | null; fits: SettingFit[] | null } {
  if (sites.length === 0 || opSets.length < 2) return { best: null, fits: null };
  // Atom counts compare only between settings of one cell (same number of operations, as for two origins);
  // hexagonal against rhombohedral axes is the cell's shape to decide.
  if (opSets.some((ops) => ops.length !== opSets[0]!.length)) return { best: null, fits: null };
  const kept = selectOrderedSites(sites).kept;
  const fits: SettingFit[] = [];
  for (const ops of opSets) {
    let expanded;
    try {
      expanded = expandSites({ cell, ops, sites }, kept);
    } catch {
      return { best: null, fits: null };
    }
    if (expanded.count > MAX_ATOMS) return { best: null, fits: null };
    fits.push({ atoms: expanded.count, overlaps: countOverlaps(expanded.basis, expanded.frac, expanded.atomicNumbers, expanded.count) });
  }
  const order = fits.map((_, i) => i).sort((i, j) => fits[i]!.overlaps - fits[j]!.overlaps || fits[i]!.atoms - fits[j]!.atoms);
  const a = fits[order[0]!]!;
  const b = fits[order[1]!]!;
  const strictlyBest = a.overlaps < b.overlaps || (a.overlaps === b.overlaps && a.atoms < b.atoms);
  return { best: strictlyBest ? order[0]! : null, fits };
}

/** Pairs of non-hydrogen points closer than OVERLAP_ANGSTROM, nearest lattice translate (cells are never thinner than 1.4 Å). */
function countOverlaps(basis: Float64Array, frac: Float64Array, z: Uint8Array, n: number): number {
  const limit2 = OVERLAP_ANGSTROM * OVERLAP_ANGSTROM;
  let count = 0;
  for (let i = 0; i < n; i++) {
    if (z[i] === 1) continue;
    for (let j = i + 1; j < n; j++) {
      if (z[j] === 1) continue;
      // Fractional difference wrapped to [-0.5, 0.5), then the 27 neighbouring translates of it.
      const d0 = frac[3 * i]! - frac[3 * j]!;
      const d1 = frac[3 * i + 1]! - frac[3 * j + 1]!;
      const d2 = frac[3 * i + 2]! - frac[3 * j + 2]!;
      const w0 = d0 - Math.round(d0), w1 = d1 - Math.round(d1), w2 = d2 - Math.round(d2);
      let close = false;
      for (let a = -1; a <= 1 && !close; a++) {
        for (let b = -1; b <= 1 && !close; b++) {
          for (let c = -1; c <= 1 && !close; c++) {
            const f0 = w0 + a, f1 = w1 + b, f2 = w2 + c;
            const x = f0 * basis[0]! + f1 * basis[3]! + f2 * basis[6]!;
            const y = f0 * basis[1]! + f1 * basis[4]! + f2 * basis[7]!;
            const zz = f0 * basis[2]! + f1 * basis[5]! + f2 * basis[8]!;
            if (x * x + y * y + zz * zz < limit2) close = true;
          }
        }
      }
      if (close) count++;
    }
  }
  return count;
}
