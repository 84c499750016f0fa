// Benchmark of `diff` and `locate` on invented runs: random PDDs (k = 100, 1–4 rows) standing for kept
// structures, with a share of them present in both runs (row noise ≤ 0.004 Å). Prints wall time, EMD evaluations
// against the brute-force pair count, and the matching time. Figures depend on the machine and its load.
import { diffLandscapes } from '../landscape/diff.js';
import { locateReferences, type ReferenceInvariants } from '../landscape/locate.js';
import { matchOneToOne } from '../landscape/matching.js';
import { crossNeighbours, toPdd } from '../landscape/cross.js';
import type { Pdd } from '../types.js';
import type { Landscape, StructureRow } from '../landscape/schema.js';
import { seededUniform } from '../demo/prng.js';
import { amdOf, noisyCopy, type SyntheticPdd as RawPdd } from './_synthetic-pdd.js';

const K = 100;

export async function run(): Promise<void> {
  for (const [kept, shared] of [[300, 240], [1000, 750]] as const) {
    const r = seededUniform(kept);
    const base = Array.from({ length: kept * 2 - shared }, () => randomPdd(r));
    const a = base.slice(0, kept);
    const b = [...base.slice(0, shared).map((p) => noisy(r, p)), ...base.slice(kept)];
    const la = landscape(a, r);
    const lb = landscape(b, r);
    let t = performance.now();
    const d = await diffLandscapes(la, lb, 'A', 'B');
    const diffMs = performance.now() - t;
    // The search alone, to report its EMD count.
    const inv = (l: Landscape) => l.kept.map((i) => l.invariants.kept[i]);
    t = performance.now();
    const cross = await crossNeighbours(inv(la).map((e) => toPdd(e, K)), inv(la).map((e) => e.amd), inv(lb).map((e) => toPdd(e, K)), inv(lb).map((e) => e.amd), 0.05, undefined, 2);
    const searchMs = performance.now() - t;
    t = performance.now();
    matchOneToOne(kept, kept, cross.pairs);
    const matchMs = performance.now() - t;
    process.stdout.write(
      `diff ${kept} × ${kept} kept (k = ${K}), ${shared} shared: ${diffMs.toFixed(0)} ms in all; found in both ${d.counts.both}; ` +
        `one cross search ${searchMs.toFixed(0)} ms with ${cross.emdEvaluations} EMDs of ${kept * kept} pairs ` +
        `(${((100 * cross.emdEvaluations) / (kept * kept)).toFixed(2)}%); matching ${matchMs.toFixed(1)} ms\n`,
    );
    const refs: ReferenceInvariants[] = a.slice(0, 20).map((p, i) => {
      const q = noisy(r, p);
      return { id: `ref-${i}`, source: `ref.cif#ref-${i}`, pdd: asPdd(q), amd: amdOf(q, K), composition: 'C8H8N2O', densityGPerCm3: null, spaceGroup: null, volumePerAtomA3: null, zPrime: null, notes: [] };
    });
    t = performance.now();
    await locateReferences(lb, 'B', refs);
    process.stdout.write(`locate 20 references in ${kept} kept: ${(performance.now() - t).toFixed(0)} ms\n`);
  }
}

function randomPdd(r: () => number): RawPdd {
  const n = 1 + Math.floor(r() * 4);
  const rows: number[] = [];
  for (let i = 0; i < n; i++) {
    let x = 1 + r() * 2.5;
    for (let j = 0; j < K; j++) {
      rows.push(x);
      x += 0.02 + r() * 0.12;
    }
  }
  const w = Array.from({ length: n }, () => 0.5 + r());
  const s = w.reduce((p, q) => p + q, 0);
  return { rows, weights: w.map((x) => x / s) };
}

/** A copy of `p` with row noise ≤ 0.004 Å: the same structure found again in the other run. */
function noisy(r: () => number, p: RawPdd): RawPdd {
  return noisyCopy(r, p, K, 0.004);
}

function asPdd(p: RawPdd): Pdd {
  return { k: K, rows: Float64Array.from(p.rows), weights: Float64Array.from(p.weights) };
}

function landscape(pdds: RawPdd[], r: () => number): Landscape {
  const structures: StructureRow[] = pdds.map((_p, i) => ({
    index: i, id: `s${i}`, source: `bench.cif#s${i}`, file: 'bench.cif', block: `s${i}`, line: 1, status: 'kept', reason: '',
    energy: -100 + r() * 30, energyRel: null, densityGPerCm3: 1.2 + r() * 0.3, atoms: 40, spaceGroup: null, symmetry: null, cell: null, z: null, zPrime: null,
    formulas: [], composition: 'C8H8N2O', flags: [], otherChemistryIndex: null, otherChemistry: null, otherComposition: null, otherChemistryDistance: null, energyOffset: null, flatPartnerIndices: [], flatPartners: [], flatPartnerDistance: null, keptIndex: i, duplicateOf: null, distanceToKept: 0, family: -1, nearestIndex: null, nearest: null,
    nearestDistance: null, nnDistance: null, members: 1, writtenIn: [], notes: [],
  }));
  const low = Math.min(...structures.map((s) => s.energy as number));
  for (const s of structures) s.energyRel = (s.energy as number) - low;
  return {
    format: 'polysift-landscape', formatVersion: 1, tool: { name: 'polysift', version: 'bench' },
    run: { createdAt: '', timingsSeconds: {} },
    parameters: { k: K, hydrogens: 'keep', toleranceAngstrom: 0.05, symmetryToleranceAngstrom: 0.06, toleranceMode: 'given', elementCheck: true, energyMismatch: 1, flatEnergy: 0.01, flatDensityGPerCm3: 0.002, minFamilySize: 5, minSamples: 5, energyWindow: null, energyUnit: 'kJ/mol', energyBasis: 'molecule', neighbours: 5, inputs: [], energiesFile: null, energyItem: null },
    counts: { input: pdds.length, kept: pdds.length, duplicate: 0, rejected: 0, outsideWindow: 0 },
    flagCounts: { otherChemistryPairs: 0, otherChemistry: 0, energyMismatch: 0, flatMinimumPairs: 0, flatMinimum: 0 },
    toleranceChoice: null,
    lowestEnergy: low, structures, kept: structures.map((s) => s.index), edges: [], families: [], embedding: null,
    invariants: { k: K, hydrogens: 'keep', kept: pdds.map((p, i) => ({ index: i, amd: amdOf(p, K), pddWeights: p.weights, pddRows: p.rows })) },
    convergence: null,
  };
}

