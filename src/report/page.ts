// Assembling one self-contained report page: the shared page frame and styles from `templates/`, the
// plotting library, the page's data as inert JSON, and the page's own scripts, all inlined. Nothing in
// the result refers to anything outside the file. Reused by every report polysift writes.
import { escapeHtml, inlineScriptSource, jsonForScript } from './escape.js';
import { readPlotlyBundle, readTemplate } from './assets.js';

/** Id of the `<script type="application/json">` element holding a page's data. */
export const PAGE_DATA_ID = 'polysift-data';

export interface PageParts {
  /** Page title as plain text (escaped here). */
  title: string;
  /** Name of an HTML fragment in `templates/` holding the page's body (template text only, no input). */
  bodyTemplate: string;
  /** Values for `{{name}}` placeholders of the body template, as plain text (escaped here). */
  bodyText?: Record<string, string>;
  /** The page's data; read in the page with `PolysiftPage.readData()`. */
  data: unknown;
  /** Names of script files in `templates/` run in order after the plotting library and `report-common.js`. */
  scripts: string[];
  /** Names of style sheets in `templates/` added after `report.css`. */
  styles?: string[];
}

/**
 * The content security policy of every page: nothing may be fetched, framed or submitted; inline
 * scripts and styles run, and `unsafe-eval` is allowed because the plotting library's WebGL layer
 * compiles its shaders' glue code with `new Function`. Images only from `data:`/`blob:` (plot export).
 */
export const PAGE_CSP =
  "default-src 'none'; script-src 'unsafe-inline' 'unsafe-eval'; style-src 'unsafe-inline'; " +
  "img-src data: blob:; font-src data:; connect-src 'none'; worker-src blob:; form-action 'none'; base-uri 'none'";

/** Build the full HTML document. */
export function renderPage(parts: PageParts): string {
  const frame = readTemplate('page.html');
  const styles = ['report.css', ...(parts.styles ?? [])].map((n) => readTemplate(n)).join('\n');
  const body = fillPlaceholders(readTemplate(parts.bodyTemplate), parts.bodyText ?? {}, parts.bodyTemplate);
  const scripts = [readPlotlyBundle(), readTemplate('report-common.js'), ...parts.scripts.map((n) => readTemplate(n))]
    .map((src) => `<script>${inlineScriptSource(src)}</script>`)
    .join('\n');
  const data = `<script type="application/json" id="${PAGE_DATA_ID}">${jsonForScript(parts.data)}</script>`;
  return fillRaw(frame, {
    csp: escapeHtml(PAGE_CSP),
    title: escapeHtml(parts.title),
    style: styles,
    body,
    data,
    scripts,
  });
}

/** Replace `{{name}}` in template text by escaped plain text; an unknown placeholder is an error. */
export function fillPlaceholders(template: string, values: Record<string, string>, templateName: string): string {
  return template.replace(/\{\{(\w+)\}\}/g, (_m, key: string) => {
    const v = values[key];
    if (v === undefined) throw new Error(`template ${templateName}: no value for {{${key}}}`);
    return escapeHtml(v);
  });
}

// One pass over the frame, so inserted text (the library, the data) is never scanned for placeholders.
function fillRaw(template: string, values: Record<string, string>): string {
  return template.replace(/\{\{(\w+)\}\}/g, (m, key: string) => values[key] ?? m);
}
