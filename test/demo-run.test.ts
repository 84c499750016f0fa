// The demo (issue 5 item 7): an invented search written as inputs (multi-block CIF, energies CSV, truth), sifted,
// with every output file written; sift keeps exactly the planted packings. A smaller search than the default
// keeps this test short; the default one is what `polysift demo` runs.
import { describe, expect, it } from 'vitest';
import { existsSync, mkdtempSync, readFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { runDemo, DEMO_GENERATOR } from '../src/demo/run-demo.js';

describe('demo', () => {
  it('writes its invented inputs, sifts them and keeps exactly the planted packings', async () => {
    const out = mkdtempSync(join(tmpdir(), 'polysift-demo-'));
    const r = await runDemo({ out, threads: 2, generator: { ...DEMO_GENERATOR, packings: 10, copiesPerPacking: 5, closePairs: 2 } });
    expect(r.planted).toBe(10);
    expect(r.structures).toBe(50);
    expect(r.kept).toBe(r.planted);
    expect(r.ariSift).toBe(1);
    for (const f of ['demo-search.cif', 'demo-energies.csv', 'demo-truth.csv', 'structures.csv', 'unique.csv', 'unique.cif', 'landscape.json', 'report.html'])
      expect(existsSync(join(out, f)), f).toBe(true);
    const landscape = JSON.parse(readFileSync(join(out, 'landscape.json'), 'utf8'));
    expect(landscape.counts.kept).toBe(10);
    expect(readFileSync(join(out, 'unique.cif'), 'utf8').match(/^data_/gm)).toHaveLength(10);
    // The default demo is a few hundred structures (issue 5: well under a minute).
    expect(DEMO_GENERATOR.packings * DEMO_GENERATOR.copiesPerPacking).toBeGreaterThanOrEqual(200);
  }, 60000);
});
