// The sift report: one self-contained HTML file showing a landscape (see templates/sift-report.*).
import type { Landscape } from '../landscape/schema.js';
import { renderPage } from './page.js';
import { buildSiftPageData } from './sift-data.js';

export interface SiftReportOptions {
  /** Title shown in the browser tab and the page heading (plain text). */
  title?: string;
}

/** The caution every landscape report carries (also shown in the page). */
export const LANDSCAPE_CAUTION =
  'A predicted landscape is evidence, not proof that no other form exists. Decisions about a medicine or product ' +
  'follow experimental screening and the applicable regulatory guidance.';

/** Render `landscape.json`'s content as a single offline HTML page. */
export function renderSiftReport(landscape: Landscape, opts: SiftReportOptions = {}): string {
  if (landscape.format !== 'polysift-landscape') {
    throw new Error(`renderSiftReport: not a polysift landscape (format is ${JSON.stringify(landscape.format)})`);
  }
  const title = opts.title ?? 'polysift landscape';
  return renderPage({
    title,
    bodyTemplate: 'sift-report.html',
    bodyText: { title, caution: LANDSCAPE_CAUTION },
    data: buildSiftPageData(landscape, title),
    scripts: ['sift-report.js'],
  });
}
