// Compare the kept structures of two sift runs (two search methods, or one run before and after
// re-optimisation), working only from the invariants stored in each run's landscape.json.
//
// Steps:
// 1. Refuse runs whose invariants are not comparable (different PDD depth k or hydrogen policy).
// 2. For every kept structure, the exact nearest kept structure of the other run under EMD, and every
//    cross-run pair within the tolerance (AMD lower bound first, exact EMD only where the bound allows).
// 3. A one-to-one matching of the within-tolerance pairs: most pairs, then least total EMD (matching.ts).
// 4. Matched pairs are "in both"; the rest "only in A" / "only in B". For matched pairs: energy rank in each
//    run, energy and density shifts, and Spearman's rank correlation of the energies over the pairs.
import { matchOneToOne } from './matching.js';
import { energyRanks, ensureUniqueIds, invariantsByIndex } from './load.js';
import { crossNeighbours, toPdd, type CrossResult } from './cross.js';
import { spearman } from '../cluster/stats.js';
import type { EnergyUnit, Landscape } from './schema.js';
import { FLAG_CODES, isFlatPair } from './flags.js';

/** Nearest kept structures of the other run looked at per structure for a flat minimum split across the runs. */
const FLAT_CANDIDATES = 5;

export interface DiffOptions {
  /** EMD (Å) within which two structures count as the same; default the larger of the runs' duplicate tolerances. */
  toleranceAngstrom?: number;
  /** Worker threads for the EMD work (default: available cores). */
  threads?: number;
}

export interface RunSummary {
  label: 'A' | 'B';
  path: string;
  inputs: string[];
  kept: number;
  energyUnit: EnergyUnit;
  toleranceAngstrom: number;
  createdAt: string;
}

export type Presence = 'both' | 'only-A' | 'only-B';

/** One kept structure of either run, with where it stands against the other run. */
export interface DiffStructure {
  run: 'A' | 'B';
  /** Structure index in its own landscape. */
  index: number;
  id: string;
  source: string;
  presence: Presence;
  /** Energy rank among the kept structures of its run, 1 = lowest (null without energy). */
  rank: number | null;
  /** Energy above its run's lowest, in the diff's energy unit (run A's). */
  energyRel: number | null;
  densityGPerCm3: number | null;
  /** The space group the structure has (detected, or declared where detection was not trusted) and its Z'. */
  spaceGroup: string | null;
  zPrime: number | null;
  /** Matched partner in the other run (structure index and id) and their EMD (Å). */
  partnerIndex: number | null;
  partner: string | null;
  partnerDistance: number | null;
  /** Exact nearest kept structure of the other run and its EMD (Å); null when the other run keeps none. */
  nearestOtherIndex: number | null;
  nearestOther: string | null;
  nearestOtherDistance: number | null;
  /** Reduced formula of the compared points (null from landscapes written before compositions were kept). */
  composition: string | null;
  /** Short codes (FLAG_CODES): other-chemistry (the nearest of the other run lies within the tolerance but has
   * another composition, so it is never a match), flat-minimum (unmatched, and an unmatched structure of the other
   * run just beyond the tolerance agrees in energy and density: likely one minimum split across the runs). */
  flags: string[];
  /** For flat-minimum: the other run's structure (index and id) and the EMD (Å). */
  flatPartnerIndex: number | null;
  flatPartner: string | null;
  flatPartnerDistance: number | null;
}

export interface MatchedPair {
  a: number;
  b: number;
  idA: string;
  idB: string;
  emdAngstrom: number;
  rankA: number | null;
  rankB: number | null;
  /** Energies above each run's lowest (diff unit), and B minus A. */
  energyRelA: number | null;
  energyRelB: number | null;
  energyRelShift: number | null;
  /** Absolute energies B minus A (diff unit): meaningful only when both runs use the same energy model. */
  energyShift: number | null;
  densityA: number | null;
  densityB: number | null;
  densityShiftGPerCm3: number | null;
  /** Whether each side's exact nearest in the other run is its partner. */
  mutualNearest: boolean;
}

export interface LandscapeDiff {
  format: 'polysift-diff';
  formatVersion: 1;
  runs: [RunSummary, RunSummary];
  k: number;
  hydrogens: 'keep' | 'drop';
  toleranceAngstrom: number;
  energyUnit: EnergyUnit;
  matching: { objective: string; method: string };
  counts: { both: number; onlyA: number; onlyB: number; keptA: number; keptB: number; flatSplit: number; otherChemistry: number };
  /** Spearman's rank correlation of energies over matched pairs with energies in both runs (null when under 2 such pairs or constant). */
  spearman: number | null;
  spearmanPairs: number;
  pairs: MatchedPair[];
  structures: DiffStructure[];
  notes: string[];
}

/** The phrase a user sees when two runs cannot be compared. */
export function comparabilityProblem(a: Landscape, b: Landscape, labelA = 'run A', labelB = 'run B'): string | null {
  const problems: string[] = [];
  if (a.invariants.k !== b.invariants.k) problems.push(`PDD depth k = ${a.invariants.k} in ${labelA} but k = ${b.invariants.k} in ${labelB}`);
  if (a.invariants.hydrogens !== b.invariants.hydrogens) {
    problems.push(`hydrogens "${a.invariants.hydrogens}" in ${labelA} but "${b.invariants.hydrogens}" in ${labelB}`);
  }
  if (problems.length === 0) return null;
  return `the runs were sifted with different invariant settings (${problems.join('; ')}), so their EMDs are not comparable; sift both with the same -k and --hydrogens`;
}

/** Compare two loaded landscapes (`pathA`/`pathB` are only reported). */
export async function diffLandscapes(
  a: Landscape,
  b: Landscape,
  pathA: string,
  pathB: string,
  options: DiffOptions = {},
): Promise<LandscapeDiff> {
  const problem = comparabilityProblem(a, b, pathA, pathB);
  if (problem) throw new Error(problem);
  const tol = options.toleranceAngstrom ?? Math.max(a.parameters.toleranceAngstrom, b.parameters.toleranceAngstrom);
  if (!Number.isFinite(tol) || tol < 0) throw new Error(`the matching tolerance must be a non-negative number of Å, got ${tol}`);
  const notes: string[] = [];
  for (const [label, l] of [['Run A', a], ['Run B', b]] as const) {
    const note = ensureUniqueIds(l, label);
    if (note) notes.push(note);
  }
  if (options.toleranceAngstrom === undefined && a.parameters.toleranceAngstrom !== b.parameters.toleranceAngstrom) {
    notes.push(`The runs used different duplicate tolerances (${a.parameters.toleranceAngstrom} Å and ${b.parameters.toleranceAngstrom} Å); the larger one is used for matching.`);
  }
  const unit = a.parameters.energyUnit;
  const scaleB = energyScale(b.parameters.energyUnit, unit);
  if (scaleB !== 1) notes.push(`Run B's energies (${b.parameters.energyUnit}) are converted to ${unit}.`);

  for (const [label, l] of [['A', a], ['B', b]] as const) {
    if (l.kept.length > 0 && l.kept.every((i) => l.structures[i].energy === null)) {
      notes.push(`Run ${label} has no energies, so its energy ranks, the shifts and the rank correlation are left empty.`);
    }
  }
  const keptA = a.kept;
  const keptB = b.kept;
  const invA = invariantsByIndex(a);
  const invB = invariantsByIndex(b);
  const pddsA = keptA.map((i) => toPdd(invA.get(i)!, a.invariants.k));
  const pddsB = keptB.map((i) => toPdd(invB.get(i)!, b.invariants.k));
  const amdA = keptA.map((i) => invA.get(i)!.amd);
  const amdB = keptB.map((i) => invB.get(i)!.amd);

  // Exact nearest across (a few, for flat minima), and all within-tolerance pairs, in both directions.
  const ab = await crossNeighbours(pddsA, amdA, pddsB, amdB, tol, options.threads, FLAT_CANDIDATES);
  const ba = await crossNeighbours(pddsB, amdB, pddsA, amdA, tol, options.threads, FLAT_CANDIDATES);
  // Structures of different composition are never the same crystal, however close their geometry.
  const compA = keptA.map((i) => a.structures[i].composition);
  const compB = keptB.map((i) => b.structures[i].composition);
  const sameChemistry = (x: number, y: number) => compA[x] === null || compB[y] === null || compA[x] === compB[y];
  if (compA.some((c) => c === null) || compB.some((c) => c === null)) {
    notes.push('One run was sifted before compositions were recorded, so structures of different composition could not be kept apart; sift it again to compare chemistry.');
  }
  const keep: number[] = [];
  for (let e = 0; e < ab.pairs.a.length; e++) if (sameChemistry(ab.pairs.a[e], ab.pairs.b[e])) keep.push(e);
  const candidates = {
    a: Int32Array.from(keep, (e) => ab.pairs.a[e]),
    b: Int32Array.from(keep, (e) => ab.pairs.b[e]),
    cost: Float64Array.from(keep, (e) => ab.pairs.cost[e]),
  };
  const matching = matchOneToOne(keptA.length, keptB.length, candidates);

  const ranksA = energyRanks(a);
  const ranksB = energyRanks(b);

  const pairs: MatchedPair[] = [];
  for (const p of matching.pairs) {
    const sa = a.structures[keptA[p.a]];
    const sb = b.structures[keptB[p.b]];
    const eA = sa.energy;
    const eB = sb.energy === null ? null : sb.energy * scaleB;
    const rA = sa.energyRel;
    const rB = sb.energyRel === null ? null : sb.energyRel * scaleB;
    pairs.push({
      a: sa.index, b: sb.index, idA: sa.id, idB: sb.id, emdAngstrom: p.cost,
      rankA: ranksA.get(sa.index) ?? null, rankB: ranksB.get(sb.index) ?? null,
      energyRelA: rA, energyRelB: rB, energyRelShift: rA !== null && rB !== null ? rB - rA : null,
      energyShift: eA !== null && eB !== null ? eB - eA : null,
      densityA: sa.densityGPerCm3, densityB: sb.densityGPerCm3,
      densityShiftGPerCm3: sa.densityGPerCm3 !== null && sb.densityGPerCm3 !== null ? sb.densityGPerCm3 - sa.densityGPerCm3 : null,
      mutualNearest: ab.nearest[p.a] === p.b && ba.nearest[p.b] === p.a,
    });
  }
  // Pairs in order of run A's energy rank (input order without energies).
  pairs.sort((x, y) => (x.rankA ?? Infinity) - (y.rankA ?? Infinity) || x.a - y.a);

  const structures: DiffStructure[] = [];
  keptA.forEach((i, j) => {
    const s = a.structures[i];
    const partner = matching.partnerOfA[j];
    const near = ab.nearest[j];
    structures.push({
      run: 'A', index: i, id: s.id, source: s.source, presence: partner >= 0 ? 'both' : 'only-A',
      rank: ranksA.get(i) ?? null, energyRel: s.energyRel, densityGPerCm3: s.densityGPerCm3, spaceGroup: s.spaceGroup, zPrime: s.zPrime ?? null,
      partnerIndex: partner >= 0 ? keptB[partner] : null, partner: partner >= 0 ? b.structures[keptB[partner]].id : null,
      partnerDistance: partner >= 0 ? pairCost(matching.pairs, j) : null,
      nearestOtherIndex: near >= 0 ? keptB[near] : null, nearestOther: near >= 0 ? b.structures[keptB[near]].id : null,
      nearestOtherDistance: near >= 0 ? ab.nearestDistance[j] : null,
      composition: compA[j], flags: [], flatPartnerIndex: null, flatPartner: null, flatPartnerDistance: null,
    });
  });
  keptB.forEach((i, j) => {
    const s = b.structures[i];
    const partner = matching.partnerOfB[j];
    const near = ba.nearest[j];
    structures.push({
      run: 'B', index: i, id: s.id, source: s.source, presence: partner >= 0 ? 'both' : 'only-B',
      rank: ranksB.get(i) ?? null, energyRel: s.energyRel === null ? null : s.energyRel * scaleB,
      densityGPerCm3: s.densityGPerCm3, spaceGroup: s.spaceGroup, zPrime: s.zPrime ?? null,
      partnerIndex: partner >= 0 ? keptA[partner] : null, partner: partner >= 0 ? a.structures[keptA[partner]].id : null,
      partnerDistance: partner >= 0 ? pairCost(matching.pairs, partner) : null,
      nearestOtherIndex: near >= 0 ? keptA[near] : null, nearestOther: near >= 0 ? a.structures[keptA[near]].id : null,
      nearestOtherDistance: near >= 0 ? ba.nearestDistance[j] : null,
      composition: compB[j], flags: [], flatPartnerIndex: null, flatPartner: null, flatPartnerDistance: null,
    });
  });
  const flagged = flagAcrossRuns(structures, keptA.length, ab, ba, matching, {
    sameChemistry, tol, scaleB,
    flat: { toleranceAngstrom: tol, flatEnergy: a.parameters.flatEnergy, flatDensityGPerCm3: a.parameters.flatDensityGPerCm3 },
    energyA: keptA.map((i) => a.structures[i].energy), energyB: keptB.map((i) => b.structures[i].energy),
    densityA: keptA.map((i) => a.structures[i].densityGPerCm3), densityB: keptB.map((i) => b.structures[i].densityGPerCm3),
  });
  if (flagged.flatSplit > 0) {
    notes.push(
      `${flagged.flatSplit} pair(s) split across the runs (one only in A, one only in B) lie just beyond the tolerance with the same energy and density ` +
        `(flag ${FLAG_CODES.flatMinimum}): likely one minimum on a flat energy surface, not a structure one run missed.`,
    );
  }
  if (flagged.otherChemistry > 0) {
    notes.push(`${flagged.otherChemistry} structure(s) have a structure of another composition in the other run within the tolerance (flag ${FLAG_CODES.otherChemistry}); they are never matched.`);
  }

  // Spearman's rank correlation of the energies of matched pairs (both energies known).
  const withE = pairs.filter((p) => p.energyRelA !== null && p.energyRelB !== null);
  let rho: number | null = null;
  if (withE.length >= 2) {
    const r = spearman(withE.map((p) => p.energyRelA as number), withE.map((p) => p.energyRelB as number));
    rho = Number.isFinite(r) ? r : null;
  }
  if (withE.length < pairs.length) notes.push(`${pairs.length - withE.length} matched pairs lack an energy in one run and are left out of the rank correlation.`);

  const both = matching.pairs.length;
  return {
    format: 'polysift-diff',
    formatVersion: 1,
    runs: [summary('A', pathA, a), summary('B', pathB, b)],
    k: a.invariants.k,
    hydrogens: a.invariants.hydrogens,
    toleranceAngstrom: tol,
    energyUnit: unit,
    matching: {
      objective: 'one-to-one pairs with EMD within the tolerance: as many pairs as possible, then the least total EMD',
      method: 'Hungarian algorithm (Kuhn 1955; Munkres 1957) on each connected group of within-tolerance pairs',
    },
    counts: {
      both, onlyA: keptA.length - both, onlyB: keptB.length - both, keptA: keptA.length, keptB: keptB.length,
      flatSplit: flagged.flatSplit, otherChemistry: flagged.otherChemistry,
    },
    spearman: rho,
    spearmanPairs: withE.length,
    pairs,
    structures,
    notes,
  };
}

/**
 * Flags of the diff's structures (A's first, then B's): other-chemistry when the nearest of the other run lies
 * within the tolerance with another composition; flat-minimum when an unmatched structure has an unmatched one
 * of the other run among its nearest few that is just beyond the tolerance with the same energy (absolute, in
 * A's unit: both runs must use one energy model) and density, by run A's flat-minimum thresholds.
 */
function flagAcrossRuns(
  structures: DiffStructure[],
  nA: number,
  ab: CrossResult,
  ba: CrossResult,
  matching: { partnerOfA: Int32Array; partnerOfB: Int32Array },
  o: {
    sameChemistry: (x: number, y: number) => boolean;
    tol: number;
    scaleB: number;
    flat: { toleranceAngstrom: number; flatEnergy: number; flatDensityGPerCm3: number };
    energyA: Array<number | null>;
    energyB: Array<number | null>;
    densityA: Array<number | null>;
    densityB: Array<number | null>;
  },
): { flatSplit: number; otherChemistry: number } {
  let flatSplit = 0;
  let otherChemistry = 0;
  const eB = o.energyB.map((e) => (e === null ? null : e * o.scaleB));
  for (const [side, cross, own, other] of [
    ['A', ab, matching.partnerOfA, matching.partnerOfB],
    ['B', ba, matching.partnerOfB, matching.partnerOfA],
  ] as const) {
    const n = own.length;
    for (let j = 0; j < n; j++) {
      const st = structures[side === 'A' ? j : nA + j];
      const near = cross.nearest[j];
      const chem = (x: number) => (side === 'A' ? o.sameChemistry(j, x) : o.sameChemistry(x, j));
      if (near >= 0 && cross.nearestDistance[j] <= o.tol && !chem(near)) {
        st.flags.push(FLAG_CODES.otherChemistry);
        otherChemistry++;
      }
      if (own[j] >= 0) continue;
      for (let c = 0; c < cross.found[j]; c++) {
        const t = cross.neighbours[j * cross.count + c];
        const d = cross.neighbourDistance[j * cross.count + c];
        if (other[t] >= 0 || !chem(t)) continue;
        const [ea, eb, da, db] = side === 'A' ? [o.energyA[j], eB[t], o.densityA[j], o.densityB[t]] : [eB[j], o.energyA[t], o.densityB[j], o.densityA[t]];
        if (!isFlatPair(d, ea, eb, da, db, o.flat)) continue;
        const partner = structures[side === 'A' ? nA + t : t];
        st.flags.push(FLAG_CODES.flatMinimum);
        st.flatPartnerIndex = partner.index;
        st.flatPartner = partner.id;
        st.flatPartnerDistance = d;
        if (side === 'A') flatSplit++;
        break;
      }
    }
  }
  return { flatSplit, otherChemistry };
}

/** Factor taking energies in `from` into `to` (kJ/mol; kcal = 4.184 kJ, NIST SP 811; eV·N_A = 96.485 332 12 kJ/mol, CODATA 2018). */
export function energyScale(from: EnergyUnit, to: EnergyUnit): number {
  const kj: Record<EnergyUnit, number> = { 'kJ/mol': 1, 'kcal/mol': 4.184, eV: 96.48533212 };
  return kj[from] / kj[to];
}

function pairCost(pairs: Array<{ a: number; b: number; cost: number }>, aLocal: number): number | null {
  // pairs are sorted by a (matching.ts); binary search by the local A index
  let lo = 0;
  let hi = pairs.length - 1;
  while (lo <= hi) {
    const mid = (lo + hi) >> 1;
    if (pairs[mid].a === aLocal) return pairs[mid].cost;
    if (pairs[mid].a < aLocal) lo = mid + 1;
    else hi = mid - 1;
  }
  return null;
}

function summary(label: 'A' | 'B', path: string, l: Landscape): RunSummary {
  return {
    label, path, inputs: l.parameters.inputs, kept: l.kept.length, energyUnit: l.parameters.energyUnit,
    toleranceAngstrom: l.parameters.toleranceAngstrom, createdAt: l.run.createdAt,
  };
}
