// locate on a generated landscape (src/demo/landscape.ts: known packings, each written several ways with noise).
// The landscape holds one copy of each of 8 packings; references are other copies of some of them in another
// cell and setting, with their own noise, and one packing left out of the landscape. The truth (which packing
// a block is) comes from the generator; energy ranks are recounted here from the generator's energies.
import { describe, expect, it } from 'vitest';
import { generateLandscape } from '../src/demo/landscape.js';
import { readCifText } from '../src/io/read.js';
import { referenceInvariants } from '../src/landscape/references.js';
import { locateReferences, locateSentence } from '../src/landscape/locate.js';
import { cellVolume } from '../src/geometry/cell.js';
import { validateLandscape } from '../src/landscape/load.js';
import { emd } from '../src/metric/emd.js';
import type { CrystalRecord } from '../src/types.js';
import type { HydrogenPolicy } from '../src/landscape/schema.js';
import { landscapeOf, type SyntheticStructure } from './diff-fixtures.js';

const K = 30;
const g = generateLandscape({ seed: 23, packings: 9, copiesPerPacking: 6, closePairs: 0, squeezeMoves: 200 });
const records = new Map<string, CrystalRecord>();
for (const r of readCifText(g.cif, 'generated.cif')) {
  if (r.kind !== 'record') throw new Error(`generated block rejected: ${r.rejected.reason}`);
  records.set(r.record.id, r.record);
}
/** Block id of packing p written in the given way. */
function blockOf(p: number, kind: string): string {
  const n = g.ids.findIndex((_id, i) => g.truth[i] === p && g.kinds[i] === kind);
  if (n < 0) throw new Error(`no ${kind} copy of packing ${p}`);
  return g.ids[n];
}
const ABSENT = 8;

function buildLandscape(hydrogens: HydrogenPolicy) {
  const kept: SyntheticStructure[] = [];
  for (let p = 0; p < 8; p++) {
    const id = blockOf(p, 'standard');
    const rec = records.get(id)!;
    const inv = referenceInvariants(rec, K, hydrogens);
    const n = g.ids.indexOf(id);
    const volume = cellVolume(rec.cell);
    kept.push({
      id, pdd: { rows: Array.from(inv.pdd.rows), weights: Array.from(inv.pdd.weights) }, energy: g.energiesKjPerMol[n], densityGPerCm3: inv.densityGPerCm3 as number,
      cell: { ...rec.cell, volume }, atoms: Math.round(volume / (inv.volumePerAtomA3 as number)), composition: inv.composition,
    });
  }
  return validateLandscape(landscapeOf(kept, K, { hydrogens, toleranceAngstrom: 0.05 }), 'generated');
}

/** Expected energy rank of packing p's kept copy among the 8 kept copies. */
function expectedRank(p: number): number {
  const e = (q: number) => g.energiesKjPerMol[g.ids.indexOf(blockOf(q, 'standard'))];
  let rank = 1;
  for (let q = 0; q < 8; q++) if (e(q) < e(p)) rank++;
  return rank;
}

describe('locate on a generated landscape', () => {
  for (const hydrogens of ['keep', 'drop'] as const) {
    it(`finds references written in another cell and setting at the right energy rank (hydrogens ${hydrogens})`, async () => {
      const landscape = buildLandscape(hydrogens);
      const planted = [0, 3, 5, 6];
      const refs = planted.map((p) => referenceInvariants(records.get(blockOf(p, 'other-setting'))!, K, hydrogens));
      refs.push(referenceInvariants(records.get(blockOf(2, 'p1-supercell'))!, K, hydrogens));
      const result = await locateReferences(landscape, 'generated', refs, { threads: 1 });
      expect(result.scale).toBe('volume');
      const truthOf = [...planted, 2];
      result.references.forEach((r, q) => {
        const p = truthOf[q];
        expect(r.found).toBe(true);
        expect(r.decision.rule).toBe('within-tolerance');
        expect(r.match!.id).toBe(blockOf(p, 'standard'));
        expect(r.match!.energyRank).toBe(expectedRank(p));
        // copies differ only by the generator's noise: well inside the duplicate tolerance, with or without the scale
        expect(r.match!.emdAngstrom).toBeLessThan(0.05);
        expect(r.match!.distanceAngstrom).toBeLessThan(0.05);
        // the same crystal in another cell has the same volume per atom (a supercell included)
        expect(r.match!.scaleFactor!).toBeCloseTo(1, 3);
        // the next nearest is a different packing, clearly farther
        expect(r.nearest.length).toBe(5);
        expect(r.nearest[1].distanceAngstrom).toBeGreaterThan(0.2);
        expect(r.decision.clarity).toBe('clear');
        expect(locateSentence(r, 'kJ/mol')).toMatch(new RegExp(`found as ${r.match!.id} \\(scale-free EMD .* energy rank ${expectedRank(p)}, .*: within the tolerance`));
      });
    });
  }

  it('reports a reference absent from the landscape as not found, with its five nearest in EMD order', async () => {
    const landscape = buildLandscape('keep');
    const ref = referenceInvariants(records.get(blockOf(ABSENT, 'other-cell'))!, K, 'keep');
    const result = await locateReferences(landscape, 'generated', [ref], { threads: 1, scale: 'none' });
    const r = result.references[0];
    expect(r.found).toBe(false);
    expect(r.decision.rule).toBe('beyond-gap-limit');
    expect(r.match).toBeNull();
    // brute force: EMD to every kept structure, the five smallest in order
    const all = landscape.kept.map((i) => {
      const inv = landscape.invariants.kept.find((e) => e.index === i)!;
      return { id: landscape.structures[i].id, d: emd(ref.pdd, { k: K, rows: Float64Array.from(inv.pddRows), weights: Float64Array.from(inv.pddWeights) }) };
    }).sort((a, b) => a.d - b.d);
    expect(r.nearest.map((h) => h.id)).toEqual(all.slice(0, 5).map((x) => x.id));
    expect(r.nearest.map((h) => h.emdAngstrom)).toEqual(all.slice(0, 5).map((x) => x.d));
    expect(r.nearest.map((h) => h.distanceAngstrom)).toEqual(all.slice(0, 5).map((x) => x.d));
    expect(r.nearest[0].emdAngstrom).toBeGreaterThan(0.2);
    expect(locateSentence(r, 'kJ/mol')).toMatch(/^.*: not found: beyond the gap limit \(0\.\d+ > 0.2 Å\), clear; nearest /);
  });

  it('orders the scale-free list by the EMD between PDDs scaled to one volume per atom (brute force)', async () => {
    const landscape = buildLandscape('keep');
    const ref = referenceInvariants(records.get(blockOf(ABSENT, 'other-cell'))!, K, 'keep');
    const r = (await locateReferences(landscape, 'generated', [ref], { threads: 1 })).references[0];
    const all = landscape.kept.map((i) => {
      const inv = landscape.invariants.kept.find((e) => e.index === i)!;
      const s = landscape.structures[i];
      const v = s.cell!.volume! / s.atoms!;
      // both sides divided by cbrt(volume per atom), then back to Å at the reference's size
      const lr = Math.cbrt(ref.volumePerAtomA3!);
      const lk = Math.cbrt(v);
      const scaledRef = { k: K, rows: ref.pdd.rows.map((x) => x / lr), weights: ref.pdd.weights };
      const scaledKept = { k: K, rows: Float64Array.from(inv.pddRows, (x) => x / lk), weights: Float64Array.from(inv.pddWeights) };
      return { id: s.id, d: emd(scaledRef, scaledKept) * lr, scale: Math.cbrt(ref.volumePerAtomA3! / v) };
    }).sort((a, b) => a.d - b.d);
    expect(r.nearest.map((h) => h.id)).toEqual(all.slice(0, 5).map((x) => x.id));
    r.nearest.forEach((h, j) => {
      expect(h.scaledEmdAngstrom).toBeCloseTo(all[j].d, 12);
      expect(h.scaleFactor).toBeCloseTo(all[j].scale, 12);
    });
  });
});
