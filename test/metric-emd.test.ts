// EMD between PDDs (Rubner, Tomasi & Guibas, IJCV 2000) with the L-infinity ground distance between rows.
import { describe, expect, it } from 'vitest';
import { amdDistance, emd, rowMinBound } from '../src/metric/emd.js';
import type { Pdd } from '../src/types.js';
import { amdOf, makePdd, potReference, randomPdd, rng } from './metric-random.js';

/** Sizes 1..200 rows, skewed towards small ones, with the extremes always present. */
function size(rand: () => number, t: number): number {
  if (t % 50 === 0) return 200;
  if (t % 50 === 1) return 1;
  return 1 + Math.floor(rand() * rand() * 200);
}

/** Degenerate and ordinary instances; `kind` cycles through the cases the solver must survive. */
function instance(rand: () => number, t: number): { a: Pdd; b: Pdd } {
  const kind = t % 6;
  const k = 1 + Math.floor(rand() * 5);
  const m = size(rand, t);
  const n = kind === 5 ? m : size(rand, t + 7);
  const real = () => 1 + 4 * rand();
  switch (kind) {
    case 0: // general position
      return { a: randomPdd(rand, m, k, real), b: randomPdd(rand, n, k, real) };
    case 1: {
      // integer distances in a small range: many equal costs
      const int = () => Math.floor(rand() * 3);
      return { a: randomPdd(rand, m, k, int), b: randomPdd(rand, n, k, int) };
    }
    case 2: {
      // repeated rows on both sides, and b sharing rows with a
      const base = randomPdd(rand, Math.max(1, Math.ceil(m / 3)), k, real);
      const pick = (count: number) => {
        const rows: number[][] = [];
        const w: number[] = [];
        for (let i = 0; i < count; i++) {
          const r = Math.floor(rand() * base.weights.length);
          rows.push(Array.from(base.rows.subarray(r * k, r * k + k)));
          w.push(rand() < 0.5 ? 1 : 2);
        }
        const s = w.reduce((x, y) => x + y, 0);
        return makePdd(rows, w.map((x) => x / s));
      };
      return { a: pick(m), b: pick(n) };
    }
    case 3: // one row on one side (or both)
      return { a: randomPdd(rand, 1, k, real), b: randomPdd(rand, rand() < 0.2 ? 1 : n, k, real) };
    case 4: {
      // weights that add up to 1 only up to rounding, zero weights, tiny negative residue
      const a = randomPdd(rand, m, k, real);
      const b = randomPdd(rand, n, k, real);
      for (let i = 0; i < a.weights.length; i++) a.weights[i] *= 1 + (rand() - 0.5) * 1e-12;
      if (b.weights.length > 2) {
        b.weights[0] = 0;
        b.weights[b.weights.length - 1] = -1e-17;
      }
      return { a, b };
    }
    default: {
      // equal sizes and equal weights: an assignment problem, the most degenerate transport
      const eq = () => 1;
      return { a: randomPdd(rand, m, k, real, eq), b: randomPdd(rand, n, k, real, eq) };
    }
  }
}


/** Wasserstein-1 on the line equals the integral of |F_a - F_b| (Vallender, Theory Probab. Appl. 1974). */
function lineW1(a: Pdd, b: Pdd): number {
  const pts: Array<[number, number]> = [];
  const norm = (p: Pdd) => p.weights.reduce((x, y) => x + Math.max(0, y), 0);
  const sa = norm(a);
  const sb = norm(b);
  a.rows.forEach((x, i) => pts.push([x, Math.max(0, a.weights[i]) / sa]));
  b.rows.forEach((x, i) => pts.push([x, -Math.max(0, b.weights[i]) / sb]));
  pts.sort((p, q) => p[0] - q[0]);
  let f = 0;
  let total = 0;
  for (let t = 0; t + 1 < pts.length; t++) {
    f += pts[t][1];
    total += Math.abs(f) * (pts[t + 1][0] - pts[t][0]);
  }
  return total;
}

describe('emd', () => {
  it('agrees with POT ot.emd2 to 1e-9 on 1,200 random instances of 1 to 200 rows, degenerate ones included', () => {
    const rand = rng(20260101);
    const instances = Array.from({ length: 1200 }, (_, t) => instance(rand, t));
    const ref = potReference(instances);
    expect(ref.length).toBe(instances.length);
    let worst = 0;
    let largest = 0;
    for (let t = 0; t < instances.length; t++) {
      const { a, b } = instances[t];
      const d = emd(a, b);
      worst = Math.max(worst, Math.abs(d - ref[t]));
      largest = Math.max(largest, a.weights.length, b.weights.length);
      if (Math.abs(d - ref[t]) > 1e-9) throw new Error(`instance ${t}: emd ${d} vs POT ${ref[t]}`);
    }
    expect(worst).toBeLessThanOrEqual(1e-9);
    expect(largest).toBe(200);
  });

  it('equals the integral of |F_a - F_b| for one-column PDDs (Wasserstein-1 on the line, Vallender 1974)', () => {
    const rand = rng(7);
    for (let t = 0; t < 300; t++) {
      const real = t % 3 === 0 ? () => Math.floor(rand() * 4) : () => 5 * rand();
      const a = randomPdd(rand, size(rand, t), 1, real);
      const b = randomPdd(rand, size(rand, t + 3), 1, real);
      expect(Math.abs(emd(a, b) - lineW1(a, b))).toBeLessThan(1e-12);
    }
  });

  it('gives hand-computed values on small cases (definition of EMD, Rubner et al. 2000)', () => {
    // One row each: the L-infinity distance between the rows.
    expect(emd(makePdd([[1, 2, 3]], [1]), makePdd([[1.5, 2, 2]], [1]))).toBeCloseTo(1, 15);
    // Half the mass at (1,1) and half at (3,3) onto all at (2,2.5): 0.5 * 1.5 + 0.5 * 1 = 1.25.
    expect(emd(makePdd([[1, 1], [3, 3]], [0.5, 0.5]), makePdd([[2, 2.5]], [1]))).toBeCloseTo(1.25, 15);
    // Moving 0.25 of the mass by 2 (the rest stays): 0.5.
    expect(emd(makePdd([[1, 1], [3, 3]], [0.75, 0.25]), makePdd([[1, 1], [3, 3]], [0.5, 0.5]))).toBeCloseTo(0.5, 15);
  });

  it('is a metric on random PDDs: identity gives exactly 0, symmetry holds bit for bit, triangle inequality holds', () => {
    const rand = rng(99);
    for (let t = 0; t < 300; t++) {
      const k = 1 + Math.floor(rand() * 8);
      const make = () => randomPdd(rand, 1 + Math.floor(rand() * 12), k, () => (t % 2 ? Math.floor(rand() * 3) : 3 * rand()));
      const [a, b, c] = [make(), make(), make()];
      expect(emd(a, a)).toBe(0);
      expect(emd(a, { k: a.k, rows: a.rows.slice(), weights: a.weights.slice() })).toBe(0);
      expect(emd(a, b)).toBe(emd(b, a));
      expect(emd(a, b)).toBeGreaterThan(0);
      expect(emd(a, c)).toBeLessThanOrEqual(emd(a, b) + emd(b, c) + 1e-12);
    }
  });

  it('is bounded below by the AMD distance (MATCH Commun. Math. Comput. Chem. 2022)', () => {
    const rand = rng(5);
    for (let t = 0; t < 500; t++) {
      const k = 1 + Math.floor(rand() * 20);
      const a = randomPdd(rand, 1 + Math.floor(rand() * 30), k, () => 2 + rand());
      const b = randomPdd(rand, 1 + Math.floor(rand() * 30), k, () => 2 + rand());
      expect(amdDistance(amdOf(a), amdOf(b))).toBeLessThanOrEqual(emd(a, b) + 1e-12);
    }
  });

  it('is bounded below by the row-minimum relaxation, which is exact when one side has a single row (Rubner et al. 2000)', () => {
    const rand = rng(17);
    const rm = (a: Pdd, b: Pdd, limit = Infinity) =>
      rowMinBound(a.rows, a.weights, 0, a.weights.length, b.rows, 0, b.weights.length, a.k, limit);
    for (let t = 0; t < 400; t++) {
      const k = 1 + Math.floor(rand() * 12);
      const value = t % 2 ? () => Math.floor(rand() * 3) : () => 2 + rand();
      const a = randomPdd(rand, 1 + Math.floor(rand() * 15), k, value);
      const b = randomPdd(rand, t % 5 === 0 ? 1 : 1 + Math.floor(rand() * 15), k, value);
      const d = emd(a, b);
      expect(rm(a, b)).toBeLessThanOrEqual(d + 1e-12);
      if (b.weights.length === 1) expect(rm(a, b)).toBeCloseTo(d, 12);
      // With a limit, the value returned is either the full bound or already above the limit.
      const limited = rm(a, b, d / 2);
      expect(limited === rm(a, b) || limited > d / 2).toBe(true);
    }
  });

  it('moves by at most eps when every distance moves by at most eps (triangle inequality, common practice)', () => {
    const rand = rng(11);
    for (let t = 0; t < 200; t++) {
      const a = randomPdd(rand, 1 + Math.floor(rand() * 20), 6, () => 3 * rand());
      const b = randomPdd(rand, 1 + Math.floor(rand() * 20), 6, () => 3 * rand());
      const eps = 1e-3;
      const moved = { k: a.k, rows: a.rows.map((x) => x + eps * (2 * rand() - 1)), weights: a.weights };
      expect(Math.abs(emd(moved, b) - emd(a, b))).toBeLessThanOrEqual(eps + 1e-12);
    }
  });

  it('renormalises weights, ignores zero-weight rows and rounding residue', () => {
    const rand = rng(3);
    for (let t = 0; t < 50; t++) {
      const a = randomPdd(rand, 5, 4, () => 3 * rand());
      const b = randomPdd(rand, 7, 4, () => 3 * rand());
      const d = emd(a, b);
      expect(emd({ ...a, weights: a.weights.map((w) => 7 * w) }, b)).toBeCloseTo(d, 12);
      const withZero = makePdd(
        [...Array.from({ length: 7 }, (_, i) => Array.from(b.rows.subarray(i * 4, i * 4 + 4))), [9, 9, 9, 9]],
        [...b.weights, 0],
      );
      expect(emd(a, withZero)).toBeCloseTo(d, 12);
      const residue = makePdd(
        [...Array.from({ length: 7 }, (_, i) => Array.from(b.rows.subarray(i * 4, i * 4 + 4))), [9, 9, 9, 9]],
        [...b.weights, -1e-17],
      );
      expect(emd(a, residue)).toBeCloseTo(d, 12);
    }
  });

  it('refuses inputs it cannot compare, with a sentence saying why', () => {
    const a = makePdd([[1, 2]], [1]);
    expect(() => emd(a, makePdd([[1, 2, 3]], [1]))).toThrow(/same depth k/);
    expect(() => emd(a, makePdd([[1, 2], [2, 3]], [1.1, -0.1]))).toThrow(/negative weight/);
    expect(() => emd(a, makePdd([[1, NaN]], [1]))).toThrow(/non-finite distance/);
    expect(() => emd(a, { k: 2, rows: new Float64Array(3), weights: new Float64Array([1]) })).toThrow(/row values/);
    expect(() => emd(a, { k: 2, rows: new Float64Array(2), weights: new Float64Array([0]) })).toThrow(/no positive weight/);
    expect(() => amdDistance(new Float64Array(2), new Float64Array(3))).toThrow(/same length/);
  });
});
