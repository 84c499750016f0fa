// Benchmark of the exact EMD between PDDs (k = 100) on one thread: pairs per second for PDDs of 11 rows
// (44-atom P2_1/c molecular crystals, asymmetric unit of 11 atoms) and of 44 rows (44-atom P1 cells with no
// symmetry), for pairs of distinct structures and for pairs of noisy copies of one structure (atoms moved by up
// to 0.003 Å, like the leftovers of an optimiser). Times are given by the wall clock and by this process's CPU
// time (user + system, `process.cpuUsage`), which is the fairer figure on a shared, loaded machine.
import { performance } from 'node:perf_hooks';
import { computeInvariants } from '../invariants/batch.js';
import { emd, lastSolve } from '../metric/emd.js';
import type { Pdd, PeriodicPointSet } from '../types.js';
import { noisyPackings, randomP1, seeded } from './_metric-crystals.js';

const K = 100;

export async function run(): Promise<void> {
  const molecular = (await computeInvariants(noisyPackings(100, 2, 0.003, 7), K, { threads: 2 })).map((r) => r.pdd);
  const distinct = pairs(molecular, (i) => [2 * i, 2 * ((i + 1) % 100)], 100);
  const copies = pairs(molecular, (i) => [2 * i, 2 * i + 1], 100);
  const cells = Array.from({ length: 60 }, (_, i) => randomP1(44, 100 + i));
  const rand = seeded(11);
  const p1 = (await computeInvariants(cells, K, { threads: 2 })).map((r) => r.pdd);
  const p1Noisy = (await computeInvariants(cells.map((c) => jiggle(c, 0.003, rand)), K, { threads: 2 })).map((r) => r.pdd);
  const p1Pairs = pairs(p1, (i) => [i, (i + 1) % 60], 60);
  const p1Copies = Array.from({ length: 60 }, (_, i) => [p1[i], p1Noisy[i]] as [Pdd, Pdd]);
  report('11 rows, distinct packings', distinct);
  report('11 rows, noisy copies of one packing', copies);
  report('44 rows, distinct P1 cells', p1Pairs);
  report('44 rows, noisy copies of one P1 cell', p1Copies);
}

/** A copy of `set` with every atom moved by up to `noiseAngstrom` along each Cartesian axis. */
function jiggle(set: PeriodicPointSet, noiseAngstrom: number, rand: () => number): PeriodicPointSet {
  return { ...set, motif: set.motif.map((x) => x + noiseAngstrom * (2 * rand() - 1)) };
}

function pairs(pdds: Pdd[], pick: (i: number) => number[], count: number): Array<[Pdd, Pdd]> {
  return Array.from({ length: count }, (_, i) => {
    const [a, b] = pick(i);
    return [pdds[a], pdds[b]] as [Pdd, Pdd];
  });
}

function report(label: string, list: Array<[Pdd, Pdd]>): void {
  const rows = list.reduce((s, [a, b]) => s + a.weights.length + b.weights.length, 0) / (2 * list.length);
  for (const [a, b] of list) emd(a, b); // warm-up
  let done = 0;
  let pivots = 0;
  const t0 = performance.now();
  const c0 = process.cpuUsage();
  while (performance.now() - t0 < 1500) {
    for (const [a, b] of list) {
      emd(a, b);
      pivots += lastSolve.pivots;
    }
    done += list.length;
  }
  const seconds = (performance.now() - t0) / 1000;
  const c = process.cpuUsage(c0);
  const cpu = (c.user + c.system) / 1e6;
  process.stdout.write(
    `EMD, k = ${K}, ${label} (${rows.toFixed(1)} rows on average), 1 thread: by wall ${Math.round(done / seconds)} pairs/s` +
      ` (${((seconds / done) * 1e6).toFixed(1)} µs per pair); by CPU time ${Math.round(done / cpu)} pairs/s` +
      ` (${((cpu / done) * 1e6).toFixed(1)} µs per pair); ${(pivots / done).toFixed(1)} pivots per pair\n`,
  );
}
