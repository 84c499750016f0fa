// Flags on generated landscapes whose truth is known (issue 10, parts 2 and 5; src/landscape/flags.ts):
//  - a few copies carry energies 2-5 kJ/mol off their group (either sign): exactly those are flagged
//    energy-mismatch, with their offset from the group's median energy, even when a too-low copy became the kept one;
//  - planted flat minima (one packing and two copies of it with the molecule turned by 1.5 degrees in the same
//    cell, at the same energy, as an optimiser leaves a flat minimum): every planted pair left as two kept
//    structures just beyond the tolerance is flagged flat-minimum, and nothing else is, in particular no pair
//    of the close partners (distinct minima turned by 2 degrees, 0.02-0.08 kJ/mol apart).
import { describe, expect, it } from 'vitest';
import { mkdtempSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import Papa from 'papaparse';
import { generateLandscape, type GeneratorOptions } from '../src/demo/landscape.js';
import { sift } from '../src/landscape/sift.js';
import { siftFiles } from '../src/landscape/sift-files.js';
import { emd } from '../src/metric/emd.js';
import { FLAG_CODES, flatWindowAngstrom } from '../src/landscape/flags.js';
import { readCifText } from '../src/io/read.js';
import { toPeriodicSet } from '../src/geometry/periodic-set.js';
import { pdd } from '../src/invariants/pdd.js';

async function siftGenerated(o: GeneratorOptions) {
  const g = generateLandscape(o);
  const dir = mkdtempSync(join(tmpdir(), 'polysift-flags-'));
  writeFileSync(join(dir, 'run.cif'), g.cif);
  writeFileSync(join(dir, 'energies.csv'), g.energiesCsv);
  const run = await sift({ inputs: [join(dir, 'run.cif')], energiesFile: join(dir, 'energies.csv'), threads: 2, cacheDir: null });
  return { g, run, l: run.landscape };
}

describe('energy-inconsistent duplicates', async () => {
  const { g, run, l } = await siftGenerated({ seed: 53, packings: 6, copiesPerPacking: 5, closePairs: 1, energyFaults: 3, squeezeMoves: 200 });

  it('flags exactly the copies planted 2-5 kJ/mol off their group, whichever sign', () => {
    expect(g.energyFaults).toHaveLength(3);
    expect(g.energyFaults.some(([, f]) => f < 0)).toBe(true);
    // The grouping itself is right (faults change energies, not geometry).
    expect(l.counts.kept).toBe(6);
    const flagged = l.structures.filter((r) => r.flags.includes(FLAG_CODES.energyMismatch)).map((r) => r.index);
    expect(flagged).toEqual(g.energyFaults.map(([i]) => i));
    for (const [i, fault] of g.energyFaults) {
      // Offset from the group's median: the fault, give or take the copies' own energy noise (0.02 kJ/mol).
      expect(Math.abs(l.structures[i].energyOffset! - fault)).toBeLessThan(0.15);
    }
    for (const r of l.structures) if (!flagged.includes(r.index) && r.energyOffset !== null) expect(Math.abs(r.energyOffset)).toBeLessThan(0.2);
    expect(l.flagCounts.energyMismatch).toBe(3);
    expect(run.messages.join('\n')).toMatch(/3 member\(s\) of duplicate groups lie more than 1 kJ\/mol from their group's median energy/);
  });

  it('writes the flag and the offset, with its unit in the column name, to structures.csv', () => {
    const csv = Papa.parse<Record<string, string>>(new Map(siftFiles(run, { report: false })).get('structures.csv')!, { header: true, skipEmptyLines: true }).data;
    for (const [i, fault] of g.energyFaults) {
      expect(csv[i].flags).toBe(FLAG_CODES.energyMismatch);
      expect(Number(csv[i].energy_offset_kj_per_mol)).toBeCloseTo(l.structures[i].energyOffset!, 5);
      expect(Math.sign(Number(csv[i].energy_offset_kj_per_mol))).toBe(Math.sign(fault));
    }
  });
});

describe('flat minima', () => {
  for (const seed of [51, 52, 53]) {
    it(`flags the planted flat pairs left as two kept structures, and no close partners (seed ${seed})`, async () => {
      const { g, l } = await siftGenerated({
        seed, packings: 12, copiesPerPacking: 4, closePairs: 3, closeTurnDeg: 2, flatTriples: 2, flatTurnDeg: 1.5,
        energyNoiseKjPerMol: 0.002, noiseAngstrom: 0.002, squeezeMoves: 200,
      });
      const tol = l.parameters.toleranceAngstrom;
      const truth = (i: number) => g.truth[i];
      const planted = new Set<string>();
      for (const [a, b, c] of g.flatGroups) for (const [x, y] of [[a, b], [a, c], [b, c]]) planted.add(`${Math.min(x, y)},${Math.max(x, y)}`);
      // Kept structures by packing, and their PDDs (to measure where each planted pair lies).
      const blocks = readCifText(g.cif, 'run.cif');
      const pddOf = (i: number) => {
        const b = blocks[i];
        if (b.kind !== 'record') throw new Error('generated block rejected');
        return pdd(toPeriodicSet(b.record, { hydrogens: 'keep' }).set, l.parameters.k);
      };
      const keptOfPacking = new Map<number, number[]>();
      for (const k of l.kept) keptOfPacking.set(truth(k), [...(keptOfPacking.get(truth(k)) ?? []), k]);
      const flaggedPairs = new Set<string>();
      for (const r of l.structures) {
        if (!r.flags.includes(FLAG_CODES.flatMinimum)) continue;
        expect(r.status).toBe('kept');
        for (const q of r.flatPartnerIndices) {
          const [x, y] = [truth(r.index), truth(q)];
          flaggedPairs.add(`${Math.min(x, y)},${Math.max(x, y)}`);
        }
      }
      // Nothing but planted flat pairs is flagged: in particular no close partner pair.
      for (const p of flaggedPairs) expect(planted.has(p)).toBe(true);
      for (const [a, b] of g.closePairs) expect(flaggedPairs.has(`${Math.min(a, b)},${Math.max(a, b)}`)).toBe(false);
      // Every planted pair kept as two structures just beyond the tolerance is flagged.
      let inWindow = 0;
      for (const p of planted) {
        const [x, y] = p.split(',').map(Number);
        const kx = keptOfPacking.get(x);
        const ky = keptOfPacking.get(y);
        if (!kx || !ky || kx.length !== 1 || ky.length !== 1) continue;
        const d = emd(pddOf(kx[0]), pddOf(ky[0]));
        if (d > tol && d <= flatWindowAngstrom(tol)) {
          inWindow++;
          expect(flaggedPairs.has(p)).toBe(true);
        }
      }
      expect(inWindow).toBeGreaterThanOrEqual(3);
      expect(l.flagCounts.flatMinimumPairs).toBe(flaggedPairs.size);
      expect(l.flagCounts.energyMismatch).toBe(0);
    }, 60000);
  }
});
