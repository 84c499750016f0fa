// The neighbour graph must equal brute-force all-pairs EMD exactly, ties broken by (distance, index) ascending
// (the definition of k nearest neighbours with a total order; common practice). The brute force here calls
// `emd` on every pair; the graph prunes with the AMD lower bound (MATCH Commun. Math. Comput. Chem. 2022).
import { describe, expect, it } from 'vitest';
import { emd } from '../src/metric/emd.js';
import { distanceMatrix, nearestAcross, nearestNeighbours, pairsWithin } from '../src/metric/graph.js';
import type { Pdd } from '../src/types.js';
import { amdOf, makePdd, randomPdd, rng } from './metric-random.js';

const K = 6;

/**
 * A set with the hard cases: clusters of noisy copies, exact duplicates, and two families of exactly equidistant
 * structures (one-row PDDs on an integer grid, whose EMDs are integers; two-row PDDs on a half-integer grid with
 * weights 1/2, whose EMDs are multiples of 1/4 and exact in binary).
 */
function structures(seed: number, count: number): Pdd[] {
  const rand = rng(seed);
  const centres = Array.from({ length: 40 }, () => randomPdd(rand, 1 + Math.floor(rand() * 5), K, () => 1 + 3 * rand()));
  const out: Pdd[] = [];
  while (out.length < count) {
    const r = rand();
    if (r < 0.45) {
      const c = centres[Math.floor(rand() * centres.length)];
      const noise = rand() < 0.5 ? 0.01 : 0.2;
      const n = c.weights.length;
      out.push(
        makePdd(
          Array.from({ length: n }, (_, i) => Array.from(c.rows.subarray(i * K, i * K + K), (x) => x + noise * (rand() - 0.5))),
          Array.from(c.weights),
        ),
      );
    } else if (r < 0.6 && out.length > 0) {
      const src = out[Math.floor(rand() * out.length)];
      out.push({ k: K, rows: src.rows.slice(), weights: src.weights.slice() });
    } else if (r < 0.8) {
      out.push(makePdd([Array.from({ length: K }, () => 10 + Math.floor(rand() * 3))], [1]));
    } else {
      const row = () => Array.from({ length: K }, () => 20 + 0.5 * Math.floor(rand() * 4));
      out.push(makePdd([row(), row()], [0.5, 0.5]));
    }
  }
  return out;
}

const items = (ps: Pdd[]) => ps.map((pdd) => ({ pdd, amd: amdOf(pdd) }));

/** Brute force: every pair through `emd`. */
function bruteMatrix(queries: Pdd[], targets: Pdd[]): Float64Array {
  const m = new Float64Array(queries.length * targets.length);
  for (let q = 0; q < queries.length; q++) for (let t = 0; t < targets.length; t++) m[q * targets.length + t] = emd(queries[q], targets[t]);
  return m;
}

function bruteKnn(d: Float64Array, nq: number, nt: number, k: number, same: boolean): { indices: number[]; distances: number[] } {
  const indices: number[] = [];
  const distances: number[] = [];
  for (let q = 0; q < nq; q++) {
    const all: Array<[number, number]> = [];
    for (let t = 0; t < nt; t++) if (!same || t !== q) all.push([d[q * nt + t], t]);
    all.sort((a, b) => a[0] - b[0] || a[1] - b[1]);
    for (let s = 0; s < k; s++) {
      distances.push(all[s][0]);
      indices.push(all[s][1]);
    }
  }
  return { indices, distances };
}

describe('neighbour graph under EMD', () => {
  const set = structures(2026, 600);
  const n = set.length;
  const all = bruteMatrix(set, set);
  const brute = bruteKnn(all, n, n, 10, true);

  it('has exact ties in the test set (duplicates at 0 and equidistant neighbours)', () => {
    // The brute force relies on emd being symmetric bit for bit.
    for (let i = 0; i < n; i++) for (let j = i + 1; j < n; j++) expect(all[i * n + j]).toBe(all[j * n + i]);
    let zeros = 0;
    let tiedRows = 0;
    for (let q = 0; q < n; q++) {
      const d = brute.distances.slice(q * 10, q * 10 + 10);
      zeros += d.filter((x) => x === 0).length;
      if (new Set(d).size < d.length) tiedRows++;
    }
    expect(zeros).toBeGreaterThan(50);
    expect(tiedRows).toBeGreaterThan(100);
  });

  for (const threads of [1, 2]) {
    it(`nearestNeighbours equals brute force on 600 structures, k = 10, ${threads} thread(s)`, async () => {
      const g = await nearestNeighbours(items(set), 10, { threads });
      expect(g.k).toBe(10);
      expect(Array.from(g.indices)).toEqual(brute.indices);
      expect(Array.from(g.distances)).toEqual(brute.distances);
      expect(g.pairsConsidered).toBe((600 * 599) / 2);
      expect(g.emdEvaluations).toBeLessThan(g.pairsConsidered);
    });

    it(`pairsWithin equals brute force at radii that hit exact ties, ${threads} thread(s)`, async () => {
      // Every radius on the calling thread; on two threads (each call starts its workers) the one with most ties.
      for (const radius of threads === 1 ? [0, 0.25, 1] : [1]) {
        const expected: Array<[number, number, number]> = [];
        for (let i = 0; i < n; i++) {
          for (let j = i + 1; j < n; j++) {
            const d = all[i * n + j];
            if (d <= radius) expected.push([i, j, d]);
          }
        }
        const got = await pairsWithin(items(set), radius, { threads });
        expect(Array.from(got.i)).toEqual(expected.map((e) => e[0]));
        expect(Array.from(got.j)).toEqual(expected.map((e) => e[1]));
        expect(Array.from(got.distances)).toEqual(expected.map((e) => e[2]));
        expect(got.evaluationsAvoided).toBe(got.pairsConsidered - got.emdEvaluations);
        expect(got.emdEvaluations).toBeLessThan(got.pairsConsidered);
      }
    });

    it(`nearestAcross equals brute force for 200 queries against 600 targets, ${threads} thread(s)`, async () => {
      const queries = structures(77, 200);
      // Some queries are exact copies of targets, so that distance 0 appears across the sets.
      for (let q = 0; q < 20; q++) queries[q * 10] = { ...set[q * 29] };
      const g = await nearestAcross(items(queries), items(set), 7, { threads });
      const b = bruteKnn(bruteMatrix(queries, set), queries.length, n, 7, false);
      expect(Array.from(g.indices)).toEqual(b.indices);
      expect(Array.from(g.distances)).toEqual(b.distances);
      expect(g.pairsConsidered).toBe(200 * 600);
    });

    it(`distanceMatrix equals pairwise emd, symmetric with zero diagonal, ${threads} thread(s)`, async () => {
      const sub = set.slice(0, 150);
      const m = await distanceMatrix(items(sub), { threads });
      for (let i = 0; i < sub.length; i++) {
        expect(m[i * sub.length + i]).toBe(0);
        for (let j = i + 1; j < sub.length; j++) {
          const d = all[i * n + j];
          expect(m[i * sub.length + j]).toBe(d);
          expect(m[j * sub.length + i]).toBe(d);
        }
      }
    });
  }

  it('gives the same evaluation counts with 1 and 2 threads (chunks do not depend on the thread count)', async () => {
    const a = await nearestNeighbours(items(set), 5, { threads: 1 });
    const b = await nearestNeighbours(items(set), 5, { threads: 2 });
    expect(b.emdEvaluations).toBe(a.emdEvaluations);
    expect(b.boundEvaluations).toBe(a.boundEvaluations);
    expect(Array.from(b.indices)).toEqual(Array.from(a.indices));
  });

  it('returns fewer neighbours when fewer items exist, and refuses bad input with a clear message', async () => {
    const few = set.slice(0, 4);
    const g = await nearestNeighbours(items(few), 10, { threads: 1 });
    expect(g.k).toBe(3);
    expect(Array.from(g.indices)).toEqual(bruteKnn(bruteMatrix(few, few), 4, 4, 3, true).indices);
    await expect(nearestNeighbours(items(set.slice(0, 3)), 0)).rejects.toThrow(/positive integer/);
    const mixed = [...items(set.slice(0, 2)), { pdd: makePdd([[1, 2]], [1]) }];
    await expect(nearestNeighbours(mixed, 1, { threads: 1 })).rejects.toThrow(/item 2 has PDD depth k = 2/);
    await expect(pairsWithin(items(set.slice(0, 3)), -1)).rejects.toThrow(/radius/);
  });
});
