// Stage "duplicates": every pair of compared structures within twice the tolerance (from the comparisons cache
// when the compared set is unchanged), then the energy-ordered collapse (src/landscape/collapse.ts): each
// structure joins the nearest kept structure within the tolerance, or is kept. Rows get their status, kept
// structure, distance to it and group size.
import { pairsWithin } from '../../metric/graph.js';
import { collapseDuplicates, visitOrder } from '../collapse.js';
import { emptyComparisons, listKey, loadComparisons } from '../compare-cache.js';
import type { SiftState } from './state.js';

/**
 * Pairs are searched within this multiple of the tolerance and cached, so a re-run with a tolerance up to that
 * large reuses them (distinct structures mostly lie far beyond, so the wider search costs few extra EMDs).
 */
export const PAIR_RADIUS_FACTOR = 2;

export async function duplicatesStage(s: SiftState): Promise<void> {
  const { items, params } = s;
  s.progress.stage('finding duplicates', items.length);
  const loaded = s.cacheDir ? loadComparisons(s.cacheDir, s.cacheParams) : { comparisons: emptyComparisons(), problem: null };
  if (loaded.problem) s.messages.push(loaded.problem);
  s.comparisons = loaded.comparisons;
  const itemsKey = listKey(items.map((w) => w.key));
  const cp = s.comparisons.pairs;
  if (cp && cp.itemsKey === itemsKey && cp.radiusAngstrom >= params.toleranceAngstrom) {
    s.close = { i: Int32Array.from(cp.i), j: Int32Array.from(cp.j), distances: Float64Array.from(cp.d), radius: cp.radiusAngstrom };
    s.reused.push('pairs');
  } else {
    const radius = params.toleranceAngstrom * PAIR_RADIUS_FACTOR;
    const graphItems = items.map((w) => ({ pdd: w.pdd!, amd: w.amd! }));
    const found = await pairsWithin(graphItems, radius, { threads: s.threads, onProgress: (d: number) => s.progress.tick(d) });
    s.close = { i: found.i, j: found.j, distances: found.distances, radius };
    s.comparisons.pairs = { itemsKey, radiusAngstrom: radius, i: Array.from(found.i), j: Array.from(found.j), d: Array.from(found.distances) };
    s.comparisonsChanged = true;
  }
  const order = visitOrder(
    items.map((_, i) => i),
    items.map((w) => w.row.energy),
  );
  const close = s.close;
  const collapsed = collapseDuplicates(items.length, order, { i: close.i, j: close.j, d: close.distances }, params.toleranceAngstrom);
  s.collapsed = collapsed;
  s.keptLocal = collapsed.kept;
  s.keptPos = new Int32Array(items.length).fill(-1);
  collapsed.kept.forEach((p, r) => (s.keptPos[p] = r));
  for (let p = 0; p < items.length; p++) {
    const row = items[p].row;
    const kp = collapsed.keptOf[p];
    row.keptIndex = items[kp].row.index;
    row.distanceToKept = collapsed.distanceToKept[p];
    if (kp === p) row.status = 'kept';
    else {
      row.status = 'duplicate';
      row.duplicateOf = items[kp].row.id;
    }
  }
  for (const p of s.keptLocal) items[p].row.members = 0;
  for (let p = 0; p < items.length; p++) items[collapsed.keptOf[p]].row.members++;
  s.progress.done();
}
