// The convergence curve sift stores in landscape.json, on generated runs (src/demo/landscape.ts) whose input order
// is arranged from the generator's truth: (1) every packing first appears in the first half, the second half only
// re-finds them, so the curve must be flat over the second half and say "Not growing"; (2) the lowest-energy
// packing first appears in the last quarter, so the statement must say the low-energy part is still growing
// (the verdict rule of src/landscape/convergence.ts; the statements' wording changed with issue 14).
import { mkdtempSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { generateLandscape } from '../src/demo/landscape.js';
import { readCifText } from '../src/io/read.js';
import { sift } from '../src/landscape/sift.js';
import type { ConvergenceCurve } from '../src/landscape/schema.js';

const gen = generateLandscape({ seed: 11, packings: 8, copiesPerPacking: 6, closePairs: 2 });
const texts = readCifText(gen.cif, 'generated.cif').map((r) => {
  if (r.kind !== 'record') throw new Error(r.rejected.reason);
  return r.record.text;
});
const n = gen.ids.length;

async function siftInOrder(order: number[]) {
  const dir = mkdtempSync(join(tmpdir(), 'polysift-conv-'));
  writeFileSync(join(dir, 'run.cif'), order.map((i) => texts[i]).join('\n'));
  writeFileSync(join(dir, 'energies.csv'), gen.energiesCsv);
  return (await sift({ inputs: [join(dir, 'run.cif')], energiesFile: join(dir, 'energies.csv'), threads: 2, cacheDir: null })).landscape;
}

/** Counts after `processed` candidates, read off the stored staircase corners. */
function countsAt(c: ConvergenceCurve, processed: number): number[] {
  let last = c.points[0].counts;
  for (const p of c.points) {
    if (p.processed > processed) break;
    last = p.counts;
  }
  return last;
}

describe('convergence curve of sifted generated runs', () => {
  it('is flat over the second half when new packings stop appearing halfway, and says so', async () => {
    // First half: the first copy of every packing, then other copies; second half: the remaining copies.
    const firsts = Array.from({ length: 8 }, (_p, p) => Array.from(gen.truth).indexOf(p));
    const rest = gen.ids.map((_id, i) => i).filter((i) => !firsts.includes(i));
    const order = [...firsts, ...rest];
    const l = await siftInOrder(order);
    const c = l.convergence as ConvergenceCurve;
    expect(c.windows).toEqual([5, 10, 20]);
    const half = countsAt(c, n / 2);
    for (let p = n / 2; p <= n; p++) expect(countsAt(c, p)).toEqual(half);
    // the final counts are the kept structures within each window, recounted from the landscape
    expect(countsAt(c, n)).toEqual(c.windows.map((w) => l.kept.filter((i) => (l.structures[i].energyRel as number) <= w).length));
    expect(half[2]).toBe(8);
    expect(c.stillGrowing).toBe(false);
    expect(c.verdict).toBe('levelled-off');
    expect(c.statement).toMatch(/^Levelled off: none of the \d+ distinct structures within 5 kJ\/mol of the lowest energy was first found in the last 12 of 48 candidates/);
  });

  it('says the low-energy part is still growing when the lowest packing first appears in the last quarter', async () => {
    const lowest = gen.packings.reduce((b, p, i) => (p.energyKjPerMol < gen.packings[b].energyKjPerMol ? i : b), 0);
    const others = gen.ids.map((_id, i) => i).filter((i) => gen.truth[i] !== lowest);
    const mine = gen.ids.map((_id, i) => i).filter((i) => gen.truth[i] === lowest);
    const l = await siftInOrder([...others, ...mine]);
    const c = l.convergence as ConvergenceCurve;
    expect(c.stillGrowing).toBe(true);
    expect(c.verdict).toBe('growing');
    // the lowest structure itself found only in the last quarter: growing, whatever the counts (the rule's first clause)
    expect(c.statement).toMatch(/^Still growing: the lowest-energy structure itself was first found at candidate \d+, in the last 12 of 48 candidates/);
    expect(c.tail.lowestFirstFoundAt).toBe(others.length + 1);
    // the step happens exactly where the lowest packing's first copy sits
    expect(countsAt(c, others.length + 1)[0] - countsAt(c, others.length)[0]).toBe(1);
  });
});
