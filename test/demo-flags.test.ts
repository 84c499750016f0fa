// The demo's real mini search (src/demo/search: random starts relaxed under an exp-6 plus point-charge potential,
// optimiser noise included) as a check of issue 10's flags and auto tolerance on data no generator planted:
//  - on the demo's own search, auto chooses a tolerance inside the run's gap: above every duplicate's EMD to its
//    kept structure and below the closest kept pair, as sifted with the fixed 0.04 Å, and groups the run exactly
//    as 0.04 Å does; nothing is flagged there;
//  - the same search with seed 4 (the first of seeds 1-6, 400 starts each, whose search holds one) leaves two P-1
//    structures at one minimum (-75.038 kJ/mol, 0.023 Å apart, beyond the 0.008 Å auto chooses for that run):
//    auto flags exactly those two flat-minimum, while 0.04 Å collapses them into one group and flags nothing;
//  - a diff of two runs made of that search, one holding each point of the flat minimum (and everything else in
//    both), marks the flat minimum split across them instead of only reporting a structure each run missed.
// (Before issue 14's search the demo itself held a flat minimum; the search changed, so the seed-4 run stands in.)
import { describe, expect, it } from 'vitest';
import { mkdtempSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { runMiniSearchInWorkers, type MiniSearchOptions } from '../src/demo/search/search.js';
import { DEMO_SEARCH } from '../src/demo/run-demo.js';
import { sift } from '../src/landscape/sift.js';
import { diffLandscapes } from '../src/landscape/diff.js';
import { adjustedRandIndex } from '../src/cluster/stats.js';
import { FLAG_CODES } from '../src/landscape/flags.js';
import type { Landscape } from '../src/landscape/schema.js';

/** The demo's search with another seed: the first of seeds 1-6 whose search leaves a flat minimum. */
const FLAT_SEARCH: MiniSearchOptions = { ...DEMO_SEARCH, seed: 4 };

/** A search written as one CIF and one energies file, with a writer for any part of it. */
async function searchFiles(options: MiniSearchOptions, name: string) {
  const found = await runMiniSearchInWorkers({ ...options, threads: 2 });
  const dir = mkdtempSync(join(tmpdir(), `polysift-demo-flags-${name}-`));
  const blocks = found.cif.split(/(?=^data_)/m).filter((b) => b.startsWith('data_'));
  const energyLines = found.energiesCsv.trim().split('\n').slice(1);
  /** The blocks whose indices pass `keep`, in input order, as sift's inputs. */
  const write = (part: string, keep: (i: number) => boolean) => {
    const take = <T>(xs: T[]) => xs.filter((_x, i) => keep(i));
    writeFileSync(join(dir, `${part}.cif`), take(blocks).join(''));
    writeFileSync(join(dir, `${part}.csv`), `id,energy\n${take(energyLines).join('\n')}\n`);
    return { inputs: [join(dir, `${part}.cif`)], energiesFile: join(dir, `${part}.csv`), threads: 2, cacheDir: null };
  };
  return { blocks: blocks.length, write };
}

const flatOf = (l: Landscape) => l.structures.filter((r) => r.flags.includes(FLAG_CODES.flatMinimum));

describe('flags and auto tolerance on the demo search', async () => {
  const demo = await searchFiles(DEMO_SEARCH, 'demo');
  const all = demo.write('all', () => true);
  const auto = (await sift(all)).landscape;
  const fixed = (await sift({ ...all, toleranceAngstrom: 0.04 })).landscape;

  it('chooses a tolerance inside the gap of the run and groups it as 0.04 Å does', () => {
    const tc = auto.toleranceChoice!;
    expect(tc.clear).toBe(true);
    const noise = Math.max(...fixed.structures.filter((r) => r.status === 'duplicate').map((r) => r.distanceToKept!));
    const distinct = Math.min(...fixed.kept.map((k) => fixed.structures[k].nearestDistance!));
    console.log(`demo: duplicates within ${noise} Å of their kept structure, kept structures >= ${distinct} Å apart; auto ${tc.chosenAngstrom} Å`);
    expect(tc.chosenAngstrom).toBeGreaterThan(noise);
    expect(tc.chosenAngstrom).toBeLessThan(distinct);
    expect(adjustedRandIndex(auto.structures.map((r) => r.keptIndex!), fixed.structures.map((r) => r.keptIndex!))).toBe(1);
  });

  it('flags nothing in the demo search, with either tolerance', () => {
    for (const l of [auto, fixed]) {
      expect(l.flagCounts).toEqual({ otherChemistryPairs: 0, otherChemistry: 0, energyMismatch: 0, flatMinimumPairs: 0, flatMinimum: 0 });
      expect(l.structures.every((r) => r.flags.length === 0)).toBe(true);
    }
  });
}, 600_000);

describe('a flat minimum in a real search (seed 4)', async () => {
  const run = await searchFiles(FLAT_SEARCH, 'seed4');
  const all = run.write('all', () => true);
  const auto = (await sift(all)).landscape;
  const fixed = (await sift({ ...all, toleranceAngstrom: 0.04 })).landscape;

  it('flags the two structures of one flat minimum with the auto tolerance, and nothing else', () => {
    const flat = flatOf(auto);
    expect(flat).toHaveLength(2);
    for (const r of flat) {
      expect(r.status).toBe('kept');
      expect(r.energy!.toFixed(2)).toBe('-75.04');
      // Written in P-1 by the search, and detected as P-1 within 0.06 Å (issue 11): the declared and detected groups agree.
      expect(r.spaceGroup).toBe('P-1');
      expect(r.symmetry!.declared).toBe('P-1');
      expect(r.symmetry!.source).toBe('detected');
      expect(r.flatPartnerDistance!).toBeGreaterThan(auto.parameters.toleranceAngstrom);
      expect(r.flatPartnerDistance!).toBeLessThan(0.12);
    }
    expect(flat[0]!.flatPartners).toEqual([flat[1]!.id]);
    expect(flat[1]!.flatPartners).toEqual([flat[0]!.id]);
    expect(Math.abs(flat[0]!.energy! - flat[1]!.energy!)).toBeLessThanOrEqual(auto.parameters.flatEnergy);
    expect(auto.flagCounts).toEqual({ otherChemistryPairs: 0, otherChemistry: 0, energyMismatch: 0, flatMinimumPairs: 1, flatMinimum: 2 });
  });

  it('collapses that pair into one group with 0.04 Å instead (it lies within it), and flags nothing', () => {
    const [a, b] = flatOf(auto);
    const ra = fixed.structures.find((r) => r.id === a!.id)!, rb = fixed.structures.find((r) => r.id === b!.id)!;
    expect(ra.keptIndex).toBe(rb.keptIndex);
    expect(fixed.counts.kept).toBe(auto.counts.kept - 1);
    expect(fixed.structures.every((r) => r.flags.length === 0)).toBe(true);
  });

  it('marks the flat minimum split across two runs in diff', async () => {
    // Two runs that share every minimum but this one: run A found only the first point of the flat minimum (and its
    // copies), run B only the second, as two searches of one landscape may.
    const [p, q] = flatOf(auto);
    const group = (k: number) => new Set(auto.structures.filter((r) => r.keptIndex === k).map((r) => r.index));
    const ofP = group(p!.index), ofQ = group(q!.index);
    const a = (await sift(run.write('first', (i) => !ofQ.has(i)))).landscape;
    const b = (await sift(run.write('second', (i) => !ofP.has(i)))).landscape;
    const d = await diffLandscapes(a, b, 'first half', 'second half', { threads: 2 });
    const flatIds = new Set(flatOf(auto).map((r) => r.id));
    const flagged = d.structures.filter((s) => s.flags.includes(FLAG_CODES.flatMinimum));
    expect(d.counts.flatSplit).toBe(1);
    expect(flagged.map((s) => [s.run, s.id, s.presence])).toEqual([['A', p!.id, 'only-A'], ['B', q!.id, 'only-B']]);
    for (const s of flagged) {
      expect(s.presence).not.toBe('both');
      expect(flatIds.has(s.id)).toBe(true);
      expect(flatIds.has(s.flatPartner!)).toBe(true);
      expect(s.run === 'A' ? s.presence === 'only-A' : s.presence === 'only-B').toBe(true);
    }
    expect(d.notes.join(' ')).toMatch(/likely one minimum on a flat energy surface, not a structure one run missed/);
  });
}, 600_000);
