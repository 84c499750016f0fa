// The EMD takes one of three paths (src/metric/emd.ts): copies of one crystal are solved group by group with a
// certificate of optimality (emd-split.ts), PDDs with many near-equal rows start the simplex on the cells a merged
// problem points at and price the rest at the end (transport.ts), everything else the whole simplex. Each path must
// give the optimum of the full transportation problem: checked against POT's ot.emd2 (scripts/emd-reference.py,
// network simplex of Bonneel et al., ACM TOG 2011) and the LP optimum of glpk.js, on PDDs shaped like those of
// crystals written in P1 or in supercells with an optimiser's noise (one row per atom, the rows of
// symmetry-equivalent atoms equal up to noise), including cases built to defeat the shortcuts.
import { describe, expect, it } from 'vitest';
import GLPKFactory from 'glpk.js/node';
import { emd, lastSolve } from '../src/metric/emd.js';
import type { Pdd } from '../src/types.js';
import { makePdd, potReference, rng } from './metric-random.js';

const K = 24;

/** Rows of an invented asymmetric unit: ascending distances, the first few shared by every "structure" (bonds). */
function baseRows(rand: () => number, atoms: number, shift: number): number[][] {
  return Array.from({ length: atoms }, (_, a) => {
    const row: number[] = [];
    let x = 0.9 + 0.15 * a;
    for (let t = 0; t < K; t++) {
      x += t < 3 ? 0.1 : 0.05 + 0.3 * rand() + (t > 3 ? shift : 0);
      row.push(x);
    }
    return row;
  });
}

/** The PDD of the unit written with each atom `z` times (a P1 cell or supercell), every row moved by noise. */
function written(rand: () => number, base: number[][], z: number, noise: number, multiplicity?: number[]): Pdd {
  const rows: number[][] = [];
  const w: number[] = [];
  base.forEach((r, a) => {
    const copies = multiplicity ? multiplicity[a] : z;
    for (let c = 0; c < copies; c++) {
      rows.push(r.map((x) => x + noise * (2 * rand() - 1)).sort((p, q) => p - q));
      w.push(1);
    }
  });
  const s = w.length;
  return makePdd(rows, w.map(() => 1 / s));
}


async function lpEmd(a: Pdd, b: Pdd): Promise<number> {
  const glpk = await GLPKFactory();
  const m = a.weights.length;
  const n = b.weights.length;
  const vars: Array<{ name: string; coef: number }> = [];
  const rowCons: Array<Array<{ name: string; coef: number }>> = Array.from({ length: m }, () => []);
  const colCons: Array<Array<{ name: string; coef: number }>> = Array.from({ length: n }, () => []);
  for (let i = 0; i < m; i++)
    for (let j = 0; j < n; j++) {
      let c = 0;
      for (let t = 0; t < a.k; t++) c = Math.max(c, Math.abs(a.rows[i * a.k + t] - b.rows[j * a.k + t]));
      vars.push({ name: `x${i}_${j}`, coef: c });
      rowCons[i].push({ name: `x${i}_${j}`, coef: 1 });
      colCons[j].push({ name: `x${i}_${j}`, coef: 1 });
    }
  const subjectTo = [
    ...rowCons.map((v, i) => ({ name: `r${i}`, vars: v, bnds: { type: glpk.GLP_FX, lb: a.weights[i], ub: a.weights[i] } })),
    ...colCons.map((v, j) => ({ name: `c${j}`, vars: v, bnds: { type: glpk.GLP_FX, lb: b.weights[j], ub: b.weights[j] } })),
  ];
  return glpk.solve({ name: 'emd', objective: { direction: glpk.GLP_MIN, name: 'cost', vars }, subjectTo }, { msglev: glpk.GLP_MSG_OFF }).result.z;
}

interface Case {
  a: Pdd;
  b: Pdd;
  what: string;
}

function cases(): Case[] {
  const rand = rng(20261205);
  const out: Case[] = [];
  const zs = [1, 2, 4, 8];
  for (let t = 0; t < 60; t++) {
    const atoms = 4 + Math.floor(rand() * 8);
    const base = baseRows(rand, atoms, 0);
    const za = zs[Math.floor(rand() * 4)];
    const zb = zs[Math.floor(rand() * 4)];
    // Copies of one crystal in two descriptions, with noise of 0.001-0.005 per distance.
    out.push({ a: written(rand, base, za, 0.001 + 0.004 * rand()), b: written(rand, base, zb, 0.001 + 0.004 * rand()), what: 'copies' });
    // Distinct crystals of one molecule, both written with many near-equal rows.
    const other = baseRows(rand, atoms, 0.02 + 0.05 * rand());
    out.push({ a: written(rand, base, Math.max(2, za), 0.003), b: written(rand, other, Math.max(2, zb), 0.003), what: 'distinct' });
    // Near copies whose groups do not balance: one atom written a different number of times on one side.
    const mult = base.map(() => za);
    mult[0] = za + 1;
    out.push({ a: written(rand, base, za, 0.003, mult), b: written(rand, base, zb, 0.003), what: 'unbalanced' });
    // Two atoms whose rows lie within the grouping distance of each other, so groups of different atoms meet.
    const close = base.map((r) => r.slice());
    close[1] = close[0].map((x) => x + 0.012);
    out.push({ a: written(rand, close, za, 0.004), b: written(rand, close, zb, 0.004), what: 'touching groups' });
  }
  return out;
}

describe('EMD paths (split, restricted, whole) give the optimum of the whole problem', () => {
  const list = cases();

  it('agree with POT ot.emd2 to 1e-9 on crystal-shaped PDDs, each path taken often', () => {
    const ref = potReference(list);
    const taken = { split: 0, restricted: 0, whole: 0 };
    const byKind = new Map<string, number>();
    list.forEach(({ a, b, what }, t) => {
      const d = emd(a, b);
      const path = lastSolve.split ? 'split' : lastSolve.restricted ? 'restricted' : 'whole';
      taken[path]++;
      if (path === 'split') byKind.set(what, (byKind.get(what) ?? 0) + 1);
      if (Math.abs(d - ref[t]) > 1e-9) throw new Error(`${what} case ${t} (${path}): emd ${d} vs POT ${ref[t]}`);
      expect(emd(b, a)).toBe(d);
    });
    console.log(`paths taken: ${JSON.stringify(taken)}; split by kind: ${JSON.stringify(Object.fromEntries(byKind))}`);
    expect(taken.split).toBeGreaterThan(50);
    expect(taken.restricted).toBeGreaterThan(40);
    // Copies split; distinct crystals never do.
    expect(byKind.get('copies') ?? 0).toBeGreaterThan(50);
    expect(byKind.get('distinct') ?? 0).toBe(0);
  });

  it('equal the LP optimum (glpk.js) on a sample of every kind', async () => {
    for (const { a, b, what } of list.filter((_, t) => t % 7 === 0)) {
      const d = emd(a, b);
      const lp = await lpEmd(a, b);
      expect(Math.abs(d - lp), what).toBeLessThanOrEqual(1e-9 * Math.max(1, lp));
    }
  }, 120_000);
});
