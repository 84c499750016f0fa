// Flags in the sift report, in headless Chromium: a generated landscape whose truth is known (src/demo/landscape.ts)
// with two planted flat minima (a packing and two copies with the molecule turned by 1.5 degrees in the same cell,
// at the same energy) and two copies whose energies are 2-5 kJ/mol off, sifted with the auto tolerance. The run line,
// the flags table, the table filter and the structure panel show exactly the flagged structures of landscape.json,
// and those are the planted ones; the histogram shades the gap auto chose. (The demo search has no flat minimum since
// issue 14's search, so these checks, which issue 10 made on the demo's report, run here on planted data.)
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { mkdirSync, mkdtempSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import type { Browser } from 'playwright-core';
import { generateLandscape, type GeneratedLandscape } from '../src/demo/landscape.js';
import { sift } from '../src/landscape/sift.js';
import { renderSiftReport } from '../src/report/sift-report.js';
import { FLAG_CODES } from '../src/landscape/flags.js';
import type { Landscape } from '../src/landscape/schema.js';
import { launchChromium, openFile, toleranceBands, type PageWatch } from './helpers/browser.js';

const SCREENS = join(process.cwd(), 'reports', 'test-screens');

describe('flags in the sift report', () => {
  let browser: Browser;
  let w: PageWatch;
  let g: GeneratedLandscape;
  let land: Landscape;

  beforeAll(async () => {
    // Seed 51 leaves both planted triples as three kept structures each (checked in test/sift-flags.test.ts too).
    g = generateLandscape({
      seed: 51, packings: 12, copiesPerPacking: 4, closePairs: 3, closeTurnDeg: 2, flatTriples: 2, flatTurnDeg: 1.5,
      energyFaults: 2, energyNoiseKjPerMol: 0.002, noiseAngstrom: 0.002, squeezeMoves: 200,
    });
    const dir = mkdtempSync(join(tmpdir(), 'polysift-report-flags-'));
    writeFileSync(join(dir, 'run.cif'), g.cif);
    writeFileSync(join(dir, 'energies.csv'), g.energiesCsv);
    const [run, launched] = await Promise.all([
      sift({ inputs: [join(dir, 'run.cif')], energiesFile: join(dir, 'energies.csv'), threads: 2, cacheDir: null }),
      launchChromium(),
    ]);
    land = run.landscape;
    browser = launched;
    writeFileSync(join(dir, 'report.html'), renderSiftReport(land, { title: 'Planted flags' }));
    w = await openFile(browser, join(dir, 'report.html'));
  }, 600_000);

  afterAll(async () => {
    await browser?.close();
  });

  it('landscape.json flags the planted structures and no others', () => {
    const flat = land.structures.filter((r) => r.flags.includes(FLAG_CODES.flatMinimum));
    const plantedFlat = new Set(g.flatGroups.flat());
    expect(flat).toHaveLength(6);
    for (const r of flat) expect(plantedFlat.has(g.truth[r.index]!)).toBe(true);
    const mismatch = land.structures.filter((r) => r.flags.includes(FLAG_CODES.energyMismatch)).map((r) => r.index);
    expect(mismatch.sort((a, b) => a - b)).toEqual(g.energyFaults.map(([i]) => i).sort((a, b) => a - b));
    expect(land.flagCounts).toEqual({ otherChemistryPairs: 0, otherChemistry: 0, energyMismatch: 2, flatMinimumPairs: 6, flatMinimum: 6 });
  });

  it('counts the flags in the run line and the summary table', async () => {
    expect(w.consoleErrors).toEqual([]);
    expect(w.pageErrors).toEqual([]);
    expect(await w.page.textContent('#run-line')).toContain('flagged: 2 energy mismatch, 6 flat minimum');
    const rows = await w.page.$$eval('#flags-table tbody tr', (r) => r.map((x) => [x.querySelector('th')!.textContent, x.querySelector('td')!.textContent]));
    expect(rows).toEqual([['other-chemistry', '0'], ['energy-mismatch', '2'], ['flat-minimum', '6 (6 pairs)']]);
  });

  it('lists the flat minima when the table is filtered by the flag, and the panel names the partners', async () => {
    const flat = land.structures.filter((r) => r.flags.includes(FLAG_CODES.flatMinimum));
    await w.page.fill('#table-filter', 'flat-minimum');
    await w.page.waitForFunction((n) => document.querySelectorAll('#kept-table tbody tr').length === n, flat.length, { timeout: 15_000 });
    const ids = await w.page.locator('#kept-table tbody tr td:first-child').allTextContents();
    expect(ids.sort()).toEqual(flat.map((r) => r.id).sort());
    await w.page.evaluate((i) => (window as unknown as { polysiftReport: { select: (i: number) => void } }).polysiftReport.select(i), flat[0]!.index);
    await w.page.waitForFunction((want) => document.getElementById('panel-id')?.textContent === want, flat[0]!.id, { timeout: 15_000 });
    const facts = (await w.page.textContent('#panel-facts'))!;
    expect(facts).toContain('flat-minimum with');
    expect(flat[0]!.flatPartners.length).toBeGreaterThan(0);
    for (const partner of flat[0]!.flatPartners) expect(facts).toContain(partner);
    await w.page.fill('#table-filter', '');
  });

  it('shows a copy with a faulty energy among its kept structure\'s members, with its offset', async () => {
    const [fault] = g.energyFaults[0]!;
    const row = land.structures[fault]!;
    const owner = row.status === 'duplicate' ? row.keptIndex! : land.structures.find((r) => r.status === 'duplicate' && r.keptIndex === fault)!.keptIndex!;
    await w.page.evaluate((i) => (window as unknown as { polysiftReport: { select: (i: number) => void } }).polysiftReport.select(i), owner);
    await w.page.waitForFunction((want) => document.getElementById('panel-id')?.textContent === want, land.structures[owner]!.id, { timeout: 15_000 });
    const text = row.status === 'duplicate'
      ? (await w.page.locator('#members-table tbody tr', { hasText: row.id }).textContent())!
      : (await w.page.textContent('#panel-facts'))!;
    expect(text).toContain('energy-mismatch');
    // the members table gives the offset to 2 decimals, the panel's facts to 3
    expect(text).toContain(row.energyOffset!.toFixed(row.status === 'duplicate' ? 2 : 3));
    mkdirSync(SCREENS, { recursive: true });
    await (await w.page.$('.ps-row-table'))!.screenshot({ path: join(SCREENS, 'flags-panel.png') });
  });

  it('shades the gap the auto tolerance found on the nearest-neighbour histogram', async () => {
    const tc = land.toleranceChoice!;
    expect(land.parameters.toleranceMode).toBe('auto');
    expect(tc.clear).toBe(true);
    expect(await w.page.textContent('#nn-note')).toMatch(/Auto tolerance: the shaded band is the gap found between/);
    const band = await toleranceBands(w.page);
    expect(band).toHaveLength(1);
    expect(band[0]![0]).toBeCloseTo(Math.log10(tc.gapLowAngstrom!), 9);
    expect(band[0]![1]).toBeCloseTo(Math.log10(tc.gapHighAngstrom!), 9);
  });
});
