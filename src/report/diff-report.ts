// The diff report: one self-contained HTML page comparing two sift runs (templates/diff-report.*).
// Reuses the shared page frame, styles and helpers (page.ts, report.css, report-common.js) and the EMD colour
// classes of the sift report, so both reports look and read alike.
import type { LandscapeDiff } from '../landscape/diff.js';
import { renderPage } from './page.js';
import { buildEdgeClasses, edgeClassOf, type EdgeClasses } from './sift-data.js';
import { LANDSCAPE_CAUTION } from './sift-report.js';

export interface DiffReportOptions {
  /** Title in the browser tab and the page heading (plain text). */
  title?: string;
}

export interface DiffPageData {
  kind: 'diff';
  title: string;
  diff: LandscapeDiff;
  /** EMD colour class of each matched pair (same order as `diff.pairs`). */
  pairClass: number[];
  pairClasses: EdgeClasses;
}

/** The page data: the diff itself plus the colour class of each matched pair's joining line. */
export function buildDiffPageData(d: LandscapeDiff, title: string): DiffPageData {
  // Classes span 0 to the tolerance, the range a matched pair's EMD can take.
  let hi = d.toleranceAngstrom;
  for (const p of d.pairs) if (p.emdAngstrom > hi) hi = p.emdAngstrom;
  const pairClasses = buildEdgeClasses(0, hi > 0 ? hi : 1e-6);
  const pairClass = d.pairs.map((p) => edgeClassOf(p.emdAngstrom, pairClasses.boundsAngstrom));
  return { kind: 'diff', title, diff: d, pairClass, pairClasses };
}

/** Render a diff as a single offline HTML page. */
export function renderDiffReport(d: LandscapeDiff, opts: DiffReportOptions = {}): string {
  if (d.format !== 'polysift-diff') throw new Error(`renderDiffReport: not a polysift diff (format is ${JSON.stringify(d.format)})`);
  const title = opts.title ?? 'polysift: comparison of two runs';
  return renderPage({
    title,
    bodyTemplate: 'diff-report.html',
    bodyText: { title, caution: LANDSCAPE_CAUTION },
    data: buildDiffPageData(d, title),
    scripts: ['diff-report.js'],
  });
}
