// The diff report in headless Chromium from file:// (test/helpers/browser.ts), as for the sift report: no request
// leaves the file, no console or page errors, and what the page shows equals the diff it was made from.
import { mkdtempSync, readFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { Browser } from 'playwright-core';
import { launchChromium, openFile } from './helpers/browser.js';
import { diffLandscapes } from '../src/landscape/diff.js';
import { writeDiffOutputs, DIFF_PAIR_COLUMNS, DIFF_STRUCTURE_COLUMNS } from '../src/landscape/diff-files.js';
import { landscapeOf, pairedRuns } from './diff-fixtures.js';
import { tableHeaders } from '../src/io/tables.js';

let browser: Browser;
beforeAll(async () => { browser = await launchChromium(); });
afterAll(async () => { await browser?.close(); });

describe('diff report', () => {
  it('opens offline without errors and shows the counts, pairs and lines of the diff', async () => {
    const { A, B } = pairedRuns(8, 10, 12, 4, 5, 0.004, 0.2);
    // an id that would be markup if it reached the page as HTML
    A[0].id = '<img src=x onerror=alert(1)>';
    const d = await diffLandscapes(landscapeOf(A, 10), landscapeOf(B, 10), 'runs/a', 'runs/b', { threads: 1 });
    const dir = mkdtempSync(join(tmpdir(), 'polysift-diff-report-'));
    writeDiffOutputs(dir, d, 'Run A <vs> run B');

    // The CSVs hold one row per kept structure / matched pair, with the documented columns.
    const structuresCsv = readFileSync(join(dir, 'diff-structures.csv'), 'utf8').trim().split('\n');
    expect(structuresCsv[0]).toBe(tableHeaders(DIFF_STRUCTURE_COLUMNS, d.energyUnit).join(','));
    expect(structuresCsv[0]).toBe('run,id,source,presence,energy_rank,energy_rel_kj_per_mol,density_g_per_cm3,space_group,partner,partner_distance_angstrom,nearest_other,nearest_other_distance_angstrom,z_prime,composition,flags,flat_minimum_with,flat_minimum_distance_angstrom');
    expect(structuresCsv.length - 1).toBe(A.length + B.length);
    const pairsCsv = readFileSync(join(dir, 'diff-pairs.csv'), 'utf8').trim().split('\n');
    expect(pairsCsv[0]).toBe(tableHeaders(DIFF_PAIR_COLUMNS, d.energyUnit).join(','));
    expect(pairsCsv.length - 1).toBe(12);
    expect(JSON.parse(readFileSync(join(dir, 'diff.json'), 'utf8')).counts).toEqual(d.counts);

    const w = await openFile(browser, join(dir, 'report.html'));
    expect(w.blocked).toEqual([]);
    expect(w.failed).toEqual([]);
    expect(w.consoleErrors).toEqual([]);
    expect(w.pageErrors).toEqual([]);
    expect(w.dialogs).toEqual([]);
    const page = w.page;
    expect(await page.textContent('#page-title')).toBe('Run A <vs> run B');
    const counts = await page.$$eval('#counts-table tr', (rows) => rows.map((r) => r.textContent));
    expect(counts.slice(0, 3)).toEqual(['In both runs12', 'Only in A4', 'Only in B5']);
    expect(await page.textContent('#summary-statement')).toContain(`Spearman’s rank correlation of the energies over 12 matched pairs: ${(d.spearman as number).toFixed(4)}`);
    expect(await page.$$eval('#pairs-table tbody tr', (r) => r.length)).toBe(12);
    expect(await page.$$eval('#only-a-table tbody tr', (r) => r.length)).toBe(4);
    expect(await page.$$eval('#only-b-table tbody tr', (r) => r.length)).toBe(5);
    // Lines: every matched pair appears once as a segment (two points and a gap) across the EMD colour classes.
    const plot = await page.evaluate(() => {
      const gd = document.getElementById('overlay-plot') as unknown as { data: Array<{ mode: string; x: Array<number | null> }> };
      const lines = gd.data.filter((t) => t.mode === 'lines');
      const markers = gd.data.filter((t) => t.mode === 'markers');
      return { segments: lines.reduce((s, t) => s + t.x.filter((v) => v === null).length, 0), points: markers.slice(0, 4).map((t) => t.x.length) };
    });
    expect(plot.segments).toBe(12);
    expect(plot.points).toEqual([12, 4, 12, 5]);
    // Turning the lines off hides them.
    await page.click('#show-pair-lines');
    const hidden = await page.evaluate(() => (document.getElementById('overlay-plot') as unknown as { data: Array<{ mode: string; visible?: boolean }> }).data.filter((t) => t.mode === 'lines').every((t) => t.visible === false));
    expect(hidden).toBe(true);
    // The hostile id is shown as text.
    expect(await page.locator('img').count()).toBe(0);
    await w.context.close();
  });
});
