// The locate report: one self-contained HTML page marking known structures on a sifted landscape
// (templates/locate-report.*), built on the shared page frame, styles and helpers.
import type { LocateResult } from '../landscape/locate.js';
import type { Landscape } from '../landscape/schema.js';
import { energyRanks } from '../landscape/load.js';
import { renderPage } from './page.js';
import { FAMILY_COLOURS } from './colours.js';
import { LANDSCAPE_CAUTION } from './sift-report.js';

export interface LocateReportOptions {
  title?: string;
}

export interface LocatePageData {
  kind: 'locate';
  title: string;
  result: LocateResult;
  /** Kept structures of the landscape as columns (same order as `landscape.kept`). */
  kept: {
    index: number[];
    id: string[];
    energyRel: Array<number | null>;
    density: Array<number | null>;
    rank: Array<number | null>;
  };
  /** One colour per reference (cycled). */
  referenceColours: string[];
}

export function buildLocatePageData(r: LocateResult, landscape: Landscape, title: string): LocatePageData {
  const ranks = energyRanks(landscape);
  const kept = landscape.kept;
  return {
    kind: 'locate',
    title,
    result: r,
    kept: {
      index: kept.slice(),
      id: kept.map((i) => landscape.structures[i].id),
      energyRel: kept.map((i) => landscape.structures[i].energyRel),
      density: kept.map((i) => landscape.structures[i].densityGPerCm3),
      rank: kept.map((i) => ranks.get(i) ?? null),
    },
    referenceColours: r.references.map((_r, q) => FAMILY_COLOURS[q % FAMILY_COLOURS.length] as string),
  };
}

/** Render a locate result on its landscape as a single offline HTML page. */
export function renderLocateReport(r: LocateResult, landscape: Landscape, opts: LocateReportOptions = {}): string {
  if (r.format !== 'polysift-locate') throw new Error(`renderLocateReport: not a polysift locate result (format is ${JSON.stringify(r.format)})`);
  const title = opts.title ?? 'polysift: known structures on the landscape';
  return renderPage({
    title,
    bodyTemplate: 'locate-report.html',
    bodyText: { title, caution: LANDSCAPE_CAUTION },
    data: buildLocatePageData(r, landscape, title),
    scripts: ['locate-report.js'],
  });
}
