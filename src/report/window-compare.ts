// What energy/density windows would have made of a sifted landscape: the usual shortcut (src/demo/window-binning.ts:
// visit structures by increasing energy, each joins the first kept one within 0.5 kJ/mol AND 0.02 g/cm3) applied to
// the kept structures, which the metric already holds to be distinct (every two lie more than the duplicate
// tolerance apart). Every kept structure the windows fold into another is a distinct structure they would lose; the
// report and the demo name one such pair, with its EMD, so a reader can open both and see the difference.
import type { Landscape, StructureRow } from '../landscape/schema.js';
import { fromKjPerMol } from '../landscape/convergence.js';
import { BIN_DENSITY_G_PER_CM3, BIN_ENERGY_KJ_PER_MOL, binByWindows } from '../demo/window-binning.js';

export interface WindowPair {
  /** Structure indices: `a` the lower in energy. */
  a: number;
  b: number;
  emdAngstrom: number;
  /** EMD divided by the duplicate tolerance. */
  toleranceMultiple: number;
}

export interface WindowComparison {
  /** The windows, energy in the landscape's unit. */
  energyWindow: number;
  densityWindowGPerCm3: number;
  /** Kept structures with an energy and a density (the ones windows can sort). */
  compared: number;
  /** Groups the windows leave among them. */
  groups: number;
  /** Kept structures the windows fold into another kept structure. */
  lost: number;
  /** Pairs of kept structures joined by a neighbourhood edge (EMD known) that the windows put in one group. */
  mergedEdges: number;
  /** The pair shown to the reader (see `pickPair`), or null when no merged pair has a known EMD. */
  example: WindowPair | null;
}

/** Compare the landscape's kept structures with energy/density windows; null without energies. */
export function compareWithWindows(landscape: Landscape): WindowComparison | null {
  const rows = landscape.structures;
  const usable = landscape.kept.filter((k) => rows[k]!.energyRel !== null && rows[k]!.densityGPerCm3 !== null);
  if (usable.length === 0) return null;
  const unit = landscape.parameters.energyUnit;
  const energyWindow = fromKjPerMol(BIN_ENERGY_KJ_PER_MOL, unit);
  const energy = usable.map((k) => rows[k]!.energyRel as number);
  const density = usable.map((k) => rows[k]!.densityGPerCm3 as number);
  const label = binByWindows(energy, density, energyWindow, BIN_DENSITY_G_PER_CM3);
  const groupOf = new Map<number, number>();
  usable.forEach((k, p) => groupOf.set(k, label[p]!));
  const groups = new Set(label).size;

  const merged: WindowPair[] = [];
  const tol = landscape.parameters.toleranceAngstrom;
  for (const [i, j, d] of landscape.edges) {
    const gi = groupOf.get(i);
    if (gi === undefined || gi !== groupOf.get(j)) continue;
    const [a, b] = (rows[i]!.energyRel as number) <= (rows[j]!.energyRel as number) ? [i, j] : [j, i];
    merged.push({ a, b, emdAngstrom: d, toleranceMultiple: tol > 0 ? d / tol : Infinity });
  }
  return {
    energyWindow: Number(energyWindow.toPrecision(4)),
    densityWindowGPerCm3: BIN_DENSITY_G_PER_CM3,
    compared: usable.length,
    groups,
    lost: usable.length - groups,
    mergedEdges: merged.length,
    example: pickPair(merged, rows),
  };
}

/**
 * The pair most worth a reader's look: both structures found more than once (so neither is a one-off an optimiser
 * stopped in), then in one space group (where symmetry alone does not tell them apart), then the lowest in energy
 * (where decisions are made), then the larger EMD; ties by structure index.
 */
export function pickPair(pairs: readonly WindowPair[], rows: readonly StructureRow[]): WindowPair | null {
  let best: WindowPair | null = null;
  const key = (p: WindowPair): [number, number, number, number, number] => [
    rows[p.a]!.members > 1 && rows[p.b]!.members > 1 ? 0 : 1,
    rows[p.a]!.spaceGroup !== null && rows[p.a]!.spaceGroup === rows[p.b]!.spaceGroup ? 0 : 1,
    rows[p.b]!.energyRel as number,
    -p.emdAngstrom,
    p.a * rows.length + p.b,
  ];
  for (const p of pairs) {
    if (best === null) {
      best = p;
      continue;
    }
    const kp = key(p);
    const kb = key(best);
    for (let c = 0; c < kp.length; c++) {
      if (kp[c]! !== kb[c]!) {
        if (kp[c]! < kb[c]!) best = p;
        break;
      }
    }
  }
  return best;
}

/** One sentence naming the pair, for the demo's printed summary and the report (plain text). */
export function describeWindowPair(c: WindowComparison, landscape: Landscape): string {
  const rows = landscape.structures;
  const unit = landscape.parameters.energyUnit;
  const head =
    `energy/density windows (${c.energyWindow} ${unit}, ${c.densityWindowGPerCm3} g/cm3) would leave ${c.groups} groups of the ` +
    `${c.compared} distinct structures`;
  if (!c.example) return `${head}.`;
  const a = rows[c.example.a]!;
  const b = rows[c.example.b]!;
  const times = (r: StructureRow) => (r.members === 1 ? 'once' : `${r.members} times`);
  const sg = a.spaceGroup !== null && a.spaceGroup === b.spaceGroup ? `both ${a.spaceGroup}` : `${a.spaceGroup ?? 'no space group'} and ${b.spaceGroup ?? 'no space group'}`;
  return (
    `${head}; they would merge ${a.id} and ${b.id} (${sg}; ${fmt(a.energyRel, 2)} and ${fmt(b.energyRel, 2)} ${unit}; ` +
    `${fmt(a.densityGPerCm3, 3)} and ${fmt(b.densityGPerCm3, 3)} g/cm3; found ${times(a)} and ${times(b)}), ` +
    `which are ${c.example.emdAngstrom.toFixed(3)} Å apart, ${c.example.toleranceMultiple.toFixed(1)} times the duplicate tolerance.`
  );
}

function fmt(x: number | null, decimals: number): string {
  return x === null ? '–' : x.toFixed(decimals);
}
