// Exact cross-set search under EMD for `diff` and `locate`: for each query PDD, its `count` nearest target
// PDDs and every target within a tolerance. The AMD L-infinity distance is a lower bound of the EMD
// ("Average minimum distances of periodic point sets", MATCH Commun. Math. Comput. Chem. 2022), so targets
// are visited in ascending bound order and the search stops once the bound exceeds both the tolerance and
// the current count-th nearest distance: every skipped target is provably farther.
import { emd } from '../metric/emd.js';
import { chunkRanges, defaultThreads, mapInWorkers } from '../parallel/pool.js';
import type { CandidatePairs } from './matching.js';
import type { KeptInvariants } from './schema.js';
import type { Pdd } from '../types.js';

/** PDD of a stored kept structure. */
export function toPdd(inv: KeptInvariants, k: number): Pdd {
  return { k, rows: Float64Array.from(inv.pddRows), weights: Float64Array.from(inv.pddWeights) };
}

export interface CrossResult {
  /** Nearest target per query (-1 when there are no targets) and its EMD (Å). */
  nearest: Int32Array;
  nearestDistance: Float64Array;
  /** Up to `count` nearest targets per query, ascending EMD: query q's list is [q*count, q*count+found[q]). */
  neighbours: Int32Array;
  neighbourDistance: Float64Array;
  found: Int32Array;
  count: number;
  /** All (query, target) pairs with EMD ≤ tolerance. */
  pairs: CandidatePairs;
  /** Number of exact EMD evaluations made (the rest were ruled out by the AMD bound). */
  emdEvaluations: number;
}

interface ChunkInput {
  queries: Pdd[];
  queryAmd: Float64Array;
  targets: Pdd[];
  targetAmd: Float64Array;
  k: number;
  toleranceAngstrom: number;
  count: number;
}

interface ChunkOutput {
  neighbours: Int32Array;
  neighbourDistance: Float64Array;
  found: Int32Array;
  pairQ: Int32Array;
  pairT: Int32Array;
  pairCost: Float64Array;
  emdEvaluations: number;
}

/**
 * Exact nearest `count` targets per query and all pairs within `toleranceAngstrom`.
 * `queryAmd`/`targetAmd` are the AMD vectors (length k each) of the PDDs.
 */
export async function crossNeighbours(
  queries: Pdd[],
  queryAmd: number[][],
  targets: Pdd[],
  targetAmd: number[][],
  toleranceAngstrom: number,
  threads?: number,
  count = 1,
): Promise<CrossResult> {
  const nq = queries.length;
  const k = queries[0]?.k ?? targets[0]?.k ?? 0;
  const tAmd = flatten(targetAmd, k);
  const threadCount = Math.max(1, threads ?? defaultThreads());
  // Small jobs run here; larger ones in chunks across the worker pool.
  const work = nq * targets.length;
  const ranges = work < 20000 || threadCount === 1 ? [[0, nq] as [number, number]] : chunkRanges(nq, threadCount * 4);
  const inputs: ChunkInput[] = ranges.map(([s, e]) => ({
    queries: queries.slice(s, e),
    queryAmd: flatten(queryAmd.slice(s, e), k),
    targets,
    targetAmd: tAmd,
    k,
    toleranceAngstrom,
    count,
  }));
  const outputs: ChunkOutput[] =
    inputs.length === 1
      ? [crossChunk(inputs[0])]
      : await mapInWorkers<ChunkInput, ChunkOutput>(new URL('./cross.js', import.meta.url).href, 'crossChunk', inputs, { threads: threadCount });

  const neighbours = new Int32Array(nq * count).fill(-1);
  const neighbourDistance = new Float64Array(nq * count).fill(Infinity);
  const found = new Int32Array(nq);
  const pq: number[] = [];
  const pt: number[] = [];
  const pc: number[] = [];
  let emdEvaluations = 0;
  ranges.forEach(([s], c) => {
    const o = outputs[c];
    neighbours.set(o.neighbours, s * count);
    neighbourDistance.set(o.neighbourDistance, s * count);
    found.set(o.found, s);
    for (let e = 0; e < o.pairQ.length; e++) {
      pq.push(o.pairQ[e] + s);
      pt.push(o.pairT[e]);
      pc.push(o.pairCost[e]);
    }
    emdEvaluations += o.emdEvaluations;
  });
  const nearest = new Int32Array(nq).fill(-1);
  const nearestDistance = new Float64Array(nq).fill(Infinity);
  for (let q = 0; q < nq; q++) {
    if (found[q] > 0) {
      nearest[q] = neighbours[q * count];
      nearestDistance[q] = neighbourDistance[q * count];
    }
  }
  return {
    nearest, nearestDistance, neighbours, neighbourDistance, found, count,
    pairs: { a: Int32Array.from(pq), b: Int32Array.from(pt), cost: Float64Array.from(pc) },
    emdEvaluations,
  };
}

/** One chunk of queries against all targets (runs in a worker thread for large jobs). */
export function crossChunk(input: ChunkInput): ChunkOutput {
  const { queries, queryAmd, targets, targetAmd, k, toleranceAngstrom, count } = input;
  const nq = queries.length;
  const nt = targets.length;
  const neighbours = new Int32Array(nq * count).fill(-1);
  const neighbourDistance = new Float64Array(nq * count).fill(Infinity);
  const found = new Int32Array(nq);
  const pairQ: number[] = [];
  const pairT: number[] = [];
  const pairCost: number[] = [];
  const bound = new Float64Array(nt);
  const order = new Uint32Array(nt);
  let emdEvaluations = 0;
  for (let q = 0; q < nq; q++) {
    // Lower bound of every EMD from this query: AMD L-infinity distance.
    const qo = q * k;
    for (let t = 0; t < nt; t++) {
      let m = 0;
      const to = t * k;
      for (let j = 0; j < k; j++) {
        const d = Math.abs(queryAmd[qo + j] - targetAmd[to + j]);
        if (d > m) m = d;
      }
      bound[t] = m;
      order[t] = t;
    }
    order.sort((x, y) => bound[x] - bound[y] || x - y);
    const base = q * count;
    let have = 0;
    for (let r = 0; r < nt; r++) {
      const t = order[r];
      const radius = Math.max(toleranceAngstrom, have < count ? Infinity : neighbourDistance[base + count - 1]);
      if (bound[t] > radius) break;
      const d = emd(queries[q], targets[t]);
      emdEvaluations++;
      if (d <= toleranceAngstrom) {
        pairQ.push(q);
        pairT.push(t);
        pairCost.push(d);
      }
      // Insert into the sorted nearest list (ties keep the earlier target first).
      if (have < count || d < neighbourDistance[base + count - 1]) {
        let p = Math.min(have, count - 1);
        while (p > 0 && (neighbourDistance[base + p - 1] > d || (neighbourDistance[base + p - 1] === d && neighbours[base + p - 1] > t))) {
          neighbourDistance[base + p] = neighbourDistance[base + p - 1];
          neighbours[base + p] = neighbours[base + p - 1];
          p--;
        }
        neighbourDistance[base + p] = d;
        neighbours[base + p] = t;
        if (have < count) have++;
      }
    }
    found[q] = have;
  }
  return {
    neighbours, neighbourDistance, found,
    pairQ: Int32Array.from(pairQ), pairT: Int32Array.from(pairT), pairCost: Float64Array.from(pairCost), emdEvaluations,
  };
}

function flatten(vectors: number[][], k: number): Float64Array {
  const out = new Float64Array(vectors.length * k);
  vectors.forEach((v, i) => {
    if (v.length !== k) throw new Error(`an AMD vector has ${v.length} entries, expected k = ${k}`);
    out.set(v, i * k);
  });
  return out;
}
