// The files `polysift diff --out DIR` writes: diff.json (everything), diff-structures.csv (one row per kept
// structure of either run), diff-pairs.csv (one row per matched pair) and report.html.
import { mkdirSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import Papa from 'papaparse';
import type { LandscapeDiff } from './diff.js';
import { renderDiffReport } from '../report/diff-report.js';

export const DIFF_STRUCTURE_COLUMNS = [
  'run', 'id', 'source', 'presence', 'energy_rank', 'energy_rel', 'density', 'space_group',
  'partner', 'partner_emd', 'nearest_other', 'nearest_other_emd', 'composition', 'flags', 'flat_minimum_with',
  'flat_minimum_distance_angstrom',
] as const;

export const DIFF_PAIR_COLUMNS = [
  'id_a', 'id_b', 'emd', 'energy_rank_a', 'energy_rank_b', 'energy_rel_a', 'energy_rel_b', 'energy_rel_shift',
  'energy_shift', 'density_a', 'density_b', 'density_shift', 'mutual_nearest',
] as const;

/** diff-structures.csv text. */
export function diffStructuresCsv(d: LandscapeDiff): string {
  const rows = d.structures.map((s) => [
    s.run, s.id, s.source, s.presence, s.rank, s.energyRel, s.densityGPerCm3, s.spaceGroup ?? '',
    s.partner ?? '', s.partnerDistance, s.nearestOther ?? '', s.nearestOtherDistance, s.composition ?? '', s.flags.join(' '),
    s.flatPartner ?? '', s.flatPartnerDistance,
  ]);
  return csv([...DIFF_STRUCTURE_COLUMNS], rows);
}

/** diff-pairs.csv text. */
export function diffPairsCsv(d: LandscapeDiff): string {
  const rows = d.pairs.map((p) => [
    p.idA, p.idB, p.emdAngstrom, p.rankA, p.rankB, p.energyRelA, p.energyRelB, p.energyRelShift, p.energyShift,
    p.densityA, p.densityB, p.densityShiftGPerCm3, p.mutualNearest ? 'yes' : 'no',
  ]);
  return csv([...DIFF_PAIR_COLUMNS], rows);
}

/** Write every diff output into `outDir` (created when missing); returns the paths written. */
export function writeDiffOutputs(outDir: string, d: LandscapeDiff, title?: string): string[] {
  mkdirSync(outDir, { recursive: true });
  const files: Array<[string, string]> = [
    ['diff.json', JSON.stringify(d, null, 1) + '\n'],
    ['diff-structures.csv', diffStructuresCsv(d)],
    ['diff-pairs.csv', diffPairsCsv(d)],
    ['report.html', renderDiffReport(d, { title })],
  ];
  const written: string[] = [];
  for (const [name, text] of files) {
    const p = join(outDir, name);
    writeFileSync(p, text);
    written.push(p);
  }
  return written;
}

/** CSV with a header line; null becomes an empty cell, numbers are written in full precision. */
function csv(header: string[], rows: Array<Array<string | number | null>>): string {
  return Papa.unparse({ fields: header, data: rows.map((r) => r.map((v) => (v === null ? '' : v))) }, { newline: '\n' }) + '\n';
}
