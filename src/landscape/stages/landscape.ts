// Stage "landscape": the rows, kept structures, edges, families, metric map, kept invariants and convergence
// curve as the landscape.json contract (src/landscape/schema.ts) has them, every number rounded once here.
import type { KeptInvariants, Landscape, StructureRow } from '../schema.js';
import { convergenceCurve, defaultWindows } from '../convergence.js';
import { VERSION } from '../../version.js';
import { familiesOf } from './families.js';
import { round6, roundTo } from './round.js';
import { writtenInByKept } from '../written-in.js';
import type { SiftState } from './state.js';

export function buildLandscape(s: SiftState, timingsSeconds: Record<string, number>): Landscape {
  const { items, keptLocal, params } = s;
  const rows = s.work.map((w) => roundRow(w.row));
  for (const [k, list] of writtenInByKept(rows)) if (rows[k].status === 'kept') rows[k].writtenIn = list;
  const counts = { input: rows.length, kept: 0, duplicate: 0, rejected: 0, outsideWindow: 0 };
  for (const r of rows) {
    if (r.status === 'kept') counts.kept++;
    else if (r.status === 'duplicate') counts.duplicate++;
    else if (r.status === 'rejected') counts.rejected++;
    else counts.outsideWindow++;
  }
  const invariants: KeptInvariants[] = keptLocal.map((p) => ({
    index: items[p].row.index,
    amd: Array.from(items[p].amd!, (x) => round6(x)),
    pddWeights: Array.from(items[p].pdd!.weights, (x) => roundTo(x, 12)),
    pddRows: Array.from(items[p].pdd!.rows, (x) => round6(x)),
  }));
  const landscape: Landscape = {
    format: 'polysift-landscape',
    formatVersion: 1,
    tool: { name: 'polysift', version: VERSION },
    run: { createdAt: new Date().toISOString(), timingsSeconds },
    parameters: params,
    counts,
    flagCounts: { ...s.flagCounts },
    toleranceChoice: s.toleranceChoice && {
      ...s.toleranceChoice,
      gapLowAngstrom: s.toleranceChoice.gapLowAngstrom === null ? null : round6(s.toleranceChoice.gapLowAngstrom),
      gapHighAngstrom: s.toleranceChoice.gapHighAngstrom === null ? null : round6(s.toleranceChoice.gapHighAngstrom),
      gapDecades: s.toleranceChoice.gapDecades === null ? null : round6(s.toleranceChoice.gapDecades),
      edgeLengthsAngstrom: s.toleranceChoice.edgeLengthsAngstrom.map(round6),
      closestKeptAngstrom: closestKept(rows),
    },
    lowestEnergy: s.lowest === null ? null : round6(s.lowest),
    structures: rows,
    kept: keptLocal.map((p) => items[p].row.index),
    edges: s.edges.map(([a, b, d]) => [a, b, round6(d)]),
    families: familiesOf(s),
    embedding: s.embedding,
    invariants: { k: params.k, hydrogens: params.hydrogens, kept: invariants },
    convergence: null,
  };
  landscape.convergence = convergenceCurve(rows, defaultWindows(params.energyUnit), { energyUnit: params.energyUnit });
  return landscape;
}

/** The smallest EMD between two kept structures (their nearest kept neighbours), or null. */
function closestKept(rows: StructureRow[]): number | null {
  let d: number | null = null;
  for (const r of rows) if (r.status === 'kept' && r.nearestDistance !== null && (d === null || r.nearestDistance < d)) d = r.nearestDistance;
  return d;
}

/** Output rounding of a row: Å, Å³, degrees, g/cm3 and energies to 6 decimals. */
function roundRow(r: StructureRow): StructureRow {
  const o = (x: number | null) => (x === null ? null : round6(x));
  return {
    ...r,
    energy: o(r.energy),
    energyRel: o(r.energyRel),
    densityGPerCm3: o(r.densityGPerCm3),
    cell:
      r.cell === null
        ? null
        : { a: round6(r.cell.a), b: round6(r.cell.b), c: round6(r.cell.c), alpha: round6(r.cell.alpha), beta: round6(r.cell.beta), gamma: round6(r.cell.gamma), volume: o(r.cell.volume) },
    symmetry: r.symmetry === null ? null : { ...r.symmetry, deviationAngstrom: o(r.symmetry.deviationAngstrom), declaredZPrime: o(r.symmetry.declaredZPrime) },
    z: o(r.z),
    zPrime: o(r.zPrime),
    distanceToKept: o(r.distanceToKept),
    nearestDistance: o(r.nearestDistance),
    nnDistance: o(r.nnDistance),
    otherChemistryDistance: o(r.otherChemistryDistance),
    energyOffset: o(r.energyOffset),
    flatPartnerDistance: o(r.flatPartnerDistance),
    flags: r.flags.slice(),
    flatPartnerIndices: r.flatPartnerIndices.slice(),
    flatPartners: r.flatPartners.slice(),
  };
}
