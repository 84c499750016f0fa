// Figures for the clustering stage: HDBSCAN (dense and lazy) and the metric map on invented data.
// Run with `npm run bench` (or `node dist/bench/run.js cluster`).
import { coreDistancesDense, hdbscanDense, hdbscanLazy } from '../cluster/hdbscan.js';
import { embed2d } from '../cluster/embedding.js';
import { embed2dLandmarks } from '../cluster/embedding-landmarks.js';
import { seededUniform } from '../demo/prng.js';

/** Invented points: Gaussian blobs in `dim` dimensions plus uniform noise, seeded (mulberry32, common practice). */
function points(n: number, dim: number, seed: number): Float64Array {
  const rand = seededUniform(seed);
  const x = new Float64Array(n * dim);
  const centres = 12;
  for (let i = 0; i < n; i++) {
    const c = i % centres;
    const noise = i % 10 === 9;
    for (let d = 0; d < dim; d++) {
      const centre = ((c * 7 + d * 3) % 11) * 2;
      x[i * dim + d] = noise ? rand() * 24 : centre + (rand() + rand() + rand() - 1.5) * 0.8;
    }
  }
  return x;
}

/** L-infinity distance matrix (the ground distance of the EMD on PDD rows). */
function matrix(x: Float64Array, n: number, dim: number): Float64Array {
  const dist = new Float64Array(n * n);
  for (let i = 0; i < n; i++) {
    for (let j = i + 1; j < n; j++) {
      let m = 0;
      for (let d = 0; d < dim; d++) m = Math.max(m, Math.abs(x[i * dim + d] - x[j * dim + d]));
      dist[i * n + j] = m;
      dist[j * n + i] = m;
    }
  }
  return dist;
}

/** Exact k nearest other points per point (ties by index) from a dense matrix. */
function knn(dist: Float64Array, n: number, k: number): { k: number; indices: Int32Array; distances: Float64Array } {
  const indices = new Int32Array(n * k);
  const distances = new Float64Array(n * k);
  const idx = new Int32Array(n - 1);
  for (let i = 0; i < n; i++) {
    let m = 0;
    for (let j = 0; j < n; j++) if (j !== i) idx[m++] = j;
    idx.sort((a, b) => dist[i * n + a] - dist[i * n + b] || a - b);
    for (let t = 0; t < k; t++) {
      indices[i * k + t] = idx[t];
      distances[i * k + t] = dist[i * n + idx[t]];
    }
  }
  return { k, indices, distances };
}

/** Wall-clock seconds since t0, and this thread's CPU seconds since the matching cpuUsage mark (the machine is shared). */
let cpuMark = process.cpuUsage();
function seconds(t0: bigint): string {
  const cpu = process.cpuUsage(cpuMark);
  cpuMark = process.cpuUsage();
  return `${(Number(process.hrtime.bigint() - t0) / 1e9).toFixed(2)} s wall, ${((cpu.user + cpu.system) / 1e6).toFixed(2)} s CPU`;
}

function mark(): bigint {
  cpuMark = process.cpuUsage();
  return process.hrtime.bigint();
}

export async function run(): Promise<void> {
  const dim = 6;
  for (const n of [1000, 3000]) {
    const x = points(n, dim, 5 + n);
    const dist = matrix(x, n, dim);
    let t0 = mark();
    const dense = hdbscanDense(dist, n, { minClusterSize: 10, minSamples: 5 });
    const clusters = new Set(Array.from(dense.labels).filter((l) => l >= 0)).size;
    process.stdout.write(`hdbscanDense n=${n}: ${seconds(t0)}, ${clusters} clusters\n`);
    // lazy: the distance is recomputed from coordinates, the bound is the first coordinate's difference
    const core = coreDistancesDense(dist, n, 5);
    let evaluations = 0;
    t0 = mark();
    const lazy = hdbscanLazy(
      n,
      (i, j) => {
        evaluations++;
        return dist[i * n + j];
      },
      (i, j) => Math.abs(x[i * dim] - x[j * dim]),
      core,
      { minClusterSize: 10, minSamples: 5 },
    );
    const same = lazy.labels.every((l, i) => l === dense.labels[i]);
    process.stdout.write(`hdbscanLazy n=${n}: ${seconds(t0)}, ${evaluations} of ${(n * (n - 1)) / 2} pairs evaluated, labels ${same ? 'equal' : 'DIFFER'}\n`);
    // the same with the exact 10-nearest-neighbour graph the core distances come from
    const graph = knn(dist, n, 10);
    evaluations = 0;
    t0 = mark();
    const withGraph = hdbscanLazy(
      n,
      (i, j) => {
        evaluations++;
        return dist[i * n + j];
      },
      (i, j) => Math.abs(x[i * dim] - x[j * dim]),
      core,
      { minClusterSize: 10, minSamples: 5, neighbours: graph },
    );
    const same2 = withGraph.labels.every((l, i) => l === dense.labels[i]);
    process.stdout.write(`hdbscanLazy + 10-NN graph n=${n}: ${seconds(t0)}, ${evaluations} pairs evaluated, labels ${same2 ? 'equal' : 'DIFFER'}\n`);
    t0 = mark();
    const map = embed2d(dist, n);
    const q = map.quality.map((v) => `${v.name} ${v.value.toFixed(4)}`).join(', ');
    process.stdout.write(`embed2d n=${n}: ${seconds(t0)} (${q})\n`);
  }
  // landmark map for a set too large for an n*n matrix
  const n = 10_000;
  const x = points(n, dim, 77);
  const linf = (i: number, j: number) => {
    let m = 0;
    for (let d = 0; d < dim; d++) m = Math.max(m, Math.abs(x[i * dim + d] - x[j * dim + d]));
    return m;
  };
  const t0 = mark();
  const map = embed2dLandmarks(n, linf, { landmarks: 200 });
  process.stdout.write(`embed2dLandmarks n=${n}, 200 landmarks: ${seconds(t0)}, ${map.distanceEvaluations} distances, ${map.quality[0].name} ${map.quality[0].value.toFixed(4)}\n`);
}
