// The sift report in headless Chromium (Debian's /usr/bin/chromium via playwright-core), opened from
// file:// with every network request blocked: it loads cleanly, the landscape holds one marker per kept
// structure, a click on a marker opens its panel, the table sorts, filters and is keyboard-operable.
// One browser and one page load for the whole file (page loads dominate the time on a busy machine).
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { mkdirSync, mkdtempSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import type { Browser, Page } from 'playwright-core';
import { renderSiftReport } from '../src/report/sift-report.js';
import type { Landscape } from '../src/landscape/schema.js';
import { syntheticLandscape } from './helpers/synthetic-landscape.js';
import { clickIsolatedKeptMarker, launchChromium, openFile, type PageWatch } from './helpers/browser.js';

const SCREENS = join(process.cwd(), 'reports', 'test-screens');

/** The structure panel's facts, name to text. */
async function panelFacts(page: Page): Promise<Map<string, string>> {
  const cells = await page.$$eval('#panel-facts dt, #panel-facts dd', (n) => n.map((x) => x.textContent ?? ''));
  const facts = new Map<string, string>();
  for (let i = 0; i + 1 < cells.length; i += 2) facts.set(cells[i]!, cells[i + 1]!);
  return facts;
}

interface ReportGlobals {
  polysiftReport: { traces: { kept: number; duplicates: number }; selected: number | null };
}

describe('the sift report in a browser', () => {
  let browser: Browser;
  let w: PageWatch;
  let land: Landscape;

  beforeAll(async () => {
    land = syntheticLandscape({ kept: 250, seed: 11 });
    const dir = mkdtempSync(join(tmpdir(), 'polysift-report-'));
    const file = join(dir, 'report.html');
    writeFileSync(file, renderSiftReport(land, { title: 'Synthetic test landscape' }));
    browser = await launchChromium();
    w = await openFile(browser, file);
  });

  afterAll(async () => {
    await browser?.close();
  });

  it('loads from file:// with no console errors, no failed requests and no request but the file itself', async () => {
    expect(w.consoleErrors).toEqual([]);
    expect(w.pageErrors).toEqual([]);
    expect(w.failed).toEqual([]);
    expect(w.blocked).toEqual([]);
    expect(w.requests).toEqual([w.url]);
    mkdirSync(SCREENS, { recursive: true });
    await w.page.screenshot({ path: join(SCREENS, 'landscape.png') });
    await w.page.screenshot({ path: join(SCREENS, 'report-full.png'), fullPage: true });
  });

  it('the landscape plot holds one marker per kept structure at its density and relative energy', async () => {
    const plotted = await w.page.evaluate(() => {
      const g = window as unknown as ReportGlobals;
      const gd = document.getElementById('landscape-plot') as unknown as { data: Array<{ x: number[]; y: number[] }> };
      const t = gd.data[g.polysiftReport.traces.kept]!;
      return { x: t.x, y: t.y };
    });
    expect(plotted.x.length).toBe(land.counts.kept);
    expect(plotted.x.length).toBe(land.kept.length);
    land.kept.forEach((k, p) => {
      expect(plotted.x[p]).toBeCloseTo(land.structures[k]!.densityGPerCm3!, 5);
      expect(plotted.y[p]).toBeCloseTo(land.structures[k]!.energyRel!, 4);
    });
  });

  it('a real mouse click on a marker opens that structure in the panel and selects its table row', async () => {
    const target = await clickIsolatedKeptMarker(w.page);
    expect(target.gapPx).toBeGreaterThan(4);
    const idx = land.kept[target.point]!;
    const id = land.structures[idx]!.id;
    await w.page.waitForFunction((want) => document.getElementById('panel-id')?.textContent === want, id, { timeout: 15_000 });
    expect(await w.page.isVisible('#panel-body')).toBe(true);
    expect(await w.page.textContent('#panel-facts')).toContain(land.structures[idx]!.source);
    const selectedRow = await w.page.locator('#kept-table tbody tr[aria-selected="true"]').getAttribute('data-item');
    expect(Number(selectedRow)).toBe(idx);
    // The hover label under the mouse and the panel both give its cell and volume (issue 14).
    const cell = land.structures[idx]!.cell!;
    const cellLine = `a, b, c ${cell.a.toFixed(3)}, ${cell.b.toFixed(3)}, ${cell.c.toFixed(3)} Å; ` +
      `α, β, γ ${cell.alpha.toFixed(2)}, ${cell.beta.toFixed(2)}, ${cell.gamma.toFixed(2)}°`;
    const hover = (await w.page.locator('#landscape-plot .hoverlayer .hovertext').first().textContent())!;
    expect(hover).toContain(id);
    expect(hover).toContain(`${cellLine}; V ${cell.volume!.toFixed(1)} Å³`);
    const facts = await panelFacts(w.page);
    expect(facts.get('Cell')).toBe(cellLine);
    expect(facts.get('Volume')).toBe(`${cell.volume!.toFixed(1)} Å³`);
    // Its members: every duplicate collapsed into it is listed.
    const dupIds = land.structures.filter((r) => r.status === 'duplicate' && r.keptIndex === idx).map((r) => r.id).sort();
    const listed = (await w.page.locator('#members-table tbody tr td:first-child').allTextContents()).sort();
    expect(listed).toEqual(dupIds);
    // Its AMD curve and its neighbours' are drawn.
    const readCurves = () =>
      w.page.evaluate(() => (document.getElementById('amd-plot') as unknown as { data: Array<{ y: number[] }> }).data);
    const neighbours = land.edges
      .filter((e) => e[0] === idx || e[1] === idx)
      .sort((a, b) => a[2] - b[2])
      .map((e) => (e[0] === idx ? e[1] : e[0]));
    const amdOf = (s: number) => land.invariants.kept.find((r) => r.index === s)!.amd;
    const own = amdOf(idx);
    // Shown first as differences from this structure: the nearest neighbour's curve is its AMD minus ours.
    const diff = await readCurves();
    expect(diff.length).toBe(Math.min(5, neighbours.length) + 1);
    amdOf(neighbours[0]!).forEach((v, j) => expect(Math.abs(diff[0]!.y[j]! - (v - own[j]!))).toBeLessThan(2e-4));
    // Then as the curves themselves: its own (drawn last) is its AMD from landscape.json, decoded in the page.
    await w.page.uncheck('#amd-difference');
    const curves = await readCurves();
    const drawn = curves[curves.length - 1]!.y;
    expect(drawn.length).toBe(own.length);
    own.forEach((v, j) => expect(Math.abs(drawn[j]! - v)).toBeLessThan(1e-4));
  });

  it('sorting the table by a column header reorders its rows (click, then Enter and Space on the header button)', async () => {
    const energies = async () =>
      (await w.page.locator('#kept-table tbody tr td:nth-child(2)').allTextContents()).map(Number);
    const header = w.page.locator('#kept-table thead th').nth(1);
    await header.locator('button').click();
    expect(await header.getAttribute('aria-sort')).toBe('ascending');
    const up = await energies();
    expect(up.length).toBe(100);
    for (let i = 1; i < up.length; i++) expect(up[i]!).toBeGreaterThanOrEqual(up[i - 1]!);
    await header.locator('button').focus();
    await w.page.keyboard.press('Enter');
    expect(await header.getAttribute('aria-sort')).toBe('descending');
    const down = await energies();
    for (let i = 1; i < down.length; i++) expect(down[i]!).toBeLessThanOrEqual(down[i - 1]!);
    const highest = Math.max(...land.kept.map((k) => land.structures[k]!.energyRel!));
    expect(down[0]).toBeCloseTo(highest, 3);
    // Sorting by density with Space.
    const densityHeader = w.page.locator('#kept-table thead th').nth(2);
    await densityHeader.locator('button').focus();
    await w.page.keyboard.press(' ');
    expect(await densityHeader.getAttribute('aria-sort')).toBe('ascending');
    expect(await header.getAttribute('aria-sort')).toBe('none');
    const dens = (await w.page.locator('#kept-table tbody tr td:nth-child(3)').allTextContents()).map(Number);
    const lowest = Math.min(...land.kept.map((k) => land.structures[k]!.densityGPerCm3!));
    expect(dens[0]).toBeCloseTo(lowest, 4);
  });

  it('a table row opened with the keyboard highlights its marker and opens its panel', async () => {
    const row = w.page.locator('#kept-table tbody tr').nth(2);
    const idx = Number(await row.getAttribute('data-item'));
    await row.focus();
    await w.page.keyboard.press('ArrowDown');
    const next = Number(await w.page.evaluate(() => document.activeElement?.getAttribute('data-item')));
    expect(next).not.toBe(idx);
    await w.page.keyboard.press('Enter');
    await w.page.waitForFunction((want) => document.getElementById('panel-id')?.textContent === want, land.structures[next]!.id);
    // The marker is ringed: one circle anchored at the structure's density and relative energy.
    const hl = await w.page.evaluate(() => {
      const g = window as unknown as ReportGlobals;
      const gd = document.getElementById('landscape-plot') as unknown as { layout: { shapes: Array<{ type: string; xanchor: number; yanchor: number }> } };
      // The ring is the one circle; the other shape marks the pair energy/density windows would merge (issue 14).
      return { shapes: gd.layout.shapes.filter((x) => x.type === 'circle'), selected: g.polysiftReport.selected };
    });
    expect(hl.selected).toBe(next);
    expect(hl.shapes.length).toBe(1);
    expect(hl.shapes[0]!.xanchor).toBeCloseTo(land.structures[next]!.densityGPerCm3!, 5);
    expect(hl.shapes[0]!.yanchor).toBeCloseTo(land.structures[next]!.energyRel!, 4);
    expect(await w.page.evaluate(() => document.querySelectorAll('#landscape-plot .shapelayer path').length)).toBeGreaterThan(0);
  });

  it('the filter box narrows the table to matching structures', async () => {
    const target = land.structures[land.kept[17]!]!;
    await w.page.fill('#table-filter', target.id);
    await w.page.waitForFunction(() => document.querySelectorAll('#kept-table tbody tr').length === 1);
    expect(await w.page.locator('#kept-table tbody tr td:first-child').allTextContents()).toEqual([target.id]);
    expect(await w.page.textContent('#table-count')).toBe(`1 of ${land.counts.kept} match`);
    await w.page.fill('#table-filter', '');
    await w.page.waitForFunction(() => document.querySelectorAll('#kept-table tbody tr').length === 100);
  });

  it('the filter finds a space group by any common spelling, and the panel says what the members were written in', async () => {
    const p21c = land.kept.filter((k) => land.structures[k]!.spaceGroup === 'P21/c');
    expect(p21c.length).toBeGreaterThan(10);
    // Spellings of group 14 found in files and papers (International Tables Vol. A symbols; common practice).
    for (const spelling of ['P21/c', 'P 21/c', 'P 1 21/c 1', 'P2_1/c', 'p21/c', 'P 1 21/n 1']) {
      await w.page.fill('#table-filter', spelling);
      await w.page.waitForFunction((want) => document.getElementById('table-count')?.textContent === want, `${p21c.length} of ${land.counts.kept} match`);
    }
    // Its number finds exactly the same structures; a group that is not in the landscape finds none.
    await w.page.fill('#table-filter', '14');
    await w.page.waitForFunction((want) => document.getElementById('table-count')?.textContent === want, `${p21c.length} of ${land.counts.kept} match`);
    await w.page.fill('#table-filter', 'P 43 21 2');
    await w.page.waitForFunction((want) => document.getElementById('table-count')?.textContent === want, `0 of ${land.counts.kept} match`);
    // Any other text is looked for in the rows: 'cand-0000' finds the ids that hold it.
    await w.page.fill('#table-filter', 'cand-0000');
    const byText = land.kept.filter((k) => land.structures[k]!.id.includes('cand-0000')).length;
    await w.page.waitForFunction((want) => document.getElementById('table-count')?.textContent === want, `${byText} of ${land.counts.kept} match`);
    // A P21/c structure with members written in P1: the panel names both.
    const withP1 = p21c.find((k) => land.structures[k]!.writtenIn.some((e) => e.spaceGroup === 'P1'))!;
    await w.page.fill('#table-filter', land.structures[withP1]!.id);
    await w.page.waitForFunction(() => document.querySelectorAll('#kept-table tbody tr').length === 1);
    await w.page.locator('#kept-table tbody tr').first().focus();
    await w.page.keyboard.press('Enter');
    await w.page.waitForFunction((want) => document.getElementById('panel-id')?.textContent === want, land.structures[withP1]!.id);
    const facts = (await w.page.textContent('#panel-facts'))!;
    expect(facts).toContain('P21/c (No. 14), detected within 0.06 Å');
    expect(facts).toMatch(/Members written inP21\/c x \d+; P1 x \d+|Members written inP1 x \d+; P21\/c x \d+/);
    const hover = await w.page.evaluate((p) => {
      const g = window as unknown as ReportGlobals;
      const gd = document.getElementById('landscape-plot') as unknown as { data: Array<{ text: string[] }> };
      return gd.data[g.polysiftReport.traces.kept]!.text[p];
    }, land.kept.indexOf(withP1));
    expect(hover).toContain('P21/c, Z′ 1 (members written in');
    await w.page.fill('#table-filter', '');
    await w.page.waitForFunction(() => document.querySelectorAll('#kept-table tbody tr').length === 100);
  });

  it('duplicates appear on demand, one marker per duplicate', async () => {
    const read = () =>
      w.page.evaluate(() => {
        const g = window as unknown as ReportGlobals;
        const gd = document.getElementById('landscape-plot') as unknown as {
          data: Array<{ x: number[] }>;
          _fullData: Array<{ visible: boolean | string }>;
        };
        const t = g.polysiftReport.traces.duplicates;
        return { visible: gd._fullData[t]!.visible, n: gd.data[t]!.x.length };
      });
    expect((await read()).visible).toBe(false);
    await w.page.check('#show-duplicates');
    const after = await read();
    expect(after.visible).toBe(true);
    expect(after.n).toBe(land.counts.duplicate);
  });

  it('the run summary lists every rejected structure with its reason, the timings and the caution', async () => {
    const rejected = land.structures.filter((r) => r.status === 'rejected');
    const ids = await w.page.locator('#rejected-table tbody tr td:first-child').allTextContents();
    expect(ids.sort()).toEqual(rejected.map((r) => r.id).sort());
    const reasons = await w.page.locator('#rejected-table tbody tr td:nth-child(4)').allTextContents();
    expect(reasons.sort()).toEqual(rejected.map((r) => r.reason).sort());
    const timings = await w.page.textContent('#timings-table');
    for (const stage of Object.keys(land.run.timingsSeconds)) expect(timings).toContain(stage);
    expect(await w.page.textContent('#summary-section')).toContain('evidence, not proof that no other form exists');
    expect(await w.page.textContent('#convergence-statement')).toBe(land.convergence!.statement);
    expect(w.consoleErrors).toEqual([]);
    expect(w.pageErrors).toEqual([]);
  });

  it('a landscape with one kept structure, no energies, no map and no convergence curve still loads and says so', async () => {
    const tiny = syntheticLandscape({ kept: 1, duplicates: 2, rejected: 0, outsideWindow: 0, seed: 3, noConvergence: true });
    for (const r of tiny.structures) {
      r.energy = null;
      r.energyRel = null;
    }
    tiny.lowestEnergy = null;
    tiny.structures[tiny.kept[0]!]!.cell = null;
    tiny.embedding = null;
    const dir = mkdtempSync(join(tmpdir(), 'polysift-report-tiny-'));
    const file = join(dir, 'report.html');
    writeFileSync(file, renderSiftReport(tiny));
    const t = await openFile(browser, file);
    try {
      expect(t.consoleErrors).toEqual([]);
      expect(t.pageErrors).toEqual([]);
      expect(t.requests).toEqual([t.url]);
      const n = (await t.page.evaluate('document.getElementById("landscape-plot").data[window.polysiftReport.traces.kept].x.length')) as number;
      expect(n).toBe(1);
      expect(await t.page.textContent('#map-note')).toContain('no metric map');
      expect(await t.page.isHidden('#convergence-section')).toBe(true);
      expect(await t.page.textContent('#rejected-note')).toContain('None');
      expect(await t.page.textContent('#landscape-plot')).toContain('No energies given');
      await t.page.locator('#kept-table tbody tr').first().focus();
      await t.page.keyboard.press('Enter');
      await t.page.waitForFunction((want) => document.getElementById('panel-id')?.textContent === want, tiny.structures[tiny.kept[0]!]!.id);
      expect(await t.page.locator('#members-table tbody tr').count()).toBe(2);
      // No cell known: the panel says so with a dash rather than a made-up value.
      const facts = await panelFacts(t.page);
      expect(facts.get('Cell')).toBe('–');
      expect(facts.get('Volume')).toBe('–');
      expect(t.consoleErrors).toEqual([]);
      expect(t.pageErrors).toEqual([]);
    } finally {
      await t.context.close();
    }
  });
});
