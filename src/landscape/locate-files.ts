// The files `polysift locate --out DIR` writes: locate.json (everything), locate.csv (one row per reference and
// listed neighbour) and report.html (the references marked on the landscape). locate.csv follows src/io/tables.ts
// (units in the headers, one rounding per quantity); to add a column, add one line below and a row to the README.
import { mkdirSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import type { LocateHit, LocatedReference, LocateResult } from './locate.js';
import type { Landscape } from './schema.js';
import { tableCsv, type Column } from '../io/tables.js';
import { renderLocateReport } from '../report/locate-report.js';

/** One line of locate.csv: a listed neighbour of a reference, or a reference with no neighbour or unusable. */
interface LocateLine {
  reference: string;
  referenceSource: string;
  ref: LocatedReference | null;
  hit: LocateHit | null;
  /** Why an unusable reference was not compared. */
  reason: string | null;
}

/**
 * found (the matched row), not found (the nearest of a reference not found), farther (the other neighbours; the nearest
 * too when it has another composition than the reference and a farther one was found).
 */
function verdict(l: LocateLine): string {
  if (l.reason !== null) return 'unusable';
  if (!l.ref || !l.hit) return 'not found';
  if (l.ref.match !== null && l.ref.match.index === l.hit.index) return 'found';
  if (l.hit.order === 1) return l.ref.found ? 'farther' : 'not found';
  return 'farther';
}

/** A neighbour's distance as a multiple of the nearest's (null when the nearest is at 0 and this one is not). */
function timesNearest(l: LocateLine): number | null {
  if (!l.ref || !l.hit) return null;
  const d1 = l.ref.nearest[0].distanceAngstrom;
  const d = l.hit.distanceAngstrom;
  if (d1 === 0) return d === 0 ? 1 : null;
  return d / d1;
}

/** Columns that describe the reference's decision, filled on its first line only. */
const first = (l: LocateLine) => l.ref !== null && (l.hit === null || l.hit.order === 1);

export const LOCATE_COLUMNS: ReadonlyArray<Column<LocateLine>> = [
  { name: 'reference', quantity: 'text', value: (l) => l.reference },
  { name: 'reference_source', quantity: 'text', value: (l) => l.referenceSource },
  { name: 'order', quantity: 'integer', value: (l) => l.hit?.order ?? null },
  { name: 'id', quantity: 'text', value: (l) => l.hit?.id ?? null },
  { name: 'source', quantity: 'text', value: (l) => l.hit?.source ?? null },
  { name: 'verdict', quantity: 'text', value: verdict },
  { name: 'distance', quantity: 'distance', value: (l) => l.hit?.distanceAngstrom ?? null },
  { name: 'times_nearest', quantity: 'ratio', value: timesNearest },
  { name: 'emd', quantity: 'distance', value: (l) => l.hit?.emdAngstrom ?? null },
  { name: 'scaled_emd', quantity: 'distance', value: (l) => l.hit?.scaledEmdAngstrom ?? null },
  { name: 'scale_factor', quantity: 'scale', value: (l) => l.hit?.scaleFactor ?? null },
  { name: 'energy_rank', quantity: 'integer', value: (l) => l.hit?.energyRank ?? null },
  { name: 'energy_rel', quantity: 'energy', value: (l) => l.hit?.energyRel ?? null },
  { name: 'density', quantity: 'density', value: (l) => l.hit?.densityGPerCm3 ?? null },
  { name: 'space_group', quantity: 'text', value: (l) => l.hit?.spaceGroup ?? null },
  { name: 'family', quantity: 'integer', value: (l) => (l.hit && l.hit.family >= 0 ? l.hit.family : null) },
  { name: 'z_prime', quantity: 'z-prime', value: (l) => l.hit?.zPrime ?? null },
  { name: 'reference_space_group', quantity: 'text', value: (l) => l.ref?.spaceGroup ?? null },
  { name: 'reference_z_prime', quantity: 'z-prime', value: (l) => l.ref?.zPrime ?? null },
  { name: 'reference_composition', quantity: 'text', value: (l) => l.ref?.composition ?? null },
  { name: 'composition', quantity: 'text', value: (l) => l.hit?.composition ?? null },
  { name: 'rule', quantity: 'text', value: (l) => (first(l) ? l.ref!.decision.rule : null) },
  { name: 'clarity', quantity: 'text', value: (l) => (first(l) ? l.ref!.decision.clarity : null) },
  { name: 'margin', quantity: 'ratio', value: (l) => (first(l) ? l.ref!.decision.margin : null) },
  { name: 'decision', quantity: 'text', value: (l) => (l.reason ?? (first(l) ? l.ref!.decisionText : null)) },
];

/** locate.csv: each reference's listed nearest kept structures (order 1 = nearest); unusable references with their reason. */
export function locateCsv(r: LocateResult): string {
  const lines: LocateLine[] = [];
  for (const ref of r.references) {
    if (ref.nearest.length === 0) lines.push({ reference: ref.id, referenceSource: ref.source, ref, hit: null, reason: null });
    for (const hit of ref.nearest) lines.push({ reference: ref.id, referenceSource: ref.source, ref, hit, reason: null });
  }
  for (const u of r.unusable) lines.push({ reference: u.source, referenceSource: u.source, ref: null, hit: null, reason: `line ${u.line}: ${u.reason}` });
  return tableCsv(LOCATE_COLUMNS, lines, r.energyUnit);
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
