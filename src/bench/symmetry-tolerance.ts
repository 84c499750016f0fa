// Figures behind the default symmetry tolerance. On one side, copies of generated packings in the common organic
// space groups written the way a search writes them (P1, supercells, other cells and settings, atom order) with
// optimiser-like noise of sigma Å per coordinate: the smallest tolerance at which detection reports the group the
// copy was generated in. On the other, the same packings with the molecules of all but one coset of an index-2
// subgroup turned by a small angle (a crystal of lower symmetry that sits close to the higher one): the smallest
// tolerance at which detection reports the higher group, below which it reports the lower one. The default
// tolerance must lie between the two.
import { generateLandscape, ALL_GROUPS } from '../demo/landscape.js';
import { readCifText } from '../io/read.js';
import { expandSites } from '../geometry/periodic-set.js';
import { atomicNumber } from '../geometry/elements.js';
import { detectSymmetry, DEFAULT_SYMMETRY_TOLERANCE_ANGSTROM, type SymmetryCell } from '../geometry/detect-symmetry.js';
import { subgroupPacking } from '../demo/subgroup-packing.js';
import { expandToP1 } from '../demo/rewrite.js';
import { orvazinone } from '../demo/molecule.js';
import { makeRng } from '../demo/prng.js';
import { IT_NUMBER, type GeneratedGroup } from '../demo/space-groups.js';
import { fracToCartesian } from '../geometry/cell.js';
import { pdd } from '../invariants/pdd.js';
import { emd } from '../metric/emd.js';
import type { PeriodicPointSet } from '../types.js';

/** Range searched for the smallest tolerance that reports a group (Å), and the bisection steps (1% of the range in log). */
const LOWEST_ANGSTROM = 1e-4;
const HIGHEST_ANGSTROM = 0.5;
const STEPS = 14;

/** For each generated group, a subgroup of index 2 (operation indices into the group's list) to keep. */
export const INDEX_TWO_SUBGROUP: Record<GeneratedGroup, number[]> = {
  'P21/c': [0, 2],
  'P-1': [0],
  P212121: [0, 1],
  'C2/c': [0, 2, 4, 6],
  P21: [0],
  Pbca: [0, 4, 1, 5],
  Pna21: [0, 1],
};

export async function run(): Promise<void> {
  const groups: GeneratedGroup[] = [...ALL_GROUPS, 'Pna21'];
  process.stdout.write(`default symmetry tolerance: ${DEFAULT_SYMMETRY_TOLERANCE_ANGSTROM} Å\n`);
  process.stdout.write('copies written in P1 and in P1 supercells with noise (the others keep exact symmetry), 48 structures per row:\n');
  process.stdout.write('noise sigma (Å)  smallest tolerance that finds the generated group: median / 90th percentile / largest (Å)\n');
  for (const sigma of [0.001, 0.002, 0.003, 0.005]) {
    const g = generateLandscape({ seed: 11, packings: 24, copiesPerPacking: 6, closePairs: 0, noiseAngstrom: sigma, spaceGroups: groups, squeezeMoves: 200 });
    const needed: number[] = [];
    readCifText(g.cif, 'generated.cif').forEach((b, i) => {
      if (b.kind !== 'record') throw new Error(`generated block rejected: ${b.rejected.reason}`);
      if (!g.kinds[i].startsWith('p1')) return;
      const ex = expandSites(b.record, b.record.sites.map((_, s) => s));
      needed.push(smallestTolerance({ basis: ex.basis, frac: ex.frac, types: ex.atomicNumbers }, IT_NUMBER[g.packings[g.truth[i]].group]));
    });
    needed.sort((a, b) => a - b);
    process.stdout.write(`${sigma.toFixed(3).padStart(15)}  ${q(needed, 0.5)} / ${q(needed, 0.9)} / ${q(needed, 1)}\n`);
  }

  process.stdout.write('lower-symmetry crystals: molecules outside an index-2 subgroup turned by an angle (no noise), 28 structures per row:\n');
  process.stdout.write(
    'turn (deg)  smallest tolerance that reports the higher group: lowest / median (Å); below it the lower group is reported' +
      '   EMD to the untouched packing (k = 100): median / largest (Å)\n',
  );
  const mol = orvazinone();
  const g = generateLandscape({ seed: 12, packings: 28, copiesPerPacking: 1, closePairs: 0, spaceGroups: groups, squeezeMoves: 200 });
  for (const turn of [0.5, 1, 2, 4]) {
    const rng = makeRng(90 + turn);
    const needed: number[] = [];
    const emds: number[] = [];
    for (const gp of g.packings) {
      const e = expandToP1(subgroupPacking(gp.packing, INDEX_TWO_SUBGROUP[gp.group], turn, rng, mol.elements.length, mol.elements));
      needed.push(smallestTolerance(cellOf(e), IT_NUMBER[gp.group]));
      const untouched = expandToP1(subgroupPacking(gp.packing, INDEX_TWO_SUBGROUP[gp.group], 0, rng, mol.elements.length, mol.elements));
      emds.push(emd(pdd(pointSetOf(e), 100), pdd(pointSetOf(untouched), 100)));
    }
    needed.sort((a, b) => a - b);
    emds.sort((a, b) => a - b);
    process.stdout.write(`${String(turn).padStart(10)}  ${q(needed, 0)} / ${q(needed, 0.5)}${' '.repeat(86)}${q(emds, 0.5)} / ${q(emds, 1)}\n`);
  }
}

/** Smallest tolerance (bisection in log scale) at which detection reports group `number`; Infinity if none up to the top of the range. */
export function smallestTolerance(cell: SymmetryCell, number: number): number {
  const finds = (tol: number) => {
    const d = detectSymmetry(cell, tol);
    return d.ok && d.symmetry.number === number && d.symmetry.toleranceAngstrom === tol;
  };
  if (!finds(HIGHEST_ANGSTROM)) return Infinity;
  let lo = Math.log(LOWEST_ANGSTROM), hi = Math.log(HIGHEST_ANGSTROM);
  for (let s = 0; s < STEPS; s++) {
    const mid = (lo + hi) / 2;
    if (finds(Math.exp(mid))) hi = mid;
    else lo = mid;
  }
  return Math.exp(hi);
}

/** A generator description as the atoms symmetry detection reads. */
export function cellOf(e: { basis: number[]; frac: Float64Array; elements: string[] }): SymmetryCell {
  return { basis: e.basis, frac: e.frac, types: e.elements.map(atomicNumber) };
}

/** The periodic point set of a generator description (every atom its own orbit). */
function pointSetOf(e: { basis: number[]; frac: Float64Array; elements: string[] }): PeriodicPointSet {
  const m = e.elements.length;
  const motif = new Float64Array(3 * m);
  for (let i = 0; i < m; i++) fracToCartesian(e.basis, e.frac[3 * i], e.frac[3 * i + 1], e.frac[3 * i + 2], motif, 3 * i);
  return {
    dim: 3, basis: Float64Array.from(e.basis), motif, atomicNumbers: Uint8Array.from(e.elements.map(atomicNumber)),
    asym: Int32Array.from({ length: m }, (_, i) => i), multiplicity: new Int32Array(m).fill(1),
  };
}

function q(sorted: number[], p: number): string {
  return sorted[Math.min(sorted.length - 1, Math.floor(p * sorted.length))].toFixed(4);
}
