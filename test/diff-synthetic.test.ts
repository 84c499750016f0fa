// diffLandscapes on invented runs built from PDDs with a known overlap (test/diff-fixtures.ts): the
// classification must equal the truth, nearest-across must equal a brute-force scan with the EMD, and
// Spearman's correlation must equal scipy.stats.spearmanr (SciPy, run live in python3) to 1e-12.
import { spawnSync } from 'node:child_process';
import { describe, expect, it } from 'vitest';
import { comparabilityProblem, diffLandscapes } from '../src/landscape/diff.js';
import { validateLandscape } from '../src/landscape/load.js';
import { emd } from '../src/metric/emd.js';
import { landscapeOf, pairedRuns, type SyntheticStructure } from './diff-fixtures.js';

const K = 12;

function pddOf(s: SyntheticStructure) {
  return { k: K, rows: Float64Array.from(s.pdd.rows), weights: Float64Array.from(s.pdd.weights) };
}

function scipySpearman(x: number[], y: number[]): number {
  const script = 'import json,sys\nfrom scipy.stats import spearmanr\nd=json.load(sys.stdin)\nprint(repr(float(spearmanr(d[0], d[1]).statistic)))';
  const py = spawnSync('python3', ['-c', script], { input: JSON.stringify([x, y]), encoding: 'utf8' });
  if (py.status !== 0) throw new Error(`python3 with scipy is needed for this check: ${py.stderr || py.error}`);
  return Number(py.stdout.trim());
}

describe('diffLandscapes on invented runs with known overlap', () => {
  it('classifies every kept structure as the truth says and agrees with scipy on Spearman', async () => {
    const { A, B, truth } = pairedRuns(31, K, 14, 5, 7, 0.004, 0.2);
    const la = validateLandscape(landscapeOf(A, K), 'runA');
    const lb = validateLandscape(landscapeOf(B, K), 'runB');
    const d = await diffLandscapes(la, lb, 'runA', 'runB', { toleranceAngstrom: 0.05, threads: 1 });
    expect(d.counts).toEqual({ both: 14, onlyA: 5, onlyB: 7, keptA: 19, keptB: 21, flatSplit: 0, otherChemistry: 0 });
    for (const s of d.structures) {
      if (s.run === 'A') {
        const want = truth.get(s.id);
        expect(s.presence).toBe(want ? 'both' : 'only-A');
        expect(s.partner).toBe(want ?? null);
      } else {
        const isShared = s.id.startsWith('b-shared-');
        expect(s.presence).toBe(isShared ? 'both' : 'only-B');
        if (isShared) expect(truth.get(s.partner as string)).toBe(s.id);
      }
    }
    // Every matched pair: its EMD recomputed directly, within the noise bound, and nearest both ways.
    const byIdA = new Map(A.map((s) => [s.id, s]));
    const byIdB = new Map(B.map((s) => [s.id, s]));
    for (const p of d.pairs) {
      expect(p.emdAngstrom).toBe(emd(pddOf(byIdA.get(p.idA)!), pddOf(byIdB.get(p.idB)!)));
      expect(p.emdAngstrom).toBeLessThanOrEqual(0.004 + 1e-12);
      expect(p.mutualNearest).toBe(true);
    }
    // Ranks and shifts come straight from the runs' energies.
    const lowA = Math.min(...A.map((s) => s.energy as number));
    const lowB = Math.min(...B.map((s) => s.energy as number));
    for (const p of d.pairs) {
      expect(p.energyRelA).toBeCloseTo((byIdA.get(p.idA)!.energy as number) - lowA, 12);
      expect(p.energyRelShift).toBeCloseTo((byIdB.get(p.idB)!.energy as number) - lowB - ((byIdA.get(p.idA)!.energy as number) - lowA), 12);
      const rankA = 1 + A.filter((s) => (s.energy as number) < (byIdA.get(p.idA)!.energy as number)).length;
      expect(p.rankA).toBe(rankA);
    }
    const x = d.pairs.map((p) => p.energyRelA as number);
    const y = d.pairs.map((p) => p.energyRelB as number);
    expect(d.spearmanPairs).toBe(14);
    expect(Math.abs((d.spearman as number) - scipySpearman(x, y))).toBeLessThan(1e-12);
  });

  it('finds the exact nearest structure of the other run for every kept structure (brute force with the EMD)', async () => {
    const { A, B } = pairedRuns(5, K, 6, 9, 4, 0.01, 0.05);
    const d = await diffLandscapes(landscapeOf(A, K), landscapeOf(B, K), 'a', 'b', { threads: 1 });
    for (const s of d.structures) {
      const mine = (s.run === 'A' ? A : B).find((t) => t.id === s.id)!;
      const other = s.run === 'A' ? B : A;
      const dists = other.map((t) => emd(pddOf(mine), pddOf(t)));
      const best = Math.min(...dists);
      expect(s.nearestOtherDistance).toBe(best);
      expect(dists[other.findIndex((t) => t.id === s.nearestOther)]).toBe(best);
    }
  });

  it('still matches runs without energies, leaving ranks and the correlation empty and saying why', async () => {
    const { A, B } = pairedRuns(9, K, 4, 1, 2, 0.004, 0.2);
    for (const s of B) s.energy = null;
    const d = await diffLandscapes(landscapeOf(A, K), landscapeOf(B, K), 'a', 'b', { threads: 1 });
    expect(d.counts.both).toBe(4);
    expect(d.spearman).toBeNull();
    expect(d.pairs.every((p) => p.rankB === null && p.energyRelShift === null && p.rankA !== null)).toBe(true);
    expect(d.notes).toContain('Run B has no energies, so its energy ranks, the shifts and the rank correlation are left empty.');
  });

  it('refuses runs made with different k or hydrogen settings, naming both', async () => {
    const { A, B } = pairedRuns(3, K, 2, 1, 1, 0.004, 0.2);
    const la = landscapeOf(A, K);
    const lbH = landscapeOf(B, K, { hydrogens: 'drop' });
    expect(comparabilityProblem(la, lbH, 'x/run1', 'x/run2')).toMatch(/hydrogens "keep" in x\/run1 but "drop" in x\/run2/);
    await expect(diffLandscapes(la, lbH, 'x/run1', 'x/run2')).rejects.toThrow(/different invariant settings/);
    const { A: A8, B: B8 } = pairedRuns(3, 8, 2, 1, 1, 0.004, 0.2);
    const lk = landscapeOf(B8, 8);
    expect(comparabilityProblem(landscapeOf(A8, 8), lk)).toBeNull();
    await expect(diffLandscapes(la, lk, 'p', 'q')).rejects.toThrow(/PDD depth k = 12 in p but k = 8 in q/);
  });
});
