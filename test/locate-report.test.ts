// The locate report in headless Chromium from file:// (test/helpers/browser.ts): no request leaves the file,
// no console or page errors, and the page shows what locate found (values from the generated truth).
import { mkdtempSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { Browser } from 'playwright-core';
import { launchChromium, openFile } from './helpers/browser.js';
import { generateLandscape } from '../src/demo/landscape.js';
import { readCifText } from '../src/io/read.js';
import { referenceInvariants } from '../src/landscape/references.js';
import { locateReferences } from '../src/landscape/locate.js';
import { writeLocateOutputs } from '../src/landscape/locate-files.js';
import { landscapeOf, type SyntheticStructure } from './diff-fixtures.js';
import type { CrystalRecord } from '../src/types.js';

const K = 24;
let browser: Browser;
beforeAll(async () => { browser = await launchChromium(); });
afterAll(async () => { await browser?.close(); });

describe('locate report', () => {
  it('opens offline without errors and marks a found and a missing reference', async () => {
    const g = generateLandscape({ seed: 4, packings: 4, copiesPerPacking: 2, closePairs: 0, squeezeMoves: 200 });
    const recs: CrystalRecord[] = readCifText(g.cif, 'gen.cif').map((r) => {
      if (r.kind !== 'record') throw new Error(r.rejected.reason);
      return r.record;
    });
    const first = (p: number, copy: number) => recs[g.ids.findIndex((_id, i) => g.truth[i] === p && g.kinds[i] === (copy === 0 ? 'standard' : 'other-cell'))];
    const kept: SyntheticStructure[] = [];
    for (let p = 0; p < 3; p++) {
      const inv = referenceInvariants(first(p, 0), K, 'keep');
      kept.push({ id: first(p, 0).id, pdd: { rows: Array.from(inv.pdd.rows), weights: Array.from(inv.pdd.weights) }, energy: first(p, 0).energy ?? g.energiesKjPerMol[g.ids.indexOf(first(p, 0).id)], densityGPerCm3: inv.densityGPerCm3 as number, composition: inv.composition });
    }
    const landscape = landscapeOf(kept, K);
    const refs = [referenceInvariants(first(1, 1), K, 'keep'), referenceInvariants(first(3, 1), K, 'keep')];
    const result = await locateReferences(landscape, 'generated', refs, { threads: 1 });
    result.unusable = [{ source: 'refs.cif#bad<b>', line: 3, reason: 'no _cell_length_b' }];
    const dir = mkdtempSync(join(tmpdir(), 'polysift-locate-report-'));
    writeLocateOutputs(dir, result, landscape, 'Known forms <of> orvazinone');

    const w = await openFile(browser, join(dir, 'report.html'));
    expect(w.blocked).toEqual([]);
    expect(w.failed).toEqual([]);
    expect(w.consoleErrors).toEqual([]);
    expect(w.pageErrors).toEqual([]);
    const page = w.page;
    expect(await page.textContent('#page-title')).toBe('Known forms <of> orvazinone');
    const items = await page.$$eval('#found-list li', (li) => li.map((x) => [x.getAttribute('data-found'), x.textContent]));
    expect(items.map((x) => x[0])).toEqual(['yes', 'no']);
    expect(items[0][1]).toContain(`found as ${first(1, 0).id}`);
    expect(await page.textContent('#unusable-list')).toContain('refs.cif#bad<b> (line 3): no _cell_length_b');
    // the plot holds one star (the found reference) and two dashed density lines
    const plot = await page.evaluate(() => {
      const gd = document.getElementById('landscape-plot') as unknown as { data: Array<{ marker?: { symbol?: string }; x: number[] }>; layout: { shapes: unknown[] } };
      return { stars: gd.data.filter((t) => t.marker?.symbol === 'star').map((t) => t.x.length), shapes: gd.layout.shapes.length };
    });
    expect(plot).toEqual({ stars: [1], shapes: 2 });
    expect(await page.$$eval('#reference-tables table tbody tr', (rows) => rows.length)).toBe(6);
    // These kept structures are in no family: the Family column says "none", as the sift report does (issue 14).
    const families = await page.$$eval('#reference-tables table tbody tr td:nth-child(9)', (c) => c.map((x) => x.textContent));
    expect(families).toEqual(Array(6).fill('none'));
    await w.context.close();
  });
});
