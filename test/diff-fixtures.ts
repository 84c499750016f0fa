// Invented landscapes built directly from PDDs, for diff/locate tests that need exact control over which
// structures are the same. Shared structures get row noise of at most `noise` Å per entry: the identity
// transport then costs at most `noise`, so their EMD is ≤ noise (Rubner, Tomasi & Guibas, IJCV 2000: EMD is the
// cheapest transport). Distinct structures are kept apart by their AMD vectors, whose L-infinity distance is a
// lower bound of the EMD (MATCH Commun. Math. Comput. Chem. 2022), so "far" is proven, not hoped for.
import type { Landscape, StructureRow, SiftParameters } from '../src/landscape/schema.js';
import { seededUniform } from '../src/demo/prng.js';
import { amdOf, noisyCopy, type SyntheticPdd } from '../src/bench/_synthetic-pdd.js';

/** The shared seeded uniform stream (mulberry32, common practice), so every data set is reproducible. */
export { seededUniform as rng };

/** Shared with the diff/locate benchmark (src/bench/_synthetic-pdd.ts). */
export { amdOf, noisyCopy, type SyntheticPdd } from '../src/bench/_synthetic-pdd.js';

/** A random PDD: `n` rows of k ascending distances starting near `start` Å. */
export function randomPdd(r: () => number, k: number, n: number, start: number): SyntheticPdd {
  const rows: number[] = [];
  for (let i = 0; i < n; i++) {
    let x = start + r() * 0.5;
    for (let j = 0; j < k; j++) {
      rows.push(x);
      x += 0.05 + r() * 0.4;
    }
  }
  const raw = Array.from({ length: n }, () => 0.5 + r());
  const sum = raw.reduce((s, w) => s + w, 0);
  return { rows, weights: raw.map((w) => w / sum) };
}

export function amdLinf(a: number[], b: number[]): number {
  let m = 0;
  for (let j = 0; j < a.length; j++) m = Math.max(m, Math.abs(a[j] - b[j]));
  return m;
}

export interface SyntheticStructure {
  id: string;
  pdd: SyntheticPdd;
  energy: number | null;
  densityGPerCm3: number;
  /** Cell as read and atoms compared (default: no cell, 40 atoms), for locate's volume per atom. */
  cell?: StructureRow['cell'];
  atoms?: number;
  /** Reduced formula of the compared points; default C4H4NO, the invented formula below reduced. */
  composition?: string | null;
}

/** A landscape.json-shaped object whose kept structures are exactly `kept` (no duplicates), in that input order. */
export function landscapeOf(kept: SyntheticStructure[], k: number, params: Partial<SiftParameters> = {}): Landscape {
  const energies = kept.map((s) => s.energy).filter((e): e is number => e !== null);
  const lowest = energies.length ? Math.min(...energies) : null;
  const structures: StructureRow[] = kept.map((s, i) => ({
    index: i, id: s.id, source: `invented.cif#${s.id}`, file: 'invented.cif', block: s.id, line: 1 + 50 * i,
    status: 'kept', reason: '', energy: s.energy, energyRel: s.energy === null || lowest === null ? null : s.energy - lowest,
    densityGPerCm3: s.densityGPerCm3, atoms: s.atoms ?? 40, spaceGroup: 'P21/c', symmetry: null, cell: s.cell ?? null, z: 4, zPrime: 1, formulas: ['C8H8N2O'], composition: s.composition === undefined ? 'C4H4NO' : s.composition, flags: [], otherChemistryIndex: null, otherChemistry: null, otherComposition: null, otherChemistryDistance: null, energyOffset: null, flatPartnerIndices: [], flatPartners: [], flatPartnerDistance: null,
    keptIndex: i, duplicateOf: null, distanceToKept: 0, family: -1, nearestIndex: null, nearest: null,
    nearestDistance: null, nnDistance: null, members: 1, writtenIn: [], notes: [],
  }));
  const order = structures.map((s) => s.index);
  if (lowest !== null) order.sort((x, y) => (structures[x].energy ?? Infinity) - (structures[y].energy ?? Infinity) || x - y);
  const parameters: SiftParameters = {
    k, hydrogens: 'keep', toleranceAngstrom: 0.05, symmetryToleranceAngstrom: 0.06, toleranceMode: 'given', elementCheck: true, energyMismatch: 1, flatEnergy: 0.01, flatDensityGPerCm3: 0.002, minFamilySize: 3, minSamples: 3, energyWindow: null,
    energyUnit: 'kJ/mol', energyBasis: 'molecule', neighbours: 5, inputs: ['invented.cif'], energiesFile: null, energyItem: null, ...params,
  };
  return {
    format: 'polysift-landscape', formatVersion: 1, tool: { name: 'polysift', version: '0.1.0' },
    run: { createdAt: '2026-01-01T00:00:00Z', timingsSeconds: {} }, parameters,
    counts: { input: kept.length, kept: kept.length, duplicate: 0, rejected: 0, outsideWindow: 0 },
    flagCounts: { otherChemistryPairs: 0, otherChemistry: 0, energyMismatch: 0, flatMinimumPairs: 0, flatMinimum: 0 },
    toleranceChoice: null,
    lowestEnergy: lowest, structures, kept: order, edges: [], families: [], embedding: null,
    invariants: {
      k, hydrogens: parameters.hydrogens,
      kept: kept.map((s, i) => ({ index: i, amd: amdOf(s.pdd, k), pddWeights: s.pdd.weights, pddRows: s.pdd.rows })),
    },
    convergence: null,
  };
}

/**
 * Two invented runs with a known overlap: `shared` structures appear in both (B's copy with row noise ≤ noise Å
 * and a shifted energy), `onlyA`/`onlyB` in one run only. Every two distinct structures have AMD L-infinity
 * distance > `gap` Å. Input order within each run is shuffled.
 */
export function pairedRuns(seed: number, k: number, shared: number, onlyA: number, onlyB: number, noise: number, gap: number) {
  const r = seededUniform(seed);
  const distinct: SyntheticPdd[] = [];
  const amds: number[][] = [];
  while (distinct.length < shared + onlyA + onlyB) {
    const p = randomPdd(r, k, 1 + Math.floor(r() * 4), 1 + r() * 3);
    const a = amdOf(p, k);
    if (amds.every((b) => amdLinf(a, b) > gap)) {
      distinct.push(p);
      amds.push(a);
    }
  }
  const A: SyntheticStructure[] = [];
  const B: SyntheticStructure[] = [];
  const truth = new Map<string, string>(); // id in A -> id in B for shared structures
  for (let s = 0; s < shared; s++) {
    const e = -120 + r() * 25;
    const dens = 1.2 + r() * 0.3;
    A.push({ id: `a-shared-${s}`, pdd: distinct[s], energy: e, densityGPerCm3: dens });
    B.push({ id: `b-shared-${s}`, pdd: noisyCopy(r, distinct[s], k, noise), energy: e + 3 + (r() - 0.5) * 4, densityGPerCm3: dens + (r() - 0.5) * 0.01 });
    truth.set(`a-shared-${s}`, `b-shared-${s}`);
  }
  for (let s = 0; s < onlyA; s++) A.push({ id: `a-only-${s}`, pdd: distinct[shared + s], energy: -120 + r() * 25, densityGPerCm3: 1.2 + r() * 0.3 });
  for (let s = 0; s < onlyB; s++) B.push({ id: `b-only-${s}`, pdd: distinct[shared + onlyA + s], energy: -117 + r() * 25, densityGPerCm3: 1.2 + r() * 0.3 });
  shuffle(r, A);
  shuffle(r, B);
  return { A, B, truth };
}

function shuffle<T>(r: () => number, xs: T[]): void {
  for (let i = xs.length - 1; i > 0; i--) {
    const j = Math.floor(r() * (i + 1));
    [xs[i], xs[j]] = [xs[j], xs[i]];
  }
}
