// PDD and AMD on sets whose answers are known from outside this code: lattice shell counts (OEIS),
// a homometric pair, and hand-computed rows. PDD: "Resolving the data ambiguity for periodic
// crystals", NeurIPS 2022; AMD: "Average minimum distances of periodic point sets", MATCH Commun.
// Math. Comput. Chem. 2022.
import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import type { Pdd } from '../src/types.js';
import { collapseRows, pdd } from '../src/invariants/pdd.js';
import { amd } from '../src/invariants/amd.js';
import { emd } from '../src/metric/emd.js';
import { bccConventional, bccPrimitive, cubicLattice, fccConventional, fccPrimitive, makeSet, P21C_OPS, expandOperations, monoclinicBasis } from './helpers/periodic-sets.js';

/** Number of integer vectors (x, y, z), |x|,|y|,|z| <= 6, with a predicate and squared norm n. */
function countVectors(n: number, keep: (x: number, y: number, z: number) => boolean): number {
  let count = 0;
  for (let x = -6; x <= 6; x++) for (let y = -6; y <= 6; y++) for (let z = -6; z <= 6; z++) if (x * x + y * y + z * z === n && keep(x, y, z)) count++;
  return count;
}

/** The row a lattice must have: each shell distance repeated by its count. */
function shellRow(shells: Array<[number, number]>): number[] {
  const row: number[] = [];
  for (const [dist, count] of shells) for (let i = 0; i < count; i++) row.push(dist);
  return row;
}

function expectSingleRow(p: Pdd, expected: number[]): void {
  expect(p.k).toBe(expected.length);
  expect(p.weights.length).toBe(1);
  expect(p.weights[0]).toBeCloseTo(1, 14);
  for (let j = 0; j < expected.length; j++) expect(Math.abs(p.rows[j] - expected[j])).toBeLessThan(1e-12);
  const a = amd(p);
  for (let j = 0; j < expected.length; j++) expect(Math.abs(a[j] - expected[j])).toBeLessThan(1e-12);
}

describe('PDD and AMD of cubic lattices (shell counts)', () => {
  it('simple cubic, a = 1: 1 (x6), √2 (x12), √3 (x8), 2 (x6), √5 (x24), √6 (x24), √8 (x12) (OEIS A005875; terms from memory, confirmed by direct count)', () => {
    // A005875: number of ways to write n as a sum of 3 squares: 1, 6, 12, 8, 6, 24, 24, 0, 12, ...
    const a005875 = [1, 6, 12, 8, 6, 24, 24, 0, 12];
    for (let n = 0; n < a005875.length; n++) expect(countVectors(n, () => true)).toBe(a005875[n]);
    const shells: Array<[number, number]> = [];
    for (let n = 1; n <= 8; n++) if (a005875[n] > 0) shells.push([Math.sqrt(n), a005875[n]]);
    const row = shellRow(shells);
    expect(row.length).toBe(92);
    expectSingleRow(pdd(cubicLattice(1), row.length), row);
  });

  it('face-centred cubic, cube edge a: a/√2 (x12), a (x6), a·√(3/2) (x24), a·√2 (x12), a·√(5/2) (x24), a·√3 (x8) (OEIS A004015; from memory, confirmed by direct count)', () => {
    // fcc points are (a/2)(x, y, z) with x + y + z even; A004015 lists the counts at squared norms 2, 4, 6, ... (units (a/2)^2).
    const a004015 = [12, 6, 24, 12, 24, 8];
    const even = (x: number, y: number, z: number) => (((x + y + z) % 2) + 2) % 2 === 0;
    for (let i = 0; i < a004015.length; i++) expect(countVectors(2 * (i + 1), even)).toBe(a004015[i]);
    const a = 3.7;
    const row = shellRow(a004015.map((c, i) => [(a / 2) * Math.sqrt(2 * (i + 1)), c]));
    expectSingleRow(pdd(fccPrimitive(a), row.length), row);
    expectSingleRow(pdd(fccConventional(a), row.length), row);
  });

  it('body-centred cubic, cube edge a: a·√3/2 (x8), a (x6), a·√2 (x12), a·√11/2 (x24), a·√3 (x8), 2a (x6) (from memory, confirmed by direct count)', () => {
    // bcc points are (a/2)(x, y, z) with x, y, z all even or all odd.
    const sameParity = (x: number, y: number, z: number) => (((x % 2) + 2) % 2) === (((y % 2) + 2) % 2) && (((y % 2) + 2) % 2) === (((z % 2) + 2) % 2);
    const listed: Array<[number, number]> = [[3, 8], [4, 6], [8, 12], [11, 24], [12, 8], [16, 6]];
    // No other squared norm below 16 occurs.
    for (let n = 1; n <= 16; n++) {
      const entry = listed.find(([m]) => m === n);
      expect(countVectors(n, sameParity)).toBe(entry ? entry[1] : 0);
    }
    const a = 2.9;
    const row = shellRow(listed.map(([n, c]) => [(a / 2) * Math.sqrt(n), c]));
    expectSingleRow(pdd(bccPrimitive(a), row.length), row);
    expectSingleRow(pdd(bccConventional(a), row.length), row);
  });
});

describe('a homometric pair in one dimension', () => {
  // S(r) = {0, 1+r, 3+r, 4} and Q(r) = {0, 3+r, 4, 5+r} with period 8, 0 < r < 1: same multiset of
  // inter-point distances, different PDDs (a fact of the trade: PDD is stronger than the pair-distance distribution).
  const S = (r: number) => makeSet(1, [8], [0, 1 + r, 3 + r, 4]);
  const Q = (r: number) => makeSet(1, [8], [0, 3 + r, 4, 5 + r]);

  /** All distances from every motif point to every other point of the infinite set within `cutoff`, sorted. */
  function pairDistances(points: number[], period: number, cutoff: number): number[] {
    const out: number[] = [];
    for (let i = 0; i < points.length; i++) {
      for (let j = 0; j < points.length; j++) {
        for (let t = -Math.ceil(cutoff / period) - 1; t <= Math.ceil(cutoff / period) + 1; t++) {
          if (i === j && t === 0) continue;
          const d = Math.abs(points[j] + t * period - points[i]);
          if (d <= cutoff) out.push(d);
        }
      }
    }
    return out.sort((a, b) => a - b);
  }

  it('has equal multisets of inter-point distances and PDDs that differ in the first column', () => {
    fc.assert(
      fc.property(fc.double({ min: 0.01, max: 0.99, noNaN: true }), (r) => {
        const ds = pairDistances([0, 1 + r, 3 + r, 4], 8, 40);
        const dq = pairDistances([0, 3 + r, 4, 5 + r], 8, 40);
        expect(ds.length).toBe(dq.length);
        for (let i = 0; i < ds.length; i++) expect(Math.abs(ds[i] - dq[i])).toBeLessThan(1e-12);
        const ps = pdd(S(r), 4);
        const pq = pdd(Q(r), 4);
        // First-neighbour column by hand: S gives {1-r, 1-r, 1+r, 1+r}, Q gives {1-r, 1-r, 1+r, 3-r}.
        const col = (p: Pdd) => {
          const out: number[] = [];
          for (let i = 0; i < p.weights.length; i++) for (let c = 0; c < Math.round(p.weights[i] * 4); c++) out.push(p.rows[i * p.k]);
          return out.sort((a, b) => a - b);
        };
        const cs = col(ps);
        const cq = col(pq);
        const es = [1 - r, 1 - r, 1 + r, 1 + r].sort((a, b) => a - b);
        const eq = [1 - r, 1 - r, 1 + r, 3 - r].sort((a, b) => a - b);
        for (let i = 0; i < 4; i++) {
          expect(cs[i]).toBeCloseTo(es[i], 12);
          expect(cq[i]).toBeCloseTo(eq[i], 12);
        }
        // AMD_1 differs by (1 - r)/2 (by hand from the columns above), a lower bound on the EMD.
        expect(Math.abs(amd(ps)[0] - amd(pq)[0])).toBeCloseTo((1 - r) / 2, 12);
        expect(emd(ps, pq)).toBeGreaterThanOrEqual((1 - r) / 2 - 1e-12);
      }),
      { numRuns: 100 },
    );
  });
});

describe('PDD rows and weights', () => {
  it('weights rows by multiplicity when only the asymmetric unit is queried, and equals the P1 computation', () => {
    const basis = monoclinicBasis(7.1, 5.3, 9.4, 103);
    // Two general positions and one on the inversion centre at the origin (multiplicity 2 in P2_1/c).
    const sym = expandOperations(basis, [0.11, 0.23, 0.37, 0.41, 0.07, 0.19, 0, 0, 0], P21C_OPS);
    expect(Array.from(sym.multiplicity)).toEqual([4, 4, 2]);
    const p1 = { ...sym, asym: Int32Array.from({ length: 10 }, (_, i) => i), multiplicity: new Int32Array(10).fill(1) };
    const a = pdd(sym, 20);
    const b = pdd(p1, 20);
    expect(a.weights.length).toBe(3);
    expect(b.weights.length).toBe(3);
    for (let i = 0; i < 3; i++) expect(a.weights[i]).toBeCloseTo(b.weights[i], 14);
    expect(Array.from(a.weights).sort()).toEqual([0.2, 0.4, 0.4]);
    expect(a.rows.length).toBe(b.rows.length);
    for (let i = 0; i < a.rows.length; i++) expect(Math.abs(a.rows[i] - b.rows[i])).toBeLessThan(1e-12);
    let sum = 0;
    for (const w of a.weights) sum += w;
    expect(sum).toBeCloseTo(1, 14);
  });

  it('sorts rows lexicographically and merges rows equal within the tolerance, adding weights', () => {
    const rows = Float64Array.from([2, 3, 1, 5, 1, 4, 2, 3 + 1e-12, 1, 5 - 2e-9]);
    const weights = Float64Array.from([0.1, 0.2, 0.3, 0.15, 0.25]);
    const p = collapseRows(rows, weights, 2, 1e-8);
    expect(Array.from(p.rows)).toEqual([1, 4, 1, 5 - 2e-9, 2, 3]);
    expect(p.weights[0]).toBeCloseTo(0.3, 15);
    expect(p.weights[1]).toBeCloseTo(0.45, 15);
    expect(p.weights[2]).toBeCloseTo(0.25, 15);
    // Rows equal up to rounding that the sort separates are still merged.
    const split = collapseRows(Float64Array.from([1, 9, 1 + 1e-13, 5, 1 + 2e-13, 9]), Float64Array.from([0.25, 0.5, 0.25]), 2, 1e-8);
    expect(split.weights.length).toBe(2);
    expect(Array.from(split.weights).sort()).toEqual([0.5, 0.5]);
  });

  it('keeps rows farther apart than the tolerance separate', () => {
    const p = collapseRows(Float64Array.from([1, 2, 1, 2 + 1e-7]), Float64Array.from([0.5, 0.5]), 2, 1e-8);
    expect(p.weights.length).toBe(2);
  });

  it('refuses multiplicities that do not add up to the motif size', () => {
    const set = { ...makeSet(1, [4], [0, 1]), asym: Int32Array.from([0]), multiplicity: Int32Array.from([1]) };
    expect(() => pdd(set, 2)).toThrow(/add up to 1 but the motif has 2/);
  });
});
