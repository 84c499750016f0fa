// The demo's report (the real pipeline: an invented search, sifted) in headless Chromium from file://
// with the network blocked: clean load, one marker per kept structure of its landscape.json, a marker
// click opens the panel, sorting reorders the table; screenshots go to reports/test-screens/.
// Issue 14: the first view is readable (a few lines per structure, zoomed on the lowest 10 kJ/mol, the rest one
// click away), and the demo's summary and report tell the job's story: duplicates collapsed, at least two
// families, a convergence curve that levels off, and a pair energy/density windows merge that the metric keeps
// apart, named in the report.
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { mkdirSync, mkdtempSync, readFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import type { Browser } from 'playwright-core';
import { runDemo, type DemoResult } from '../src/demo/run-demo.js';
import type { ConvergenceCurve, Landscape } from '../src/landscape/schema.js';
import { compareWithWindows } from '../src/report/window-compare.js';
import { BIN_DENSITY_G_PER_CM3, BIN_ENERGY_KJ_PER_MOL } from '../src/demo/window-binning.js';
import { clickIsolatedKeptMarker, launchChromium, openFile, plotArea, tracePixels, toleranceBands, type PageWatch } from './helpers/browser.js';

interface LinesState { shown: number; segments: number }

/** Lines the page has drawn: its own count and the segments in the SVG paths. */
async function linesState(w: PageWatch): Promise<LinesState> {
  return (await w.page.evaluate(`(() => {
    let segments = 0;
    document.querySelectorAll('#landscape-plot .ps-lines path').forEach((p) => { segments += (p.getAttribute('d').match(/M/g) || []).length; });
    return { shown: window.polysiftReport.linesShown, segments };
  })()`)) as LinesState;
}

const SCREENS = join(process.cwd(), 'reports', 'test-screens');

describe('the demo report in a browser', () => {
  let browser: Browser;
  let w: PageWatch;
  let land: Landscape;
  let demo: DemoResult;

  // The demo search (400 relaxations on 2 cores) and a browser launch run together; on a machine shared with
  // other test runs this can take several minutes, so the hook gets a generous limit of its own.
  beforeAll(async () => {
    const out = mkdtempSync(join(tmpdir(), 'polysift-demo-'));
    const [ran, launched] = await Promise.all([runDemo({ out }), launchChromium()]);
    demo = ran;
    browser = launched;
    land = JSON.parse(readFileSync(join(out, 'landscape.json'), 'utf8')) as Landscape;
    w = await openFile(browser, join(out, 'report.html'));
  }, 600_000);

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
    // Its cell and volume, in the hover label under the mouse and in the panel (issue 14). The volume is the
    // triclinic cell volume a b c sqrt(1 - cos²α - cos²β - cos²γ + 2 cosα cosβ cosγ) (International Tables for
    // Crystallography Vol. B, from memory), and the cell holds the structure's density.
    const cell = land.structures[idx]!.cell!;
    const [ca, cb, cg] = [cell.alpha, cell.beta, cell.gamma].map((x) => Math.cos((x * Math.PI) / 180)) as [number, number, number];
    const volume = cell.a * cell.b * cell.c * Math.sqrt(1 - ca * ca - cb * cb - cg * cg + 2 * ca * cb * cg);
    expect(cell.volume!).toBeCloseTo(volume, 6);
    const cellLine = `a, b, c ${cell.a.toFixed(3)}, ${cell.b.toFixed(3)}, ${cell.c.toFixed(3)} Å; ` +
      `α, β, γ ${cell.alpha.toFixed(2)}, ${cell.beta.toFixed(2)}, ${cell.gamma.toFixed(2)}°`;
    const hover = (await w.page.locator('#landscape-plot .hoverlayer .hovertext').first().textContent())!;
    expect(hover).toContain(`${cellLine}; V ${volume.toFixed(1)} Å³`);
    const facts = await w.page.$$eval('#panel-facts dt, #panel-facts dd', (n) => n.map((x) => x.textContent));
    expect(facts[facts.indexOf('Cell') + 1]).toBe(cellLine);
    expect(facts[facts.indexOf('Volume') + 1]).toBe(`${volume.toFixed(1)} Å³`);
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

  it('the printed summary and landscape.json show duplicates collapsed, two families, a levelled curve and a merged pair', () => {
    const rows = land.structures;
    // Duplicates collapsed: most minima are re-finds, and the lowest structures were each found several times.
    expect(land.counts.duplicate).toBeGreaterThan(land.counts.kept);
    const lowest = land.kept.slice(0, 5).map((k) => rows[k]!.members);
    expect(lowest.filter((m) => m >= 2).length).toBeGreaterThanOrEqual(4);
    expect(demo.summary[0]).toContain(`${land.counts.duplicate} duplicates collapsed`);
    // At least two families, none of them swallowing the landscape.
    expect(land.families.length).toBeGreaterThanOrEqual(2);
    for (const f of land.families) expect(f.members.length).toBeLessThan(land.counts.kept / 4);
    expect(demo.summary[1]).toMatch(new RegExp(`^families: ${land.families.length} `));
    // The curve within 5 kJ/mol is flat over the last quarter, and the verdict says so.
    const c = land.convergence as ConvergenceCurve;
    const n = rows.length;
    const at = (p: number) => c.points.filter((q) => q.processed <= p).at(-1)!.counts[0]!;
    expect(at(n)).toBe(at(Math.floor(n * 0.75)));
    expect(at(Math.floor(n * 0.25))).toBeLessThan(at(n));
    expect(c.verdict).toBe('levelled-off');
    expect(demo.summary[2]).toBe(`convergence: ${c.statement}`);
    // A pair the windows merge and the metric keeps apart, named in the summary.
    const w = compareWithWindows(land)!;
    const pair = w.example!;
    const a = rows[pair.a]!, b = rows[pair.b]!;
    expect(Math.abs(a.energyRel! - b.energyRel!)).toBeLessThanOrEqual(BIN_ENERGY_KJ_PER_MOL);
    expect(Math.abs(a.densityGPerCm3! - b.densityGPerCm3!)).toBeLessThanOrEqual(BIN_DENSITY_G_PER_CM3);
    expect(pair.emdAngstrom).toBeGreaterThan(2 * land.parameters.toleranceAngstrom);
    expect(land.edges.some(([i, j, d]) => ((i === pair.a && j === pair.b) || (i === pair.b && j === pair.a)) && d === pair.emdAngstrom)).toBe(true);
    expect(a.members).toBeGreaterThan(1);
    expect(b.members).toBeGreaterThan(1);
    expect(demo.summary[3]).toContain(`they would merge ${a.id} and ${b.id}`);
  });

  it('names the merged pair in the report and marks it on the plot', async () => {
    const w2 = compareWithWindows(land)!;
    const note = (await w.page.textContent('#windows-note'))!;
    const a = land.structures[w2.example!.a]!.id, b = land.structures[w2.example!.b]!.id;
    expect(note).toContain(`merge ${a} and ${b}`);
    expect(note).toContain(`${w2.example!.emdAngstrom.toFixed(3)} Å apart`);
    expect(await w.page.evaluate('window.polysiftReport.windowPair')).toEqual([w2.example!.a, w2.example!.b]);
    const annotations = (await w.page.evaluate('document.getElementById("landscape-plot").layout.annotations.map((x) => x.text)')) as string[];
    expect(annotations.some((t) => t.includes(a) && t.includes(b))).toBe(true);
    await (await w.page.$('#landscape-section'))!.screenshot({ path: join(SCREENS, 'demo-first-view.png') });
  });

  it('shows at first only a few lines per structure, and the controls reveal every line', async () => {
    const kept = land.counts.kept;
    const first = await linesState(w);
    expect(first.segments).toBe(first.shown);
    expect(first.shown).toBeGreaterThan(0);
    // at most one line per structure on average (its nearest neighbour, when that link is among the shortest)
    expect(first.shown).toBeLessThanOrEqual(kept);
    expect(first.shown).toBeLessThan(land.edges.length / 4);
    // More lines per structure, then no distance cut: every stored line.
    const maxRank = (await w.page.$$eval('#line-rank option', (o) => o.length)) - 1;
    await w.page.selectOption('#line-rank', String(maxRank));
    await w.page.$eval('#line-max', (el) => {
      const input = el as HTMLInputElement;
      input.value = input.max;
      input.dispatchEvent(new Event('input', { bubbles: true }));
    });
    const all = await linesState(w);
    expect(all.shown).toBe(land.edges.length);
    expect(all.segments).toBe(land.edges.length);
    expect(await w.page.textContent('#line-max-value')).toBe('any EMD');
    await (await w.page.$('#landscape-section'))!.screenshot({ path: join(SCREENS, 'demo-all-lines.png') });
    // Back to the first view's lines.
    await w.page.selectOption('#line-rank', '1');
    expect((await linesState(w)).shown).toBeLessThanOrEqual(kept);
  });

  it('opens zoomed on the lowest 10 kJ/mol, and one click shows every structure', async () => {
    const keptTrace = (await w.page.evaluate('window.polysiftReport.traces.kept')) as number;
    const countInside = async () => {
      const area = await plotArea(w.page, 'landscape-plot');
      const px = await tracePixels(w.page, 'landscape-plot', keptTrace);
      return px.filter(([x, y]) => x >= area.left - 0.5 && x <= area.right + 0.5 && y >= area.top - 0.5 && y <= area.bottom + 0.5).length;
    };
    const yRange = (await w.page.evaluate('document.getElementById("landscape-plot")._fullLayout.yaxis.range')) as number[];
    expect(yRange[1]).toBeGreaterThanOrEqual(10);
    expect(yRange[1]).toBeLessThan(11);
    const low = land.kept.filter((k) => land.structures[k]!.energyRel! <= 10).length;
    const inside = await countInside();
    expect(inside).toBeGreaterThanOrEqual(low);
    expect(inside).toBeLessThan(land.counts.kept);
    expect(await w.page.textContent('#view-note')).toContain(`Showing the ${inside} kept structures within 10 kJ/mol`);
    await w.page.click('#zoom-toggle');
    await w.page.waitForFunction('document.getElementById("landscape-plot")._fullLayout.yaxis.range[1] > 11');
    expect(await countInside()).toBe(land.counts.kept);
    expect(await w.page.textContent('#zoom-toggle')).toBe('Zoom to the lowest 10 kJ/mol');
    await (await w.page.$('#landscape-section'))!.screenshot({ path: join(SCREENS, 'demo-whole-landscape.png') });
    await w.page.click('#zoom-toggle');
    await w.page.waitForFunction('document.getElementById("landscape-plot")._fullLayout.yaxis.range[1] < 11');
  });

  it('says what the map shows and how far to trust it, folded when its stress is poor', async () => {
    const stress = land.embedding!.quality.find((q) => q.name === 'Kruskal stress-1')!.value;
    const note = (await w.page.textContent('#map-note'))!;
    expect(note).toContain(`Kruskal stress-1 ${stress.toFixed(2)}`);
    expect(note).toContain('trustworthiness');
    const open = (await w.page.evaluate('document.getElementById("map-fold").open')) as boolean;
    // Kruskal (Psychometrika 1964): 0.2 and above is poor.
    expect(open).toBe(stress < 0.2);
    if (!open) {
      expect(await w.page.evaluate('window.polysiftReport.mapDrawn === true')).toBe(false);
      await w.page.click('#map-summary');
      await w.page.waitForFunction('window.polysiftReport.mapDrawn === true');
      await (await w.page.$('#map-section'))!.screenshot({ path: join(SCREENS, 'demo-map-opened.png') });
    }
  });

  it('shows the convergence verdict with its rule, and spells an unassigned family "none" everywhere', async () => {
    expect(await w.page.textContent('#convergence-statement')).toBe(land.convergence!.statement);
    expect(await w.page.getAttribute('#convergence-statement', 'class')).toContain('ps-verdict-levelled-off');
    expect(await w.page.textContent('#convergence-rule')).toContain('last 25% of candidates');
    await (await w.page.$('#convergence-section'))!.screenshot({ path: join(SCREENS, 'demo-convergence.png') });
    const unassigned = land.kept.filter((k) => land.structures[k]!.family < 0).length;
    expect(await w.page.textContent('#family-legend')).toContain(`none (${unassigned})`);
    const familyCells = await w.page.$$eval('#kept-table tbody tr td:nth-child(5)', (c) => c.map((x) => x.textContent));
    expect(familyCells.length).toBeGreaterThan(0);
    for (const c of familyCells) expect(c).toMatch(/^(none|\d+)$/);
    expect(familyCells).toContain('none');
    const hover = (await w.page.evaluate('document.getElementById("landscape-plot").data[window.polysiftReport.traces.kept].text')) as string[];
    expect(hover.some((t) => t.includes('family: none'))).toBe(true);
    expect(hover.every((t) => !t.includes('unassigned') && !t.includes('family: -1'))).toBe(true);
    // the structure panel of a structure in no family
    const lone = land.kept.find((k) => land.structures[k]!.family < 0)!;
    await w.page.evaluate((i) => (window as unknown as { polysiftReport: { select(i: number, from: string): void } }).polysiftReport.select(i, 'test'), lone);
    const facts = await w.page.$$eval('#panel-facts dt, #panel-facts dd', (n) => n.map((x) => x.textContent));
    expect(facts[facts.indexOf('Family') + 1]).toBe('none');
  });

  it('flags nothing in the demo search and shades the gap the auto tolerance found on the histogram', async () => {
    // The demo's relaxed search leaves copies of one minimum within 0.004 Å and distinct minima 0.18 Å or more apart
    // with energies that differ: nothing to flag (flags on planted data are checked in report-flags.test.ts).
    expect(land.flagCounts).toEqual({ otherChemistryPairs: 0, otherChemistry: 0, energyMismatch: 0, flatMinimumPairs: 0, flatMinimum: 0 });
    expect(land.structures.every((r) => r.flags.length === 0)).toBe(true);
    expect(await w.page.textContent('#run-line')).not.toContain('flagged');
    const counts = await w.page.$$eval('#flags-table tbody tr td:first-of-type', (c) => c.map((x) => x.textContent));
    expect(counts).toEqual(['0', '0', '0']);
    expect(land.parameters.toleranceMode).toBe('auto');
    const tc = land.toleranceChoice!;
    expect(tc.clear).toBe(true);
    const dupMax = Math.max(...land.structures.filter((r) => r.status === 'duplicate').map((r) => r.distanceToKept!));
    expect(tc.gapLowAngstrom!).toBeGreaterThanOrEqual(dupMax);
    expect(land.parameters.toleranceAngstrom).toBeGreaterThan(dupMax);
    expect(await w.page.textContent('#nn-note')).toMatch(/Auto tolerance: the shaded band is the gap found between/);
    const band = await toleranceBands(w.page);
    expect(band).toHaveLength(1);
    expect(band[0]![0]).toBeCloseTo(Math.log10(tc.gapLowAngstrom!), 9);
    expect(w.consoleErrors).toEqual([]);
  });
});
