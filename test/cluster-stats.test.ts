// Adjusted Rand index (Hubert & Arabie, J. Classification 1985) against scikit-learn's
// `sklearn.metrics.adjusted_rand_score`, and Spearman's rank correlation against
// `scipy.stats.spearmanr` (average ranks for ties), both run live once for this file through
// scripts/stats_reference.py.
import { beforeAll, describe, expect, it } from 'vitest';
import { adjustedRandIndex, averageRanks, spearman } from '../src/cluster/stats.js';
import { normal, rng, runPythonReference } from './fixtures/cluster-data.js';

interface RefOutput {
  versions: Record<string, string>;
  ari: Array<number | null>;
  spearman: Array<number | null>;
  rankdata: number[][];
}

const rand = rng(7);
const gauss = normal(rand);
const labelsOf = (n: number, k: number, withNoise: boolean) =>
  Array.from({ length: n }, () => (withNoise && rand() < 0.1 ? -1 : Math.floor(rand() * k)));
/** b agrees with a except for a fraction of items relabelled at random (so the ARI is neither 0 nor 1). */
const perturbed = (a: number[], k: number, fraction: number) => a.map((l) => (rand() < fraction ? Math.floor(rand() * k) + 100 : l * 3 + 7));

const ariCases: Array<{ a: number[]; b: number[] }> = [];
for (const [n, k] of [[10, 2], [50, 3], [200, 5], [1000, 12], [5000, 40], [30000, 25]] as Array<[number, number]>) {
  const a = labelsOf(n, k, true);
  ariCases.push({ a, b: labelsOf(n, k + 1, true) }); // independent: ARI near 0, can be negative
  ariCases.push({ a, b: perturbed(a, k, 0.2) }); // related
  ariCases.push({ a, b: perturbed(a, k, 0) }); // same partition, other numbers
}
ariCases.push({ a: [0, 0, 1, 1], b: [0, 1, 0, 1] });
ariCases.push({ a: [5], b: [2] });
ariCases.push({ a: [1, 1, 1, 1], b: [0, 1, 2, 3] });
ariCases.push({ a: [0, 1, 2, 3], b: [0, 1, 2, 3] });
ariCases.push({ a: [-1, -1, -1, 0, 0, 1], b: [-1, -1, 2, 0, 0, 1] });

const spearmanCases: Array<{ x: number[]; y: number[] }> = [];
for (const n of [2, 3, 7, 40, 500, 4000]) {
  // coarse rounding makes many ties in x and in y
  const x = Array.from({ length: n }, () => Math.round(gauss() * 4) / 2);
  spearmanCases.push({ x, y: x.map((v) => Math.round((v + gauss()) * 3) / 3) });
  spearmanCases.push({ x, y: x.map((v) => -v * v * v + 0.3 * gauss()) });
  spearmanCases.push({ x: x.map((v) => v + 1e-3 * gauss()), y: Array.from({ length: n }, () => gauss()) });
}
spearmanCases.push({ x: [1, 2, 3, 4, 5], y: [5, 6, 7, 8, 7] });
spearmanCases.push({ x: [1, 1, 1, 1], y: [1, 2, 3, 4] }); // constant side: NaN
spearmanCases.push({ x: [3, 1, 2, 2, 9, 1, 1], y: [0.5, 0.5, 0.5, 2, 2, 2, 1] });

let ref: RefOutput;
beforeAll(() => {
  ref = runPythonReference<RefOutput>('stats_reference.py', { ari: ariCases, spearman: spearmanCases });
});

describe('adjusted Rand index equals sklearn.metrics.adjusted_rand_score', () => {
  it('to 1e-12 on random labellings with noise labels, from 1 to 30,000 items', () => {
    let spread = 0;
    ariCases.forEach((c, i) => {
      const expected = ref.ari[i];
      expect(expected, `case ${i}`).not.toBeNull();
      const ours = adjustedRandIndex(c.a, c.b);
      expect(Math.abs(ours - (expected as number)), `case ${i} (n=${c.a.length}): ours ${ours}, sklearn ${expected}`).toBeLessThan(1e-12);
      spread = Math.max(spread, Math.abs(expected as number));
    });
    // the cases cover negative, near-zero, intermediate and perfect agreement
    expect(Math.min(...(ref.ari as number[]))).toBeLessThan(0);
    expect(ref.ari.some((v) => (v as number) > 0.3 && (v as number) < 0.9)).toBe(true);
    expect(spread).toBe(1);
  });

  it('takes typed arrays and refuses labellings of different lengths', () => {
    expect(adjustedRandIndex(Int32Array.from([0, 0, 1, 1]), Float64Array.from([0, 1, 0, 1]))).toBeCloseTo(ref.ari[ariCases.length - 5] as number, 14);
    expect(() => adjustedRandIndex([0, 1], [0])).toThrow(/different lengths/);
  });
});

describe('Spearman rank correlation equals scipy.stats.spearmanr', () => {
  it('to 1e-12 on random data with many ties', () => {
    spearmanCases.forEach((c, i) => {
      const expected = ref.spearman[i];
      const ours = spearman(c.x, c.y);
      if (expected === null) expect(Number.isNaN(ours), `case ${i}: scipy gives NaN`).toBe(true);
      else expect(Math.abs(ours - expected), `case ${i} (n=${c.x.length}): ours ${ours}, scipy ${expected}`).toBeLessThan(1e-12);
    });
    expect(ref.spearman.filter((v) => v === null).length).toBe(1);
  });

  it('gives the average ranks of scipy.stats.rankdata(method="average")', () => {
    spearmanCases.forEach((c, i) => expect(Array.from(averageRanks(c.x))).toEqual(ref.rankdata[i]));
  });

  it('is NaN for fewer than two pairs or NaN input, and refuses unequal lengths', () => {
    expect(Number.isNaN(spearman([1], [2]))).toBe(true);
    expect(Number.isNaN(spearman([1, NaN, 3], [1, 2, 3]))).toBe(true);
    expect(() => spearman([1, 2], [1])).toThrow(/different lengths/);
  });
});
