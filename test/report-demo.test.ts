// The demo's report (the real pipeline: an invented search, sifted) in headless Chromium from file://
// with the network blocked: clean load, one marker per kept structure of its landscape.json, a marker
// click opens the panel, sorting reorders the table; screenshots go to reports/test-screens/.
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { mkdirSync, mkdtempSync, readFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import type { Browser } from 'playwright-core';
import { runDemo } from '../src/demo/run-demo.js';
import type { Landscape } from '../src/landscape/schema.js';
import { clickIsolatedKeptMarker, launchChromium, openFile, type PageWatch } from './helpers/browser.js';

const SCREENS = join(process.cwd(), 'reports', 'test-screens');

describe('the demo report in a browser', () => {
  let browser: Browser;
  let w: PageWatch;
  let land: Landscape;

  beforeAll(async () => {
    const out = mkdtempSync(join(tmpdir(), 'polysift-demo-'));
    const [, launched] = await Promise.all([runDemo({ out }), launchChromium()]);
    browser = launched;
    land = JSON.parse(readFileSync(join(out, 'landscape.json'), 'utf8')) as Landscape;
    w = await openFile(browser, join(out, 'report.html'));
  });

  afterAll(async () => {
    await browser?.close();
  });

  it('loads with no console errors, no failed requests and no request but the file itself', async () => {
    expect(w.consoleErrors).toEqual([]);
    expect(w.pageErrors).toEqual([]);
    expect(w.failed).toEqual([]);
    expect(w.requests).toEqual([w.url]);
    mkdirSync(SCREENS, { recursive: true });
    await w.page.screenshot({ path: join(SCREENS, 'demo-landscape.png') });
    await w.page.screenshot({ path: join(SCREENS, 'demo-full.png'), fullPage: true });
    expect(await w.page.textContent('#run-line')).toContain(`${land.counts.input} structures read · ${land.counts.kept} kept`);
  });

  it('the landscape holds one marker per kept structure of landscape.json', async () => {
    const xs = (await w.page.evaluate(
      'document.getElementById("landscape-plot").data[window.polysiftReport.traces.kept].x',
    )) as number[];
    expect(land.counts.kept).toBeGreaterThan(1);
    expect(xs.length).toBe(land.counts.kept);
    land.kept.forEach((k, p) => expect(xs[p]).toBeCloseTo(land.structures[k]!.densityGPerCm3!, 5));
  });

  it('clicking a marker opens its panel with its members', async () => {
    const { point } = await clickIsolatedKeptMarker(w.page);
    const idx = land.kept[point]!;
    await w.page.waitForFunction((want) => document.getElementById('panel-id')?.textContent === want, land.structures[idx]!.id, { timeout: 15_000 });
    const members = await w.page.locator('#members-table tbody tr').count();
    expect(members).toBe(land.structures[idx]!.members - 1);
    await (await w.page.$('.ps-row-table'))!.screenshot({ path: join(SCREENS, 'demo-panel.png') });
  });

  it('sorting the table by relative energy, descending, puts the highest kept structure first', async () => {
    const header = w.page.locator('#kept-table thead th').nth(1);
    const before = await w.page.locator('#kept-table tbody tr td:first-child').allTextContents();
    await header.locator('button').click();
    await header.locator('button').click();
    expect(await header.getAttribute('aria-sort')).toBe('descending');
    const after = await w.page.locator('#kept-table tbody tr td:first-child').allTextContents();
    expect(after).not.toEqual(before);
    const top = land.kept.reduce((a, b) => (land.structures[b]!.energyRel! > land.structures[a]!.energyRel! ? b : a));
    expect(after[0]).toBe(land.structures[top]!.id);
    expect(w.consoleErrors).toEqual([]);
  });

  it('shows the flat minimum of the demo in the summary, the table and the panel, and the auto tolerance on the histogram', async () => {
    const flat = land.structures.filter((r) => r.flags.includes('flat-minimum'));
    expect(flat).toHaveLength(3);
    expect(await w.page.textContent('#flags-table')).toMatch(/flat-minimum3 \(3 pairs\)/);
    expect(await w.page.textContent('#run-line')).toContain('3 flat minimum');
    await w.page.fill('#table-filter', 'flat-minimum');
    await w.page.waitForFunction(() => document.querySelectorAll('#kept-table tbody tr').length === 3, null, { timeout: 15_000 });
    const ids = await w.page.locator('#kept-table tbody tr td:first-child').allTextContents();
    expect(ids.sort()).toEqual(flat.map((r) => r.id).sort());
    await w.page.evaluate((i) => (window as unknown as { polysiftReport: { select: (i: number) => void } }).polysiftReport.select(i), flat[0]!.index);
    await w.page.waitForFunction((want) => document.getElementById('panel-id')?.textContent === want, flat[0]!.id, { timeout: 15_000 });
    const facts = await w.page.textContent('#panel-facts');
    expect(facts).toContain('flat-minimum with');
    for (const partner of flat[0]!.flatPartners) expect(facts).toContain(partner);
    expect(land.parameters.toleranceMode).toBe('auto');
    expect(await w.page.textContent('#nn-note')).toMatch(/Auto tolerance: the shaded band is the gap found between/);
    await w.page.fill('#table-filter', '');
    expect(w.consoleErrors).toEqual([]);
  });
});
