// The files of `sift --out DIR` (DESIGN.md, output contract): structures.csv, unique.csv, unique.cif,
// landscape.json, convergence.csv, energy-issues.csv (only when the energies file had problems) and
// report.html. Built as strings here; written together atomically by src/io/outputs.ts.
import type { EnergyUnit, Landscape, StructureRow } from './schema.js';
import { csvLine, csvNumber, stableJson } from '../io/outputs.js';
import type { SiftRun } from './sift.js';
import { convergenceCsv } from './convergence.js';
import { renderSiftReport } from '../report/sift-report.js';

export const STRUCTURES_COLUMNS = [
  'id', 'source', 'status', 'reason', 'energy', 'energy_rel', 'density', 'atoms', 'space_group', 'duplicate_of',
  'distance_to_kept', 'family', 'nearest', 'nearest_distance', 'nn_distance', 'members', 'z', 'z_prime', 'formula',
  'file', 'block', 'line', 'notes',
  // Chemistry and flags (src/landscape/flags.ts); the energy offset's column names its unit (energyColumnSuffix).
  'composition', 'flags', 'other_chemistry_neighbour', 'other_chemistry_composition', 'other_chemistry_distance_angstrom',
  'energy_offset', 'flat_minimum_with', 'flat_minimum_distance_angstrom',
] as const;

/** Column-name suffix of an energy unit: kJ/mol -> kj_per_mol, kcal/mol -> kcal_per_mol, eV -> ev. */
export function energyColumnSuffix(unit: EnergyUnit): string {
  return unit === 'kJ/mol' ? 'kj_per_mol' : unit === 'kcal/mol' ? 'kcal_per_mol' : 'ev';
}

/** The header of structures.csv for a run in `unit`. */
export function structuresColumns(unit: EnergyUnit): string[] {
  return STRUCTURES_COLUMNS.map((c) => (c === 'energy_offset' ? `energy_offset_${energyColumnSuffix(unit)}` : c));
}

export const UNIQUE_COLUMNS = [
  'id', 'source', 'energy', 'energy_rel', 'density', 'members', 'energy_min', 'energy_max', 'density_min', 'density_max',
  'max_distance_to_kept', 'family', 'nearest', 'nearest_distance', 'space_group', 'z', 'z_prime', 'formula',
  'composition', 'flags', 'group_flags',
] as const;

export function structuresCsv(l: Landscape): string {
  const lines = [csvLine(structuresColumns(l.parameters.energyUnit))];
  for (const r of l.structures) {
    lines.push(
      csvLine([
        r.id, r.source, r.status, r.reason, csvNumber(r.energy), csvNumber(r.energyRel), csvNumber(r.densityGPerCm3), r.atoms,
        r.spaceGroup, r.duplicateOf, csvNumber(r.distanceToKept), r.family, r.nearest, csvNumber(r.nearestDistance),
        csvNumber(r.nnDistance), r.members, r.z, r.zPrime, r.formulas.join(' '), r.file, r.block, r.line, r.notes.join('; '),
        r.composition, r.flags.join(' '), r.otherChemistry, r.otherComposition, csvNumber(r.otherChemistryDistance),
        csvNumber(r.energyOffset), r.flatPartners.join(' '), csvNumber(r.flatPartnerDistance),
      ]),
    );
  }
  return `${lines.join('\n')}\n`;
}

export function uniqueCsv(l: Landscape): string {
  const groups = new Map<number, StructureRow[]>();
  for (const r of l.structures) {
    if (r.keptIndex === null || (r.status !== 'kept' && r.status !== 'duplicate')) continue;
    const g = groups.get(r.keptIndex) ?? [];
    g.push(r);
    groups.set(r.keptIndex, g);
  }
  const lines = [csvLine([...UNIQUE_COLUMNS])];
  for (const k of l.kept) {
    const r = l.structures[k];
    const g = groups.get(k) ?? [r];
    const range = (f: (x: StructureRow) => number | null) => {
      const v = g.map(f).filter((x): x is number => x !== null);
      return v.length === 0 ? [null, null] : [Math.min(...v), Math.max(...v)];
    };
    const [eMin, eMax] = range((x) => x.energy);
    const [dMin, dMax] = range((x) => x.densityGPerCm3);
    const maxD = Math.max(...g.map((x) => x.distanceToKept ?? 0));
    lines.push(
      csvLine([
        r.id, r.source, csvNumber(r.energy), csvNumber(r.energyRel), csvNumber(r.densityGPerCm3), r.members, csvNumber(eMin),
        csvNumber(eMax), csvNumber(dMin), csvNumber(dMax), csvNumber(maxD), r.family, r.nearest, csvNumber(r.nearestDistance),
        r.spaceGroup, r.z, r.zPrime, r.formulas.join(' '), r.composition, r.flags.join(' '), groupFlags(g),
      ]),
    );
  }
  return `${lines.join('\n')}\n`;
}

/** Flags carried by any member of a group, each with its count (e.g. "energy-mismatch:2"). */
function groupFlags(g: StructureRow[]): string {
  const count = new Map<string, number>();
  for (const r of g) for (const f of r.flags) count.set(f, (count.get(f) ?? 0) + 1);
  return [...count].map(([f, c]) => `${f}:${c}`).join(' ');
}

/** The kept blocks' text as read, lowest energy first, separated by one blank line. */
export function uniqueCif(texts: string[]): string {
  return texts.map((t) => (t.endsWith('\n') ? t : `${t}\n`)).join('\n');
}

export function energyIssuesCsv(run: SiftRun): string | null {
  const t = run.energyTable;
  const a = run.energyAssignment;
  if (!t || !a || (t.issues.length === 0 && a.unmatched.length === 0)) return null;
  const rows = [...t.issues, ...a.unmatched].sort((x, y) => x.line - y.line || (x.id < y.id ? -1 : x.id > y.id ? 1 : 0));
  return `${[csvLine(['line', 'id', 'issue']), ...rows.map((r) => csvLine([r.line, r.id, r.issue]))].join('\n')}\n`;
}

/** Every output file of a run, name -> content. */
export function siftFiles(run: SiftRun, opts: { report?: boolean; title?: string } = {}): Array<[string, string]> {
  const l = run.landscape;
  const files: Array<[string, string]> = [
    ['structures.csv', structuresCsv(l)],
    ['unique.csv', uniqueCsv(l)],
    ['unique.cif', uniqueCif(run.keptTexts)],
    ['landscape.json', `${stableJson(l)}\n`],
  ];
  if (l.convergence) files.push(['convergence.csv', convergenceCsv(l.convergence, l.parameters.energyUnit)]);
  const issues = energyIssuesCsv(run);
  if (issues) files.push(['energy-issues.csv', issues]);
  if (opts.report !== false) files.push(['report.html', renderSiftReport(l, { title: opts.title })]);
  return files;
}
