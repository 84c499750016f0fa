// Benchmark of the exact neighbour graph under EMD: the k = 10 nearest neighbours of 10,000 structures of 44 atoms
// per cell (PDD depth k = 100) on 2 threads (goal: under 5 s), the share of EMD evaluations the AMD bound avoided
// (goal: at least 90%), and brute force (all n(n-1)/2 EMDs) timed on a subset in the same run and scaled to n.
// Structures: 1,000 distinct P2_1/c packings of an invented 11-atom molecule, each repeated 10 times with
// optimiser-like noise (see _metric-crystals.ts); invariants by computeInvariants (src/invariants).
import { performance } from 'node:perf_hooks';
import { computeInvariants } from '../invariants/batch.js';
import { distanceMatrix, nearestNeighbours } from '../metric/graph.js';
import { noisyPackings } from './_metric-crystals.js';

const K_PDD = 100;
const K_NEIGHBOURS = 10;
const THREADS = 2;

export async function run(): Promise<void> {
  const packings = Number(process.env.POLYSIFT_BENCH_PACKINGS ?? 1000);
  const copies = 10;
  const t0 = performance.now();
  const items = await computeInvariants(noisyPackings(packings, copies, 0.003, 20261202), K_PDD, { threads: THREADS });
  const n = items.length;
  const rows = items.reduce((s, it) => s + it.pdd.weights.length, 0) / n;
  process.stdout.write(
    `${n} structures (${packings} packings x ${copies} noisy copies), 44 atoms per cell, ${rows.toFixed(1)} PDD rows each,` +
      ` invariants in ${((performance.now() - t0) / 1000).toFixed(2)} s\n`,
  );

  const t1 = performance.now();
  const c1 = cpuSeconds();
  const g = await nearestNeighbours(items, K_NEIGHBOURS, { threads: THREADS });
  const graphSeconds = (performance.now() - t1) / 1000;
  const graphCpu = cpuSeconds() - c1;
  const avoided = 1 - g.emdEvaluations / g.pairsConsidered;
  // How many of each structure's 9 noisy copies are among its 10 nearest neighbours (a sanity figure).
  let copiesFound = 0;
  for (let i = 0; i < n; i++) {
    const family = Math.floor(i / copies);
    for (let s = 0; s < K_NEIGHBOURS; s++) if (Math.floor(g.indices[i * K_NEIGHBOURS + s] / copies) === family) copiesFound++;
  }
  process.stdout.write(
    `neighbour graph, k = ${K_NEIGHBOURS}, ${THREADS} threads: ${graphSeconds.toFixed(2)} s  [goal < 5 s]` +
      ` (CPU ${graphCpu.toFixed(2)} s over all threads; on a busy machine CPU / ${THREADS} is the time with ${THREADS} free cores)\n` +
      `  EMD evaluations ${g.emdEvaluations} of ${g.pairsConsidered} pairs: ${(100 * avoided).toFixed(2)}% avoided  [goal >= 90%]` +
      ` (${(g.emdEvaluations / n).toFixed(1)} per structure; ${(g.boundEvaluations / n).toFixed(0)} AMD bounds per structure)\n` +
      `  noisy copies among the neighbours: ${((100 * copiesFound) / (n * (copies - 1))).toFixed(1)}% of ${copies - 1} per structure\n`,
  );

  // Brute force on a subset, with the same EMD code and thread count, scaled by the number of pairs.
  const subset = Math.min(n, 400);
  const t2 = performance.now();
  const c2 = cpuSeconds();
  await distanceMatrix(items.slice(0, subset), { threads: THREADS });
  const subsetSeconds = (performance.now() - t2) / 1000;
  const subsetCpu = cpuSeconds() - c2;
  const scale = (n * (n - 1)) / (subset * (subset - 1));
  process.stdout.write(
    `brute force: ${subset} structures (${(subset * (subset - 1)) / 2} EMDs) in ${subsetSeconds.toFixed(2)} s on ${THREADS} threads` +
      ` (CPU ${subsetCpu.toFixed(2)} s), scaled to ${n}: ${(subsetSeconds * scale).toFixed(0)} s (CPU ${(subsetCpu * scale).toFixed(0)} s);` +
      ` brute force / graph = ${((subsetSeconds * scale) / graphSeconds).toFixed(0)} (CPU: ${((subsetCpu * scale) / graphCpu).toFixed(0)})\n`,
  );
}

/** CPU seconds used by this process so far, all threads (workers included). */
function cpuSeconds(): number {
  const u = process.cpuUsage();
  return (u.user + u.system) / 1e6;
}
