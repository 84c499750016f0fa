// The files of `sift --out DIR` (DESIGN.md, output contract): structures.csv, unique.csv, unique.cif,
// landscape.json, convergence.csv, energy-issues.csv (only when the energies file had problems) and
// report.html. Built as strings here; written together atomically by src/io/outputs.ts.
import type { Landscape, StructureRow } from './schema.js';
import { csvLine, csvNumber, stableJson } from '../io/outputs.js';
import type { SiftRun } from './sift.js';
import { convergenceCsv } from './convergence.js';
import { renderSiftReport } from '../report/sift-report.js';
import { formatWrittenIn } from './written-in.js';

export const STRUCTURES_COLUMNS = [
  'id', 'source', 'status', 'reason', 'energy', 'energy_rel', 'density', 'atoms', 'space_group', 'duplicate_of',
  'distance_to_kept', 'family', 'nearest', 'nearest_distance', 'nn_distance', 'members', 'z', 'z_prime', 'formula',
  'file', 'block', 'line', 'notes', 'space_group_declared', 'space_group_source', 'symmetry_note',
] as const;

export const UNIQUE_COLUMNS = [
  'id', 'source', 'energy', 'energy_rel', 'density', 'members', 'energy_min', 'energy_max', 'density_min', 'density_max',
  'max_distance_to_kept', 'family', 'nearest', 'nearest_distance', 'space_group', 'z', 'z_prime', 'formula',
  'space_group_declared', 'written_in',
] as const;

export function structuresCsv(l: Landscape): string {
  const lines = [csvLine([...STRUCTURES_COLUMNS])];
  for (const r of l.structures) {
    lines.push(
      csvLine([
        r.id, r.source, r.status, r.reason, csvNumber(r.energy), csvNumber(r.energyRel), csvNumber(r.densityGPerCm3), r.atoms,
        r.spaceGroup, r.duplicateOf, csvNumber(r.distanceToKept), r.family, r.nearest, csvNumber(r.nearestDistance),
        csvNumber(r.nnDistance), r.members, r.z, r.zPrime, r.formulas.join(' '), r.file, r.block, r.line, r.notes.join('; '),
        r.symmetry?.declared ?? null, r.symmetry?.source ?? null, r.symmetry?.note ?? null,
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
        r.spaceGroup, r.z, r.zPrime, r.formulas.join(' '), r.symmetry?.declared ?? null, formatWrittenIn(r.writtenIn),
      ]),
    );
  }
  return `${lines.join('\n')}\n`;
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
