// The files `polysift diff --out DIR` writes: diff.json (everything), diff-structures.csv (one row per kept
// structure of either run), diff-pairs.csv (one row per matched pair) and report.html. The CSVs follow
// src/io/tables.ts (units in the headers, one rounding per quantity); to add a column, add one line below and a
// row to the README's table for that file.
import { mkdirSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import type { DiffStructure, LandscapeDiff, MatchedPair } from './diff.js';
import { tableCsv, type Column } from '../io/tables.js';
import { renderDiffReport } from '../report/diff-report.js';

export const DIFF_STRUCTURE_COLUMNS: ReadonlyArray<Column<DiffStructure>> = [
  { name: 'run', quantity: 'text', value: (s) => s.run },
  { name: 'id', quantity: 'text', value: (s) => s.id },
  { name: 'source', quantity: 'text', value: (s) => s.source },
  { name: 'presence', quantity: 'text', value: (s) => s.presence },
  { name: 'energy_rank', quantity: 'integer', value: (s) => s.rank },
  { name: 'energy_rel', quantity: 'energy', value: (s) => s.energyRel },
  { name: 'density', quantity: 'density', value: (s) => s.densityGPerCm3 },
  { name: 'space_group', quantity: 'text', value: (s) => s.spaceGroup },
  { name: 'partner', quantity: 'text', value: (s) => s.partner },
  { name: 'partner_distance', quantity: 'distance', value: (s) => s.partnerDistance },
  { name: 'nearest_other', quantity: 'text', value: (s) => s.nearestOther },
  { name: 'nearest_other_distance', quantity: 'distance', value: (s) => s.nearestOtherDistance },
  { name: 'z_prime', quantity: 'z-prime', value: (s) => s.zPrime },
  { name: 'composition', quantity: 'text', value: (s) => s.composition },
  { name: 'flags', quantity: 'text', value: (s) => s.flags.join(' ') },
  { name: 'flat_minimum_with', quantity: 'text', value: (s) => s.flatPartner },
  { name: 'flat_minimum_distance', quantity: 'distance', value: (s) => s.flatPartnerDistance },
];

export const DIFF_PAIR_COLUMNS: ReadonlyArray<Column<MatchedPair>> = [
  { name: 'id_a', quantity: 'text', value: (p) => p.idA },
  { name: 'id_b', quantity: 'text', value: (p) => p.idB },
  { name: 'distance', quantity: 'distance', value: (p) => p.emdAngstrom },
  { name: 'energy_rank_a', quantity: 'integer', value: (p) => p.rankA },
  { name: 'energy_rank_b', quantity: 'integer', value: (p) => p.rankB },
  { name: 'energy_rel_a', quantity: 'energy', value: (p) => p.energyRelA },
  { name: 'energy_rel_b', quantity: 'energy', value: (p) => p.energyRelB },
  { name: 'energy_rel_shift', quantity: 'energy', value: (p) => p.energyRelShift },
  { name: 'energy_shift', quantity: 'energy', value: (p) => p.energyShift },
  { name: 'density_a', quantity: 'density', value: (p) => p.densityA },
  { name: 'density_b', quantity: 'density', value: (p) => p.densityB },
  { name: 'density_shift', quantity: 'density', value: (p) => p.densityShiftGPerCm3 },
  { name: 'mutual_nearest', quantity: 'text', value: (p) => (p.mutualNearest ? 'yes' : 'no') },
];

/** diff-structures.csv text. */
export function diffStructuresCsv(d: LandscapeDiff): string {
  return tableCsv(DIFF_STRUCTURE_COLUMNS, d.structures, d.energyUnit);
}

/** diff-pairs.csv text. */
export function diffPairsCsv(d: LandscapeDiff): string {
  return tableCsv(DIFF_PAIR_COLUMNS, d.pairs, d.energyUnit);
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
