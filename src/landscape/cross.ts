// Cross-set search under EMD for `diff` and `locate`: for each query PDD, its `count` nearest target PDDs and
// every target within a tolerance, exactly. The nearest lists come from the metric's exact cross-set search
// (`nearestAcross` in src/metric/graph.ts, AMD lower-bound pruning, ties by (distance, index)). A query whose
// last listed neighbour still lies within the tolerance may have more targets within it, so those queries are
// searched again with twice as many neighbours until the list ends beyond the tolerance or holds every target.
import { nearestAcross, type MetricItem } from '../metric/graph.js';
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
  const nt = targets.length;
  const qItems: MetricItem[] = queries.map((pdd, q) => ({ pdd, amd: Float64Array.from(queryAmd[q]) }));
  const tItems: MetricItem[] = targets.map((pdd, t) => ({ pdd, amd: Float64Array.from(targetAmd[t]) }));
  const neighbours = new Int32Array(nq * count).fill(-1);
  const neighbourDistance = new Float64Array(nq * count).fill(Infinity);
  const found = new Int32Array(nq);
  const within: Array<Array<[number, number]>> = Array.from({ length: nq }, () => []);
  let emdEvaluations = 0;

  // Widen the search for the queries whose list may miss targets within the tolerance.
  let pending = Array.from({ length: nq }, (_, q) => q);
  let k = count + 1; // one more than listed, so a single partner within the tolerance is usually settled in one pass
  while (pending.length > 0 && nt > 0) {
    const kk = Math.min(k, nt);
    const g = await nearestAcross(pending.map((q) => qItems[q]), tItems, kk, { threads });
    emdEvaluations += g.emdEvaluations;
    const again: number[] = [];
    pending.forEach((q, r) => {
      const base = r * g.k;
      if (found[q] === 0) {
        const take = Math.min(count, g.k);
        for (let j = 0; j < take; j++) {
          neighbours[q * count + j] = g.indices[base + j];
          neighbourDistance[q * count + j] = g.distances[base + j];
        }
        found[q] = take;
      }
      const last = g.distances[base + g.k - 1];
      if (last <= toleranceAngstrom && g.k < nt) {
        again.push(q);
        return;
      }
      within[q] = [];
      for (let j = 0; j < g.k && g.distances[base + j] <= toleranceAngstrom; j++) within[q].push([g.indices[base + j], g.distances[base + j]]);
    });
    pending = again;
    k *= 2;
  }

  const nearest = new Int32Array(nq).fill(-1);
  const nearestDistance = new Float64Array(nq).fill(Infinity);
  const pq: number[] = [];
  const pt: number[] = [];
  const pc: number[] = [];
  for (let q = 0; q < nq; q++) {
    if (found[q] > 0) {
      nearest[q] = neighbours[q * count];
      nearestDistance[q] = neighbourDistance[q * count];
    }
    for (const [t, d] of within[q]) {
      pq.push(q);
      pt.push(t);
      pc.push(d);
    }
  }
  return {
    nearest, nearestDistance, neighbours, neighbourDistance, found, count,
    pairs: { a: Int32Array.from(pq), b: Int32Array.from(pt), cost: Float64Array.from(pc) },
    emdEvaluations,
  };
}
