// The demo's real mini search (src/demo/search: random starts relaxed under an exp-6 potential, optimiser noise
// included) as a check of issue 10's flags and auto tolerance on data no generator planted:
//  - auto chooses a tolerance inside the run's gap: above every duplicate's EMD to its kept structure and below
//    the closest kept pair, as sifted with the fixed 0.04 Å, and groups the run exactly as 0.04 Å does;
//  - the three P21 structures at one minimum (-40.0933 kJ/mol, 1.4289-1.4290 g/cm3, 0.044-0.093 Å apart) are
//    flagged flat-minimum as one group, and nothing else is flagged;
//  - a diff of the run's two halves marks the flat minimum split across them instead of only reporting a
//    structure each half missed.
import { describe, expect, it } from 'vitest';
import { mkdtempSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { runMiniSearch } from '../src/demo/search/search.js';
import { DEMO_SEARCH } from '../src/demo/run-demo.js';
import { sift } from '../src/landscape/sift.js';
import { diffLandscapes } from '../src/landscape/diff.js';
import { adjustedRandIndex } from '../src/cluster/stats.js';
import { FLAG_CODES } from '../src/landscape/flags.js';

describe('flags and auto tolerance on the demo search', async () => {
  const found = runMiniSearch(DEMO_SEARCH);
  const dir = mkdtempSync(join(tmpdir(), 'polysift-demo-flags-'));
  const blocks = found.cif.split(/(?=^data_)/m).filter((b) => b.startsWith('data_'));
  const energyLines = found.energiesCsv.trim().split('\n').slice(1);
  const half = Math.floor(blocks.length / 2);
  const write = (name: string, from: number, to: number) => {
    writeFileSync(join(dir, `${name}.cif`), blocks.slice(from, to).join(''));
    writeFileSync(join(dir, `${name}.csv`), `id,energy\n${energyLines.slice(from, to).join('\n')}\n`);
    return { inputs: [join(dir, `${name}.cif`)], energiesFile: join(dir, `${name}.csv`), threads: 2, cacheDir: null };
  };
  const all = write('all', 0, blocks.length);
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

  it('flags the three structures of one flat minimum, and nothing else', () => {
    for (const l of [auto, fixed]) {
      const flat = l.structures.filter((r) => r.flags.includes(FLAG_CODES.flatMinimum));
      expect(flat).toHaveLength(3);
      for (const r of flat) {
        expect(r.energy!.toFixed(4)).toBe('-40.0933');
        // Written in P21; the group reported is the one detected within 0.06 Å (issue 11). One of the three points of
        // this flat minimum lies within 0.015 Å of Cmc21, a supergroup of P21: spglib (symprec 0.06, Debian
        // python3-spglib) names the same groups for these three blocks (P21, P21, Cmc21), checked by hand once.
        expect(r.symmetry!.declared).toMatch(/^P 1 21 1$|^P21$/);
        expect(['P21', 'Cmc21']).toContain(r.spaceGroup);
        expect(r.flatPartnerDistance!).toBeGreaterThan(l.parameters.toleranceAngstrom);
        expect(r.flatPartnerDistance!).toBeLessThan(0.12);
      }
      expect(flat.map((r) => r.spaceGroup).sort()).toEqual(['Cmc21', 'P21', 'P21']);
      // All three pairs, whatever the tolerance (0.044, 0.051 and 0.093 Å apart).
      expect(l.flagCounts.flatMinimumPairs).toBe(3);
      expect(l.flagCounts.energyMismatch).toBe(0);
      expect(l.flagCounts.otherChemistry).toBe(0);
    }
  });

  it('marks the flat minimum split across the two halves of the run in diff', async () => {
    const a = (await sift(write('first', 0, half))).landscape;
    const b = (await sift(write('second', half, blocks.length))).landscape;
    const d = await diffLandscapes(a, b, 'first half', 'second half', { threads: 2 });
    const flatIds = new Set(auto.structures.filter((r) => r.flags.includes(FLAG_CODES.flatMinimum)).map((r) => r.id));
    const flagged = d.structures.filter((s) => s.flags.includes(FLAG_CODES.flatMinimum));
    expect(d.counts.flatSplit).toBeGreaterThanOrEqual(1);
    expect(flagged.length).toBeGreaterThanOrEqual(2);
    for (const s of flagged) {
      expect(s.presence).not.toBe('both');
      expect(flatIds.has(s.id)).toBe(true);
      expect(flatIds.has(s.flatPartner!)).toBe(true);
      expect(s.run === 'A' ? s.presence === 'only-A' : s.presence === 'only-B').toBe(true);
    }
    expect(d.notes.join(' ')).toMatch(/likely one minimum on a flat energy surface, not a structure one run missed/);
  });
}, 300000);
