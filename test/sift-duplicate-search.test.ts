// The energy-ordered duplicate search (src/landscape/duplicate-rounds.ts) against the collapse rule on the full
// matrix (src/landscape/collapse.ts: visit order, nearest kept structure within the tolerance, ties to the one
// visited first), with composition classes: structures of different classes are never duplicates, however close
// (DESIGN: a near-zero EMD between different compositions is a flag, not a merge), and each structure's nearest
// structure of another class within the tolerance is reported. Invented PDDs with clusters of noisy copies, exact
// duplicates and long chains of structures each within the tolerance of the next (the worst case for rounds).
import { describe, expect, it } from 'vitest';
import { emd } from '../src/metric/emd.js';
import { buildIndex, packItems } from '../src/metric/packed.js';
import { PairStore } from '../src/metric/pair-store.js';
import { WorkerPool } from '../src/parallel/pool.js';
import { findDuplicates } from '../src/landscape/duplicate-rounds.js';
import { collapseDuplicates, visitOrder } from '../src/landscape/collapse.js';
import type { Pdd } from '../src/types.js';
import { makePdd, randomPdd, rng } from './metric-random.js';

const K = 8;

function structures(seed: number, count: number): { pdds: Pdd[]; energy: number[] } {
  const rand = rng(seed);
  const centres = Array.from({ length: 12 }, () => randomPdd(rand, 2 + Math.floor(rand() * 4), K, () => 1 + 3 * rand()));
  const pdds: Pdd[] = [];
  const energy: number[] = [];
  while (pdds.length < count) {
    const r = rand();
    if (r < 0.7) {
      // A noisy copy of a centre (or, now and then, an exact copy of an earlier structure).
      if (rand() < 0.1 && pdds.length > 0) pdds.push({ ...pdds[Math.floor(rand() * pdds.length)] });
      else {
        const c = centres[Math.floor(rand() * centres.length)];
        const n = c.weights.length;
        pdds.push(makePdd(Array.from({ length: n }, (_, i) => Array.from(c.rows.subarray(i * K, i * K + K), (x) => x + 0.02 * (rand() - 0.5))), Array.from(c.weights)));
      }
    } else {
      // A chain: each step 0.6 of the tolerance from the last, so structures depend on their predecessors.
      const base = pdds.length > 0 ? pdds[pdds.length - 1] : centres[0];
      pdds.push({ k: K, rows: base.rows.map((x) => x + 0.6 * 0.05), weights: base.weights.slice() });
    }
    energy.push(Math.round(rand() * 50) / 10);
  }
  return { pdds, energy };
}

function brute(pdds: Pdd[], energy: number[], classOf: Int32Array | null, tol: number) {
  const n = pdds.length;
  const d = new Float64Array(n * n);
  for (let i = 0; i < n; i++) for (let j = i + 1; j < n; j++) d[i * n + j] = d[j * n + i] = emd(pdds[i], pdds[j]);
  const ei: number[] = [];
  const ej: number[] = [];
  const ed: number[] = [];
  for (let i = 0; i < n; i++)
    for (let j = i + 1; j < n; j++) if (d[i * n + j] <= tol && (!classOf || classOf[i] === classOf[j])) (ei.push(i), ej.push(j), ed.push(d[i * n + j]));
  const order = visitOrder(
    Array.from({ length: n }, (_, i) => i),
    energy,
  );
  const c = collapseDuplicates(n, order, { i: Int32Array.from(ei), j: Int32Array.from(ej), d: Float64Array.from(ed) }, tol);
  const other = new Int32Array(n).fill(-1);
  for (let i = 0; i < n && classOf; i++)
    for (let j = 0; j < n; j++) {
      if (classOf[j] === classOf[i] || d[i * n + j] > tol) continue;
      if (other[i] < 0 || d[i * n + j] < d[i * n + other[i]]) other[i] = j;
    }
  return { ...c, order, other, d };
}

describe('energy-ordered duplicate search', () => {
  const { pdds, energy } = structures(909, 260);
  const tol = 0.05;
  for (const threads of [1, 2])
    for (const withClasses of [false, true]) {
      it(`equals the collapse rule on the full matrix, ${threads} thread(s), ${withClasses ? 'three composition classes' : 'one class'}`, async () => {
        const rand = rng(4242);
        const classOf = withClasses ? Int32Array.from(pdds, () => Math.floor(rand() * 3)) : null;
        const ref = brute(pdds, energy, classOf, tol);
        const set = packItems(pdds.map((pdd) => ({ pdd })), threads > 1);
        const pool = new WorkerPool(threads);
        try {
          const store = new PairStore();
          const got = await findDuplicates({ set, index: buildIndex(set, threads > 1), order: ref.order, classOf, toleranceAngstrom: tol, store, pool });
          expect(got.kept).toEqual(ref.kept);
          expect(Array.from(got.keptOf)).toEqual(Array.from(ref.keptOf));
          expect(Array.from(got.distanceToKept)).toEqual(Array.from(ref.distanceToKept));
          // Far fewer EMDs than pairs within reach; chains need several rounds.
          expect(got.emdEvaluations).toBeLessThan((pdds.length * (pdds.length - 1)) / 2 / 10);
          expect(got.rounds).toBeGreaterThan(1);
          if (classOf) {
            // Never a duplicate across classes; some pairs across classes lie within the tolerance (the flag cases).
            for (let i = 0; i < pdds.length; i++) expect(classOf[got.keptOf[i]]).toBe(classOf[i]);
            expect(Array.from(got.otherClass)).toEqual(Array.from(ref.other));
            for (let i = 0; i < pdds.length; i++) if (ref.other[i] >= 0) expect(got.otherClassDistance[i]).toBe(ref.d[i * pdds.length + ref.other[i]]);
            // Every pair of different classes within the tolerance (what the other-chemistry flag counts).
            const n = pdds.length;
            const want: string[] = [];
            for (let i = 0; i < n; i++) for (let j = i + 1; j < n; j++) if (classOf[i] !== classOf[j] && ref.d[i * n + j] <= tol) want.push(`${i},${j},${ref.d[i * n + j]}`);
            expect(Array.from(got.otherPairs.i, (i, t) => `${i},${got.otherPairs.j[t]},${got.otherPairs.d[t]}`).sort()).toEqual(want.sort());
            expect(Array.from(ref.other).filter((x) => x >= 0).length).toBeGreaterThan(10);
          } else expect(Array.from(got.otherClass).every((x) => x === -1)).toBe(true);
        } finally {
          await pool.close();
        }
      }, 120_000);
    }
});
