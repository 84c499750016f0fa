// The files of `sift --out DIR`: structures.csv, unique.csv, unique.cif, notes.csv, landscape.json,
// convergence.csv, energy-issues.csv (only when the energies file had problems) and report.html. Built as strings
// here; written together atomically by src/io/outputs.ts. Every CSV follows src/io/tables.ts (units in the
// headers, one rounding per quantity); to add a column, add one line to its column list below and one row to the
// README's table for that file.
import type { Landscape, StructureRow } from './schema.js';
import { stableJson } from '../io/outputs.js';
import { tableCsv, type Column } from '../io/tables.js';
import { assignNoteCodes, notesCell, type NoteCode, type NoteCodes } from '../io/note-codes.js';
import type { SiftRun } from './sift.js';
import { convergenceCsv } from './convergence.js';
import { renderSiftReport } from '../report/sift-report.js';
import { formatWrittenIn } from './written-in.js';

/** A structure row with the note codes of its run. */
interface StructureLine {
  r: StructureRow;
  codes: NoteCodes;
}

/** A kept structure with the ranges over its duplicate group. */
interface UniqueLine {
  r: StructureRow;
  energyMin: number | null;
  energyMax: number | null;
  densityMin: number | null;
  densityMax: number | null;
  maxDistanceToKept: number;
  /** Flags carried by any member of the group, each with its count (e.g. "energy-mismatch:2"). */
  groupFlags: string;
}

/** Family number, or null (an empty cell) for a structure in no family. */
const familyOf = (r: StructureRow): number | null => (r.family < 0 ? null : r.family);

/** The cell columns shared by structures.csv and unique.csv (the cell as read). */
function cellColumns<L>(row: (l: L) => StructureRow): Array<Column<L>> {
  return [
    { name: 'a', quantity: 'length', value: (l) => row(l).cell?.a ?? null },
    { name: 'b', quantity: 'length', value: (l) => row(l).cell?.b ?? null },
    { name: 'c', quantity: 'length', value: (l) => row(l).cell?.c ?? null },
    { name: 'alpha', quantity: 'angle', value: (l) => row(l).cell?.alpha ?? null },
    { name: 'beta', quantity: 'angle', value: (l) => row(l).cell?.beta ?? null },
    { name: 'gamma', quantity: 'angle', value: (l) => row(l).cell?.gamma ?? null },
    { name: 'volume', quantity: 'volume', value: (l) => row(l).cell?.volume ?? null },
  ];
}

export const STRUCTURES_COLUMNS: ReadonlyArray<Column<StructureLine>> = [
  { name: 'id', quantity: 'text', value: ({ r }) => r.id },
  { name: 'source', quantity: 'text', value: ({ r }) => r.source },
  { name: 'status', quantity: 'text', value: ({ r }) => r.status },
  { name: 'reason', quantity: 'text', value: ({ r }) => r.reason },
  { name: 'energy', quantity: 'energy', value: ({ r }) => r.energy },
  { name: 'energy_rel', quantity: 'energy', value: ({ r }) => r.energyRel },
  { name: 'density', quantity: 'density', value: ({ r }) => r.densityGPerCm3 },
  { name: 'atoms', quantity: 'integer', value: ({ r }) => r.atoms },
  { name: 'space_group', quantity: 'text', value: ({ r }) => r.spaceGroup },
  { name: 'duplicate_of', quantity: 'text', value: ({ r }) => r.duplicateOf },
  { name: 'distance_to_kept', quantity: 'distance', value: ({ r }) => r.distanceToKept },
  { name: 'family', quantity: 'integer', value: ({ r }) => familyOf(r) },
  { name: 'nearest', quantity: 'text', value: ({ r }) => r.nearest },
  { name: 'nearest_distance', quantity: 'distance', value: ({ r }) => r.nearestDistance },
  { name: 'nn_distance', quantity: 'distance', value: ({ r }) => r.nnDistance },
  { name: 'members', quantity: 'integer', value: ({ r }) => r.members },
  { name: 'z', quantity: 'integer', value: ({ r }) => r.z },
  { name: 'z_prime', quantity: 'z-prime', value: ({ r }) => r.zPrime },
  { name: 'formula', quantity: 'text', value: ({ r }) => r.formulas.join(' ') },
  ...cellColumns((l: StructureLine) => l.r),
  { name: 'file', quantity: 'text', value: ({ r }) => r.file },
  { name: 'block', quantity: 'text', value: ({ r }) => r.block },
  { name: 'line', quantity: 'integer', value: ({ r }) => r.line },
  { name: 'notes', quantity: 'text', value: ({ r, codes }) => notesCell(r.notes, codes) },
  { name: 'space_group_declared', quantity: 'text', value: ({ r }) => r.symmetry?.declared ?? null },
  { name: 'space_group_source', quantity: 'text', value: ({ r }) => r.symmetry?.source ?? null },
  { name: 'symmetry_note', quantity: 'text', value: ({ r }) => r.symmetry?.note ?? null },
  // Chemistry and flags (src/landscape/flags.ts).
  { name: 'composition', quantity: 'text', value: ({ r }) => r.composition },
  { name: 'flags', quantity: 'text', value: ({ r }) => r.flags.join(' ') },
  { name: 'other_chemistry_neighbour', quantity: 'text', value: ({ r }) => r.otherChemistry },
  { name: 'other_chemistry_composition', quantity: 'text', value: ({ r }) => r.otherComposition },
  { name: 'other_chemistry_distance', quantity: 'distance', value: ({ r }) => r.otherChemistryDistance },
  { name: 'energy_offset', quantity: 'energy', value: ({ r }) => r.energyOffset },
  { name: 'flat_minimum_with', quantity: 'text', value: ({ r }) => r.flatPartners.join(' ') },
  { name: 'flat_minimum_distance', quantity: 'distance', value: ({ r }) => r.flatPartnerDistance },
];

export const UNIQUE_COLUMNS: ReadonlyArray<Column<UniqueLine>> = [
  { name: 'id', quantity: 'text', value: ({ r }) => r.id },
  { name: 'source', quantity: 'text', value: ({ r }) => r.source },
  { name: 'energy', quantity: 'energy', value: ({ r }) => r.energy },
  { name: 'energy_rel', quantity: 'energy', value: ({ r }) => r.energyRel },
  { name: 'density', quantity: 'density', value: ({ r }) => r.densityGPerCm3 },
  { name: 'members', quantity: 'integer', value: ({ r }) => r.members },
  { name: 'energy_min', quantity: 'energy', value: (u) => u.energyMin },
  { name: 'energy_max', quantity: 'energy', value: (u) => u.energyMax },
  { name: 'density_min', quantity: 'density', value: (u) => u.densityMin },
  { name: 'density_max', quantity: 'density', value: (u) => u.densityMax },
  { name: 'max_distance_to_kept', quantity: 'distance', value: (u) => u.maxDistanceToKept },
  { name: 'family', quantity: 'integer', value: ({ r }) => familyOf(r) },
  { name: 'nearest', quantity: 'text', value: ({ r }) => r.nearest },
  { name: 'nearest_distance', quantity: 'distance', value: ({ r }) => r.nearestDistance },
  { name: 'space_group', quantity: 'text', value: ({ r }) => r.spaceGroup },
  { name: 'z', quantity: 'integer', value: ({ r }) => r.z },
  { name: 'z_prime', quantity: 'z-prime', value: ({ r }) => r.zPrime },
  { name: 'formula', quantity: 'text', value: ({ r }) => r.formulas.join(' ') },
  { name: 'space_group_declared', quantity: 'text', value: ({ r }) => r.symmetry?.declared ?? null },
  { name: 'written_in', quantity: 'text', value: ({ r }) => formatWrittenIn(r.writtenIn) },
  { name: 'composition', quantity: 'text', value: ({ r }) => r.composition },
  { name: 'flags', quantity: 'text', value: ({ r }) => r.flags.join(' ') },
  { name: 'group_flags', quantity: 'text', value: (u) => u.groupFlags },
  ...cellColumns((u: UniqueLine) => u.r),
];

export const NOTES_COLUMNS: ReadonlyArray<Column<NoteCode>> = [
  { name: 'code', quantity: 'text', value: (n) => n.code },
  { name: 'structures', quantity: 'integer', value: (n) => n.structures },
  { name: 'text', quantity: 'text', value: (n) => n.text },
];

interface IssueLine {
  line: number;
  id: string;
  issue: string;
}

export const ENERGY_ISSUES_COLUMNS: ReadonlyArray<Column<IssueLine>> = [
  { name: 'line', quantity: 'integer', value: (x) => x.line },
  { name: 'id', quantity: 'text', value: (x) => x.id },
  { name: 'issue', quantity: 'text', value: (x) => x.issue },
];

/** Note codes of a landscape's structures (the same for structures.csv and notes.csv). */
export function landscapeNoteCodes(l: Landscape): NoteCodes {
  return assignNoteCodes(l.structures.map((r) => r.notes));
}

export function structuresCsv(l: Landscape, codes: NoteCodes = landscapeNoteCodes(l)): string {
  return tableCsv(STRUCTURES_COLUMNS, l.structures.map((r) => ({ r, codes })), l.parameters.energyUnit);
}

export function notesCsv(l: Landscape, codes: NoteCodes = landscapeNoteCodes(l)): string {
  return tableCsv(NOTES_COLUMNS, codes.entries, l.parameters.energyUnit);
}

export function uniqueCsv(l: Landscape): string {
  const groups = new Map<number, StructureRow[]>();
  for (const r of l.structures) {
    if (r.keptIndex === null || (r.status !== 'kept' && r.status !== 'duplicate')) continue;
    const g = groups.get(r.keptIndex) ?? [];
    g.push(r);
    groups.set(r.keptIndex, g);
  }
  const lines: UniqueLine[] = l.kept.map((k) => {
    const r = l.structures[k];
    const g = groups.get(k) ?? [r];
    const range = (f: (x: StructureRow) => number | null): [number | null, number | null] => {
      const v = g.map(f).filter((x): x is number => x !== null);
      return v.length === 0 ? [null, null] : [Math.min(...v), Math.max(...v)];
    };
    const [energyMin, energyMax] = range((x) => x.energy);
    const [densityMin, densityMax] = range((x) => x.densityGPerCm3);
    return { r, energyMin, energyMax, densityMin, densityMax, maxDistanceToKept: Math.max(...g.map((x) => x.distanceToKept ?? 0)), groupFlags: groupFlags(g) };
  });
  return tableCsv(UNIQUE_COLUMNS, lines, l.parameters.energyUnit);
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
  return tableCsv(ENERGY_ISSUES_COLUMNS, rows, run.landscape.parameters.energyUnit);
}

/** Every output file of a run, name -> content. */
export function siftFiles(run: SiftRun, opts: { report?: boolean; title?: string } = {}): Array<[string, string]> {
  const l = run.landscape;
  const codes = landscapeNoteCodes(l);
  const files: Array<[string, string]> = [
    ['structures.csv', structuresCsv(l, codes)],
    ['unique.csv', uniqueCsv(l)],
    ['unique.cif', uniqueCif(run.keptTexts)],
    ['notes.csv', notesCsv(l, codes)],
    ['landscape.json', `${stableJson(l)}\n`],
  ];
  if (l.convergence) files.push(['convergence.csv', convergenceCsv(l.convergence, l.parameters.energyUnit)]);
  const issues = energyIssuesCsv(run);
  if (issues) files.push(['energy-issues.csv', issues]);
  if (opts.report !== false) files.push(['report.html', renderSiftReport(l, { title: opts.title })]);
  return files;
}
