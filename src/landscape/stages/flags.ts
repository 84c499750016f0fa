// Stage "flags": what deserves a closer look, per row and counted for the summary (codes and thresholds in
// src/landscape/flags.ts). Nothing here changes which structures are kept.
//  - other chemistry: the nearest other structure within the tolerance has another composition, or the same
//    composition with atoms of other elements at the same places (pairs the collapse's element check refused);
//  - energy mismatch: a member of a duplicate group whose energy lies further than the threshold from the
//    group's median energy (the lower middle value for even sizes, so for a pair it is the kept structure's);
//  - flat minimum: two kept structures of one composition just beyond the tolerance (within flatWindowAngstrom)
//    whose energies and densities agree within the flat-minimum thresholds.
import { emd } from '../../metric/emd.js';
import { FLAG_CODES, isFlatPair } from '../flags.js';
import { pairKey } from './duplicates.js';
import type { SiftState } from './state.js';
import type { FlagCounts } from '../schema.js';

export async function flagsStage(s: SiftState): Promise<void> {
  const counts: FlagCounts = { otherChemistryPairs: 0, otherChemistry: 0, energyMismatch: 0, flatMinimumPairs: 0, flatMinimum: 0 };
  otherChemistry(s, counts);
  energyMismatch(s, counts);
  flatMinima(s, counts);
  s.flagCounts = counts;
  const tol = s.params.toleranceAngstrom;
  if (counts.otherChemistryPairs > 0)
    s.messages.push(
      `${counts.otherChemistryPairs} pair(s) of structures within ${tol} Å have different chemistry (same geometry, other elements; never merged): ` +
        `${counts.otherChemistry} row(s) flagged ${FLAG_CODES.otherChemistry}; check the data and the atom assignment`,
    );
  if (counts.energyMismatch > 0)
    s.messages.push(
      `${counts.energyMismatch} member(s) of duplicate groups lie more than ${s.params.energyMismatch} ${s.params.energyUnit} from their group's median energy ` +
        `(flag ${FLAG_CODES.energyMismatch}): an optimiser or convergence fault, or a tolerance that is too loose`,
    );
  if (counts.flatMinimumPairs > 0)
    s.messages.push(
      `${counts.flatMinimumPairs} pair(s) of kept structures are likely one minimum on a flat energy surface ` +
        `(flag ${FLAG_CODES.flatMinimum}: just beyond the tolerance, same energy and density); all are kept`,
    );
}

function otherChemistry(s: SiftState, counts: FlagCounts): void {
  const { items, params } = s;
  const close = s.close!;
  const cls = s.compositionClass;
  const n = items.length;
  const nearest = new Int32Array(n).fill(-1);
  const nearestD = new Float64Array(n).fill(Infinity);
  const consider = (a: number, b: number, d: number) => {
    for (const [x, y] of [
      [a, b],
      [b, a],
    ]) {
      if (d < nearestD[x] || (d === nearestD[x] && y < nearest[x])) {
        nearest[x] = y;
        nearestD[x] = d;
      }
    }
  };
  const seen = new Set<string>();
  for (let t = 0; t < close.i.length; t++) {
    const d = close.distances[t];
    if (!(d <= params.toleranceAngstrom) || cls[close.i[t]] === cls[close.j[t]]) continue;
    consider(close.i[t], close.j[t], d);
    seen.add(pairKey(close.i[t], close.j[t]));
  }
  for (const [a, b, d] of s.collapsed!.refused) {
    if (seen.has(pairKey(a, b))) continue;
    seen.add(pairKey(a, b));
    consider(a, b, d);
  }
  counts.otherChemistryPairs = seen.size;
  for (let p = 0; p < n; p++) {
    const q = nearest[p];
    if (q < 0) continue;
    const row = items[p].row;
    const other = items[q].row;
    row.flags.push(FLAG_CODES.otherChemistry);
    row.otherChemistryIndex = other.index;
    row.otherChemistry = other.id;
    row.otherComposition = other.composition;
    row.otherChemistryDistance = nearestD[p];
    if (cls[p] === cls[q]) {
      const e = s.elementDistances.get(pairKey(p, q));
      row.notes.push(
        `same composition as ${other.id} and EMD ${nearestD[p].toFixed(4)} Å, but atoms of other elements sit at the same places` +
          (e === undefined ? '' : ` (element-aware EMD ${e.toFixed(4)} Å)`) +
          ': not a duplicate; check the atom assignment',
      );
    }
    counts.otherChemistry++;
  }
}

function energyMismatch(s: SiftState, counts: FlagCounts): void {
  const { items, params } = s;
  const collapsed = s.collapsed!;
  const groups = new Map<number, number[]>();
  for (let p = 0; p < items.length; p++) {
    if (items[p].row.energy === null) continue;
    const k = collapsed.keptOf[p];
    const g = groups.get(k);
    if (g) g.push(p);
    else groups.set(k, [p]);
  }
  for (const g of groups.values()) {
    if (g.length < 2) continue;
    const energies = g.map((p) => items[p].row.energy as number).sort((a, b) => a - b);
    // The lower median: robust to one faulty copy, and the kept (lowest) structure's energy for a pair.
    const reference = energies[(energies.length - 1) >> 1];
    for (const p of g) {
      const row = items[p].row;
      row.energyOffset = (row.energy as number) - reference;
      if (Math.abs(row.energyOffset) > params.energyMismatch) {
        row.flags.push(FLAG_CODES.energyMismatch);
        counts.energyMismatch++;
      }
    }
  }
}

function flatMinima(s: SiftState, counts: FlagCounts): void {
  const { items, keptLocal, params } = s;
  const cls = s.compositionClass;
  // Kept structures with energy and density, by energy: candidates lie within flatEnergy of each other.
  const kept = keptLocal.filter((p) => items[p].row.energy !== null && items[p].row.densityGPerCm3 !== null);
  kept.sort((a, b) => (items[a].row.energy as number) - (items[b].row.energy as number) || a - b);
  const partners = new Map<number, Array<[number, number]>>();
  for (let x = 0; x < kept.length; x++) {
    const a = kept[x];
    const ra = items[a].row;
    for (let y = x + 1; y < kept.length; y++) {
      const b = kept[y];
      const rb = items[b].row;
      if ((rb.energy as number) - (ra.energy as number) > params.flatEnergy) break;
      if (cls[a] !== cls[b] || Math.abs((ra.densityGPerCm3 as number) - (rb.densityGPerCm3 as number)) > params.flatDensityGPerCm3) continue;
      const d = emd(items[a].pdd!, items[b].pdd!);
      if (!isFlatPair(d, ra.energy, rb.energy, ra.densityGPerCm3, rb.densityGPerCm3, params)) continue;
      counts.flatMinimumPairs++;
      for (const [u, v] of [
        [a, b],
        [b, a],
      ]) {
        const list = partners.get(u) ?? [];
        list.push([v, d]);
        partners.set(u, list);
      }
    }
  }
  for (const [p, list] of partners) {
    list.sort((x, y) => x[1] - y[1] || x[0] - y[0]);
    const row = items[p].row;
    row.flags.push(FLAG_CODES.flatMinimum);
    row.flatPartnerIndices = list.map(([q]) => items[q].row.index);
    row.flatPartners = list.map(([q]) => items[q].row.id);
    row.flatPartnerDistance = list[0][1];
    counts.flatMinimum++;
  }
}
