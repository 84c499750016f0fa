// Hostile input stays text: ids, block names, file names, space groups and reasons that look like markup
// are shown literally in the report and none of their scripts runs (headless Chromium, file://, network
// blocked). Escaping rules: HTML Living Standard (script element content, character references).
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { mkdtempSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import type { Browser } from 'playwright-core';
import { renderSiftReport } from '../src/report/sift-report.js';
import type { Landscape } from '../src/landscape/schema.js';
import { renameStructures, syntheticLandscape } from './helpers/synthetic-landscape.js';
import { launchChromium, openFile, type PageWatch } from './helpers/browser.js';

// Each would set window.__polysiftPwned or open a dialog if it ever ran.
const HOSTILE_IDS = [
  'x</script><script>alert(1)</script>',
  '<img src=x onerror=alert(1)>',
  '<img src=y onerror="window.__polysiftPwned=1">',
  '"><svg onload=window.__polysiftPwned=2>',
  `it's "quoted" & <b>bold</b>`,
  '&amp;',
];
const HOSTILE_BLOCK = 'x</script><script>window.__polysiftPwned=3</script>';
const HOSTILE_FILE = 'runs/<iframe src=javascript:alert(2)>.cif';
const HOSTILE_REASON = 'bad cell <script>alert(3)</script> &lt;not a tag&gt;';

describe('hostile strings in the sift report', () => {
  let browser: Browser;
  let w: PageWatch;
  let land: Landscape;
  let hostileKept: number[];
  let hostileRejected: number;

  beforeAll(async () => {
    land = syntheticLandscape({ kept: 40, seed: 4, rejected: 3 });
    // Hostile ids on kept structures (so they appear in the table and on the plot), a hostile block and
    // file name on each, and a hostile id and reason on a rejected structure.
    hostileKept = land.kept.slice(0, HOSTILE_IDS.length);
    hostileRejected = land.structures.find((r) => r.status === 'rejected')!.index;
    renameStructures(land, [
      ...hostileKept.map((at, i) => ({ at, id: HOSTILE_IDS[i]!, block: `${HOSTILE_BLOCK}-${i}`, file: HOSTILE_FILE, spaceGroup: '<i>P21/c</i>' })),
      { at: hostileRejected, id: HOSTILE_IDS[1]! + '-rejected', reason: HOSTILE_REASON },
    ]);
    const dir = mkdtempSync(join(tmpdir(), 'polysift-hostile-'));
    const file = join(dir, 'report.html');
    writeFileSync(file, renderSiftReport(land, { title: '<script>alert("title")</script>' }));
    browser = await launchChromium();
    w = await openFile(browser, file);
  });

  afterAll(async () => {
    await browser?.close();
  });

  it('runs no script of theirs: no dialog, the flag they set stays unset, no extra elements, no requests', async () => {
    await w.page.waitForTimeout(300);
    expect(w.dialogs).toEqual([]);
    expect(await w.page.evaluate(() => (window as unknown as { __polysiftPwned?: number }).__polysiftPwned)).toBeUndefined();
    expect(await w.page.evaluate(() => document.querySelectorAll('img, iframe, svg[onload], b, i').length)).toBe(0);
    expect(await w.page.evaluate(() => document.scripts.length)).toBe(4);
    expect(w.blocked).toEqual([]);
    expect(w.consoleErrors).toEqual([]);
    expect(w.pageErrors).toEqual([]);
    expect(await w.page.title()).toBe('<script>alert("title")</script>');
    expect(await w.page.textContent('#page-title')).toBe('<script>alert("title")</script>');
  });

  it('shows every hostile id literally in the table, with its space group as text', async () => {
    const ids = await w.page.locator('#kept-table tbody tr td:first-child').allTextContents();
    for (const h of HOSTILE_IDS) expect(ids).toContain(h);
    const groups = await w.page.locator('#kept-table tbody tr td:nth-child(8)').allTextContents();
    expect(groups.filter((g) => g === '<i>P21/c</i>').length).toBe(HOSTILE_IDS.length);
  });

  it('the filter box finds a hostile id by its literal text', async () => {
    await w.page.fill('#table-filter', 'onerror="window');
    await w.page.waitForFunction(() => document.querySelectorAll('#kept-table tbody tr').length === 1);
    expect(await w.page.locator('#kept-table tbody tr td:first-child').allTextContents()).toEqual([HOSTILE_IDS[2]]);
    await w.page.fill('#table-filter', '');
  });

  it('the structure panel shows hostile id, block and file name as text', async () => {
    const at = hostileKept[0]!;
    await w.page.evaluate((i) => (window as unknown as { polysiftReport: { select(i: number, f: string): void } }).polysiftReport.select(i, 'test'), at);
    expect(await w.page.textContent('#panel-id')).toBe(HOSTILE_IDS[0]);
    const facts = await w.page.textContent('#panel-facts');
    expect(facts).toContain(`${HOSTILE_FILE}#${HOSTILE_BLOCK}-0`);
    expect(await w.page.evaluate(() => (window as unknown as { __polysiftPwned?: number }).__polysiftPwned)).toBeUndefined();
  });

  it.each([4, 5, 1])('plot hover text shows hostile id %i literally (the plotting library gets it escaped)', async (h) => {
    const p = land.kept.indexOf(hostileKept[h]!);
    const text = await w.page.evaluate(async (point) => {
      const g = window as unknown as {
        polysiftReport: { traces: { kept: number } };
        Plotly: { Fx: { hover(gd: unknown, pts: unknown[]): void } };
      };
      const gd = document.getElementById('landscape-plot')!;
      g.Plotly.Fx.hover(gd, [{ curveNumber: g.polysiftReport.traces.kept, pointNumber: point }]);
      await new Promise((r) => setTimeout(r, 200));
      const label = gd.querySelector('.hoverlayer .hovertext');
      return label ? label.textContent : null;
    }, p);
    expect(text).not.toBeNull();
    expect(text).toContain(HOSTILE_IDS[h]);
    expect(await w.page.evaluate(() => document.querySelectorAll('#landscape-plot .hoverlayer b').length)).toBe(0);
  });

  it('the rejected list shows a hostile id and reason literally', async () => {
    const rows = await w.page.locator('#rejected-table tbody tr').evaluateAll((trs) =>
      trs.map((tr) => Array.from(tr.querySelectorAll('td')).map((td) => td.textContent)),
    );
    const row = rows.find((r) => r[0] === HOSTILE_IDS[1] + '-rejected');
    expect(row, 'hostile rejected row not shown').toBeDefined();
    expect(row![3]).toBe(HOSTILE_REASON);
    expect(w.dialogs).toEqual([]);
    expect(await w.page.evaluate(() => (window as unknown as { __polysiftPwned?: number }).__polysiftPwned)).toBeUndefined();
  });
});
