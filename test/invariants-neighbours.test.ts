// The exact neighbour search against brute force, and its stopping rule (src/invariants/neighbours.ts).
import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import type { PeriodicPointSet } from '../src/types.js';
import { nearestNeighbourDistances } from '../src/invariants/neighbours.js';
import { changeBasis, makeSet, randomSet, randomUnimodular, seededRandom } from './helpers/periodic-sets.js';
import { inverse } from '../src/geometry/reduce.js';

/**
 * Brute force: every translate p + n·B with |n_i| <= N_i of the cell AS GIVEN (no reduction, no wrapping),
 * all distances sorted. Also returns the radius up to which the block provably holds every point
 * ((N_i - 1) * h_i with h_i the cell width across the other vectors, motif inside the cell), so the
 * caller can check the block was big enough.
 */
function bruteForce(set: PeriodicPointSet, k: number, reachAngstrom: number): { rows: Float64Array; safeRadius: number } {
  const d = set.dim;
  const m = set.motif.length / d;
  const inv = inverse(set.basis, d);
  const counts: number[] = [];
  let safe = Infinity;
  for (let i = 0; i < d; i++) {
    let s = 0;
    for (let c = 0; c < d; c++) s += inv[c * d + i] ** 2;
    const h = 1 / Math.sqrt(s);
    const n = Math.ceil(reachAngstrom / h) + 1;
    counts.push(n);
    safe = Math.min(safe, (n - 1) * h);
  }
  const rows = new Float64Array(m * k);
  const all: number[] = [];
  const idx = new Array<number>(d);
  for (let q = 0; q < m; q++) {
    all.length = 0;
    for (let p = 0; p < m; p++) {
      for (let i = 0; i < d; i++) idx[i] = -counts[i];
      for (;;) {
        let s = 0;
        let zero = true;
        for (let c = 0; c < d; c++) {
          let v = set.motif[p * d + c] - set.motif[q * d + c];
          for (let r = 0; r < d; r++) v += idx[r] * set.basis[r * d + c];
          s += v * v;
        }
        for (let r = 0; r < d; r++) if (idx[r] !== 0) zero = false;
        if (!(p === q && zero)) all.push(Math.sqrt(s));
        // Next index vector, odometer style.
        let r = 0;
        while (r < d && idx[r] === counts[r]) {
          idx[r] = -counts[r];
          r++;
        }
        if (r === d) break;
        idx[r]++;
      }
    }
    all.sort((a, b) => a - b);
    for (let j = 0; j < k; j++) rows[q * k + j] = all[j];
  }
  return { rows, safeRadius: safe };
}

describe('exact neighbour search in a periodic set', () => {
  it('equals brute-force enumeration over a big block of translations on random skewed cells (1D, 2D, 3D)', () => {
    fc.assert(
      fc.property(fc.integer({ min: 1, max: 3 }), fc.integer({ min: 1, max: 4 }), fc.integer(), (d, m, seed) => {
        const rand = seededRandom(seed);
        const k = d === 1 ? 15 : d === 2 ? 25 : 30;
        // A random cell seen through a skewing unimodular matrix: the same set in a bad cell.
        const set = changeBasis(randomSet(rand, d, m), randomUnimodular(rand, d, 6, 2));
        const fast = nearestNeighbourDistances(set, k);
        // The block must provably hold every point up to the k-th distance, or the comparison means
        // nothing: grow it until it does.
        let reach = d === 1 ? 60 : d === 2 ? 25 : 14;
        let brute = bruteForce(set, k, reach);
        const worst = () => Math.max(...Array.from({ length: m }, (_, q) => brute.rows[q * k + k - 1]));
        while (worst() >= brute.safeRadius) {
          reach *= 1.5;
          brute = bruteForce(set, k, reach);
        }
        for (let q = 0; q < m; q++) {
          for (let j = 0; j < k; j++) expect(Math.abs(fast[q * k + j] - brute.rows[q * k + j])).toBeLessThan(1e-9);
        }
      }),
      { numRuns: Number(process.env.POLYSIFT_TEST_RUNS ?? 40) },
    );
  });

  it('equals brute force on cells with many points, where the queries are split into groups with a cloud each', () => {
    const rand = seededRandom(2024);
    for (const [d, m, k] of [[1, 40, 6], [2, 60, 8], [3, 80, 10]] as const) {
      // (no skewing here: the brute-force block must stay small with this many points)
      const set = randomSet(rand, d, m);
      const fast = nearestNeighbourDistances(set, k);
      let reach = 2;
      let brute = bruteForce(set, k, reach);
      while (Math.max(...Array.from({ length: m }, (_, q) => brute.rows[q * k + k - 1])) >= brute.safeRadius) {
        reach *= 1.5;
        brute = bruteForce(set, k, reach);
      }
      for (let i = 0; i < m * k; i++) expect(Math.abs(fast[i] - brute.rows[i])).toBeLessThan(1e-9);
    }
  });

  it('gives the same answer whatever the starting radius: too small forces the widening passes (stopping rule)', () => {
    const rand = seededRandom(11);
    for (let d = 1; d <= 3; d++) {
      const set = changeBasis(randomSet(rand, d, 5), randomUnimodular(rand, d, 8, 2));
      const reference = nearestNeighbourDistances(set, 40);
      for (const r0 of [1e-6, 0.3, 100]) {
        const other = nearestNeighbourDistances(set, 40, undefined, { initialRadiusAngstrom: r0 });
        for (let i = 0; i < reference.length; i++) expect(Math.abs(other[i] - reference[i])).toBeLessThan(1e-12);
      }
    }
  });

  it('lists the translates of a lone point on a line of period 1: 1, 1, 2, 2, 3, 3 (by hand)', () => {
    const row = nearestNeighbourDistances(makeSet(1, [1], [0.25]), 6);
    expect(Array.from(row)).toEqual([1, 1, 2, 2, 3, 3]);
  });

  it('finds a neighbour at distance 0 for two atoms on the same site, and excludes only the query itself', () => {
    const row = nearestNeighbourDistances(makeSet(1, [2], [0.5, 0.5]), 3);
    expect(Array.from(row)).toEqual([0, 2, 2, 0, 2, 2]);
  });

  it('queries only the points asked for', () => {
    const set = makeSet(1, [10], [0, 1, 3]);
    const row = nearestNeighbourDistances(set, 2, Int32Array.from([2]));
    // (fractional round trip 3 -> 0.3 -> 3 costs one rounding step)
    expect(row.length).toBe(2);
    expect(row[0]).toBeCloseTo(2, 12);
    expect(row[1]).toBeCloseTo(3, 12);
  });

  it('refuses k = 0, an empty motif, a point outside the motif and non-finite coordinates', () => {
    const set = makeSet(1, [1], [0]);
    expect(() => nearestNeighbourDistances(set, 0)).toThrow(/positive integer/);
    expect(() => nearestNeighbourDistances(makeSet(1, [1], []), 3)).toThrow(/at least one motif point/);
    expect(() => nearestNeighbourDistances(set, 2, Int32Array.from([1]))).toThrow(/outside the motif/);
    expect(() => nearestNeighbourDistances(makeSet(2, [1, 0, 0, 1], [0, Number.NaN]), 2)).toThrow(/finite/);
  });
});
