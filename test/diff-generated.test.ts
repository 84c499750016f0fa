// diff on two sift runs of generated crystals with a known overlap (src/demo/landscape.ts): run A holds three
// copies (standard, other cell, P1) of packings SA, run B three other copies (symbol only, P1 supercell, other
// setting; each with its own optimiser-like noise) of packings SB with energies shifted per packing, as after a
// re-optimisation with another energy model. The generator's truth says which packing every block is, so the
// expected classification is known exactly. The packings include two close distinct pairs (within 0.1 kJ/mol
// and 0.005 g/cm3): one pair shared whole, one split so that A holds both partners and B only one.
// Spearman's correlation is checked against scipy.stats.spearmanr (SciPy, run live in python3) to 1e-12.
import { spawnSync } from 'node:child_process';
import { mkdtempSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { generateLandscape } from '../src/demo/landscape.js';
import { readCifText } from '../src/io/read.js';
import { sift } from '../src/landscape/sift.js';
import { diffLandscapes } from '../src/landscape/diff.js';

const gen = generateLandscape({ seed: 11, packings: 8, copiesPerPacking: 6, closePairs: 2 });
const SA = [0, 1, 2, 3, 4, 6, 7];
const SB = [0, 1, 2, 3, 5, 6];
const KINDS_A = ['standard', 'other-cell', 'p1'];
const KINDS_B = ['symbol-only', 'p1-supercell', 'other-setting'];
/** Energy change per packing in run B (kJ/mol): an invented re-ranking, large enough to swap some ranks. */
const shiftB = (p: number) => 3 * Math.sin(1.7 * p + 0.3);

const texts = readCifText(gen.cif, 'generated.cif').map((r) => {
  if (r.kind !== 'record') throw new Error(`generated block rejected: ${r.rejected.reason}`);
  return r.record.text;
});
const packingOf = new Map(gen.ids.map((id, i) => [id, gen.truth[i]]));

function writeRun(dir: string, packings: number[], kinds: string[], shift: (p: number) => number): string[] {
  const blocks: string[] = [];
  const csv = ['id,energy'];
  gen.ids.forEach((id, i) => {
    const p = gen.truth[i];
    if (!packings.includes(p) || !kinds.includes(gen.kinds[i])) return;
    blocks.push(texts[i]);
    csv.push(`${id},${(gen.energiesKjPerMol[i] + shift(p)).toFixed(4)}`);
  });
  writeFileSync(join(dir, 'run.cif'), blocks.join('\n'));
  writeFileSync(join(dir, 'energies.csv'), csv.join('\n') + '\n');
  return [join(dir, 'run.cif'), join(dir, 'energies.csv')];
}

describe('diff of two sifted generated runs with known overlap', async () => {
  const root = mkdtempSync(join(tmpdir(), 'polysift-diff-gen-'));
  const dirA = join(root, 'a');
  const dirB = join(root, 'b');
  for (const d of [dirA, dirB]) spawnSync('mkdir', ['-p', d]);
  const [cifA, eA] = writeRun(dirA, SA, KINDS_A, () => 0);
  const [cifB, eB] = writeRun(dirB, SB, KINDS_B, shiftB);
  const runA = (await sift({ inputs: [cifA], energiesFile: eA, threads: 2, cacheDir: null })).landscape;
  const runB = (await sift({ inputs: [cifB], energiesFile: eB, threads: 2, cacheDir: null })).landscape;
  const d = await diffLandscapes(runA, runB, dirA, dirB, { threads: 2 });

  it('sifted each run to one kept structure per packing (precondition from sift)', () => {
    expect(runA.kept.map((i) => packingOf.get(runA.structures[i].id)).sort()).toEqual(SA);
    expect(runB.kept.map((i) => packingOf.get(runB.structures[i].id)).sort()).toEqual(SB);
  });

  it('classifies every kept structure exactly as the truth says, partners included', () => {
    const shared = SA.filter((p) => SB.includes(p));
    expect(d.counts).toEqual({ both: shared.length, onlyA: SA.length - shared.length, onlyB: SB.length - shared.length, keptA: SA.length, keptB: SB.length, flatSplit: 0, otherChemistry: 0 });
    for (const s of d.structures) {
      const p = packingOf.get(s.id) as number;
      const inOther = s.run === 'A' ? SB.includes(p) : SA.includes(p);
      expect(s.presence, `${s.run} ${s.id} (packing ${p})`).toBe(inOther ? 'both' : s.run === 'A' ? 'only-A' : 'only-B');
      if (inOther) expect(packingOf.get(s.partner as string)).toBe(p);
      else expect(s.partner).toBeNull();
    }
    // The close partner of packing 1 (packing 7) is only in A: its nearest in B is packing 1, but that is taken.
    const seven = d.structures.find((s) => s.run === 'A' && packingOf.get(s.id) === 7)!;
    expect(packingOf.get(seven.nearestOther as string)).toBe(1);
    expect(seven.nearestOtherDistance).toBeGreaterThan(d.toleranceAngstrom);
  });

  it('gives each matched pair its energy ranks and the per-packing energy shift', () => {
    for (const p of d.pairs) {
      const packing = packingOf.get(p.idA) as number;
      const rankIn = (l: typeof runA, id: string) => {
        const e = l.structures.find((s) => s.id === id)!.energy as number;
        return 1 + l.kept.filter((i) => (l.structures[i].energy as number) < e).length;
      };
      expect(p.rankA).toBe(rankIn(runA, p.idA));
      expect(p.rankB).toBe(rankIn(runB, p.idB));
      // absolute shift = packing shift + the two copies' own energy noise (generator: 0.02 kJ/mol sd; 4 decimals written)
      expect(Math.abs((p.energyShift as number) - shiftB(packing))).toBeLessThan(0.2);
    }
  });

  it("agrees with scipy.stats.spearmanr over the matched pairs' energies to 1e-12", () => {
    const x = d.pairs.map((p) => p.energyRelA as number);
    const y = d.pairs.map((p) => p.energyRelB as number);
    const script = 'import json,sys\nfrom scipy.stats import spearmanr\nd=json.load(sys.stdin)\nprint(repr(float(spearmanr(d[0], d[1]).statistic)))';
    const py = spawnSync('python3', ['-c', script], { input: JSON.stringify([x, y]), encoding: 'utf8' });
    if (py.status !== 0) throw new Error(`python3 with scipy is needed for this check: ${py.stderr || py.error}`);
    expect(d.spearmanPairs).toBe(5);
    expect(Math.abs((d.spearman as number) - Number(py.stdout.trim()))).toBeLessThan(1e-12);
  });
});
