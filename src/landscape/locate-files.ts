// The files `polysift locate --out DIR` writes: locate.json (everything), locate.csv (one row per reference and
// listed neighbour) and report.html (the references marked on the landscape).
import { mkdirSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import Papa from 'papaparse';
import type { LocateResult } from './locate.js';
import type { Landscape } from './schema.js';
import { renderLocateReport } from '../report/locate-report.js';

export const LOCATE_COLUMNS = [
  'reference', 'reference_source', 'found', 'order', 'id', 'source', 'emd', 'energy_rank', 'energy_rel', 'density',
  'space_group', 'family', 'reference_composition', 'composition', 'match',
] as const;

/** locate.csv: each reference's listed nearest kept structures (order 1 = nearest); unusable references with their reason. */
export function locateCsv(r: LocateResult): string {
  const rows: Array<Array<string | number | null>> = [];
  for (const ref of r.references) {
    const found = ref.found ? 'yes' : 'no';
    if (ref.nearest.length === 0) rows.push([ref.id, ref.source, found, null, null, null, null, null, null, null, null, null, ref.composition, null, null]);
    for (const h of ref.nearest) {
      rows.push([
        ref.id, ref.source, found, h.order, h.id, h.source, h.emdAngstrom, h.energyRank, h.energyRel, h.densityGPerCm3, h.spaceGroup ?? '', h.family,
        ref.composition, h.composition, ref.match !== null && ref.match.index === h.index ? 'yes' : 'no',
      ]);
    }
  }
  for (const u of r.unusable) rows.push([u.source, u.source, `unusable: ${u.reason}`, null, null, null, null, null, null, null, null, null, null, null, null]);
  return Papa.unparse({ fields: [...LOCATE_COLUMNS], data: rows.map((row) => row.map((v) => (v === null ? '' : v))) }, { newline: '\n' }) + '\n';
}

/** Write locate.json, locate.csv and report.html into `outDir`; returns the paths written. */
export function writeLocateOutputs(outDir: string, r: LocateResult, landscape: Landscape, title?: string): string[] {
  mkdirSync(outDir, { recursive: true });
  const files: Array<[string, string]> = [
    ['locate.json', JSON.stringify(r, null, 1) + '\n'],
    ['locate.csv', locateCsv(r)],
    ['report.html', renderLocateReport(r, landscape, { title })],
  ];
  return files.map(([name, text]) => {
    const p = join(outDir, name);
    writeFileSync(p, text);
    return p;
  });
}
