// The EMD solver reads ground distances lazily and builds its first basis from per-row heaps. These checks pin
// that those shortcuts change nothing: the EMD equals the optimum of the full transportation problem solved by
// an independent LP solver (GLPK via the npm package glpk.js, the same reference as test/metric-emd.test.ts),
// on instances large enough (more than 256 cells) to take the lazy path, including near copies, exact ties and
// rows that differ only in late columns (where a few first columns say nothing).
import { describe, expect, it } from 'vitest';
import GLPKFactory from 'glpk.js/node';
import { emd, lastSolve } from '../src/metric/emd.js';
import type { Pdd } from '../src/types.js';
import { randomPdd, rng } from './metric-random.js';

/** Reference optimum: the transportation LP over all cells with the L-infinity ground distance (Rubner et al. 2000). */
async function lpEmd(a: Pdd, b: Pdd): Promise<number> {
  const glpk = await GLPKFactory();
  const m = a.weights.length;
  const n = b.weights.length;
  const k = a.k;
  const sa = a.weights.reduce((s, w) => s + Math.max(w, 0), 0);
  const sb = b.weights.reduce((s, w) => s + Math.max(w, 0), 0);
  const vars: Array<{ name: string; coef: number }> = [];
  const rowCons: Array<Array<{ name: string; coef: number }>> = Array.from({ length: m }, () => []);
  const colCons: Array<Array<{ name: string; coef: number }>> = Array.from({ length: n }, () => []);
  for (let i = 0; i < m; i++) {
    for (let j = 0; j < n; j++) {
      let c = 0;
      for (let t = 0; t < k; t++) c = Math.max(c, Math.abs(a.rows[i * k + t] - b.rows[j * k + t]));
      const name = `x${i}_${j}`;
      vars.push({ name, coef: c });
      rowCons[i].push({ name, coef: 1 });
      colCons[j].push({ name, coef: 1 });
    }
  }
  const subjectTo = [
    ...rowCons.map((v, i) => ({ name: `r${i}`, vars: v, bnds: { type: glpk.GLP_FX, lb: Math.max(a.weights[i], 0) / sa, ub: Math.max(a.weights[i], 0) / sa } })),
    ...colCons.map((v, j) => ({ name: `c${j}`, vars: v, bnds: { type: glpk.GLP_FX, lb: Math.max(b.weights[j], 0) / sb, ub: Math.max(b.weights[j], 0) / sb } })),
  ];
  const res = glpk.solve({ name: 'emd', objective: { direction: glpk.GLP_MIN, name: 'cost', vars }, subjectTo }, { msglev: glpk.GLP_MSG_OFF });
  return res.result.z;
}

/** A copy of p with every distance moved by up to `noise` (rows then re-sorted within, as PDD rows are). */
function jiggle(p: Pdd, noise: number, rand: () => number): Pdd {
  const rows = p.rows.map((x) => x + noise * (2 * rand() - 1));
  for (let r = 0; r < p.weights.length; r++) rows.subarray(r * p.k, (r + 1) * p.k).sort();
  return { k: p.k, rows, weights: p.weights.slice() };
}

/** Rows equal in their first `same` columns and different only after them (rows ascending within). */
function lateDifferences(rand: () => number, n: number, k: number, same: number): Pdd {
  const rows = new Float64Array(n * k);
  for (let r = 0; r < n; r++) {
    for (let t = 0; t < k; t++) rows[r * k + t] = t < same ? 1 + t * 0.1 : 1 + same * 0.1 + (t - same) * 0.5 + 0.4 * rand();
  }
  const w = Float64Array.from({ length: n }, () => 0.1 + rand());
  const s = w.reduce((x, y) => x + y, 0);
  return { k, rows, weights: w.map((x) => x / s) };
}

describe('EMD on the lazy path (more than 256 cells)', () => {
  it('equals the LP optimum (glpk.js) on near copies, distinct PDDs, ties and late differences', async () => {
    const rand = rng(20261202);
    const cases: Array<[Pdd, Pdd]> = [];
    for (let t = 0; t < 8; t++) {
      const n = 17 + Math.floor(rand() * 20);
      const k = 12 + Math.floor(rand() * 30);
      const a = randomPdd(rand, n, k, () => 1 + 4 * rand());
      cases.push([a, jiggle(a, 0.003, rand)]); // near copies: zero or few pivots
      cases.push([a, randomPdd(rand, n + 3, k, () => 1 + 4 * rand())]); // distinct
      cases.push([randomPdd(rand, n, k, () => Math.floor(rand() * 3)), randomPdd(rand, n, k, () => Math.floor(rand() * 3))]); // many equal costs
      cases.push([lateDifferences(rand, n, k, k - 3), lateDifferences(rand, n + 2, k, k - 3)]); // first columns all equal
    }
    let lazySolves = 0;
    for (const [a, b] of cases) {
      const d = emd(a, b);
      if (lastSolve.rows * lastSolve.cols >= 256) lazySolves++;
      const ref = await lpEmd(a, b);
      expect(Math.abs(d - ref)).toBeLessThanOrEqual(1e-9 * Math.max(1, ref));
      expect(emd(b, a)).toBe(d);
    }
    expect(lazySolves).toBe(cases.length);
  }, 60_000);
});
