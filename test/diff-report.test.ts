// The diff report in headless Chromium from file:// (test/helpers/browser.ts), as for the sift report: no request
// leaves the file, no console or page errors, and what the page shows equals the diff it was made from.
import { mkdtempSync, readFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { Browser } from 'playwright-core';
import { mkdirSync } from 'node:fs';
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

  it('a diff whose matched pairs all share one energy shift gets a readable shift axis (issue 14)', async () => {
    // Run A holds one extra structure 0.2693 kJ/mol below every shared one; the shared structures have the same
    // energies in both runs, so every matched pair's energy above its run's lowest shifts by exactly -0.2693
    // (up to floating-point rounding, which is what used to fill the axis), and densities by -0.00001 g/cm3.
    const { A, B } = pairedRuns(21, 10, 9, 1, 0, 0.004, 0.2);
    const shared = A.filter((s) => s.id.startsWith('a-shared-'));
    const lowest = Math.min(...shared.map((s) => s.energy as number));
    A.find((s) => s.id.startsWith('a-only-'))!.energy = lowest - 0.2693;
    for (const b of B) {
      const a = A.find((s) => s.id === b.id.replace('b-', 'a-'))!;
      b.energy = (a.energy as number) + 1e-13;
      b.densityGPerCm3 = a.densityGPerCm3 - 0.00001;
    }
    const d = await diffLandscapes(landscapeOf(A, 10), landscapeOf(B, 10), 'runs/a', 'runs/b', { threads: 1 });
    expect(d.counts.both).toBe(9);
    for (const p of d.pairs) expect(p.energyRelShift!).toBeCloseTo(-0.2693, 9);
    const dir = mkdtempSync(join(tmpdir(), 'polysift-diff-shift-'));
    writeDiffOutputs(dir, d, 'Constant shift');
    const w = await openFile(browser, join(dir, 'report.html'));
    expect(w.consoleErrors).toEqual([]);
    expect(w.pageErrors).toEqual([]);
    const page = w.page;
    // Tick labels of the shift axis: short, rounded numbers (at most 2 decimals), spanning the shift and zero.
    const ticks = await page.$$eval('#shift-plot .ytick text', (t) => t.map((x) => x.textContent ?? ''));
    expect(ticks.length).toBeGreaterThanOrEqual(3);
    for (const t of ticks) expect(t.replace('\u2212', '-')).toMatch(/^-?\d+(\.\d{1,2})?$/);
    const values = ticks.map((t) => Number(t.replace('\u2212', '-')));
    expect(Math.min(...values)).toBeLessThanOrEqual(-0.2);
    expect(Math.max(...values)).toBeGreaterThanOrEqual(0);
    // The labels do not overlap each other or the axis title.
    const boxes = await page.$$eval('#shift-plot .ytick text, #shift-plot .ytitle', (t) => t.map((x) => x.getBoundingClientRect().toJSON() as DOMRect));
    for (let i = 0; i < boxes.length; i++)
      for (let j = i + 1; j < boxes.length; j++) {
        const a = boxes[i]!, b = boxes[j]!;
        const overlap = a.left < b.right && b.left < a.right && a.top < b.bottom && b.top < a.bottom;
        expect(overlap, `labels ${i} and ${j} overlap`).toBe(false);
      }
    expect(await page.textContent('#shift-note')).toContain('Every matched pair shifted by the same -0.27 kJ/mol');
    // The density shift of -0.00001 g/cm3 prints as 0.0000, without a sign.
    const densityCells = await page.$$eval('#pairs-table tbody tr td:nth-child(9)', (c) => c.map((x) => x.textContent));
    expect(densityCells.length).toBe(9);
    for (const c of densityCells) expect(c).toBe('0.0000');
    const screens = join(process.cwd(), 'reports', 'test-screens');
    mkdirSync(screens, { recursive: true });
    await (await page.$('#shift-section'))!.screenshot({ path: join(screens, 'diff-constant-shift.png') });
    await w.context.close();
  });
});
