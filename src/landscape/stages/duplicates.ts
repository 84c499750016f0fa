// Stage "duplicates": every pair of compared structures within twice the tolerance (from the comparisons cache
// when the compared set is unchanged); with `auto`, the tolerance from the gap in those distances
// (src/landscape/auto-tolerance.ts); then the energy-ordered collapse (src/landscape/collapse.ts): each structure
// joins the nearest kept structure of its composition within the tolerance that the element-aware check accepts,
// or is kept. Rows get their status, kept structure, distance to it and group size.
import { pairsWithin } from '../../metric/graph.js';
import { collapseDuplicates, visitOrder } from '../collapse.js';
import { emptyComparisons, listKey, loadComparisons } from '../compare-cache.js';
import type { SiftState } from './state.js';
import { compositionClasses } from '../../geometry/composition.js';
import { AUTO_SEARCH_RADIUS_ANGSTROM, chooseTolerance, spanningEdgeLengths } from '../auto-tolerance.js';
import { emd } from '../../metric/emd.js';
import { labelledPdd } from '../../metric/element-emd.js';
import type { Pdd } from '../../types.js';

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
  const auto = params.toleranceMode === 'auto';
  // In auto mode the pairs are searched within the radius a default run searches (AUTO_SEARCH_RADIUS_ANGSTROM).
  const needed = auto ? AUTO_SEARCH_RADIUS_ANGSTROM : params.toleranceAngstrom;
  if (cp && cp.itemsKey === itemsKey && cp.radiusAngstrom >= needed) {
    s.close = { i: Int32Array.from(cp.i), j: Int32Array.from(cp.j), distances: Float64Array.from(cp.d), radius: cp.radiusAngstrom };
    s.reused.push('pairs');
  } else {
    const radius = Math.max(needed, params.toleranceAngstrom * PAIR_RADIUS_FACTOR);
    const graphItems = items.map((w) => ({ pdd: w.pdd!, amd: w.amd! }));
    const found = await pairsWithin(graphItems, radius, { threads: s.threads, onProgress: (d: number) => s.progress.tick(d) });
    s.close = { i: found.i, j: found.j, distances: found.distances, radius };
    s.comparisons.pairs = { itemsKey, radiusAngstrom: radius, i: Array.from(found.i), j: Array.from(found.j), d: Array.from(found.distances) };
    s.comparisonsChanged = true;
  }
  s.compositionClass = compositionClasses(items.map((w) => w.row.composition ?? ''));
  if (auto) chooseFromGap(s);
  const order = visitOrder(
    items.map((_, i) => i),
    items.map((w) => w.row.energy),
  );
  const close = s.close;
  // Chemistry: only structures of one composition may be duplicates; within one, the element-aware EMD
  // (src/metric/element-emd.ts) must also lie within the tolerance, or atoms of other elements sit at the
  // same places. It is computed only for the pairs the collapse asks about, nearest kept structure first.
  const labelled = new Map<number, Pdd>();
  const labelledOf = (p: number) => {
    let l = labelled.get(p);
    if (!l) labelled.set(p, (l = labelledPdd(items[p].pdd!, items[p].elements!)));
    return l;
  };
  // Element-aware EMDs do not depend on the tolerance: those of an earlier run on the same set are reused.
  s.elementDistances = new Map();
  const cachedElements = s.comparisons.elementDistances;
  if (cachedElements && cachedElements.itemsKey === itemsKey) {
    cachedElements.i.forEach((a, t) => s.elementDistances.set(pairKey(a, cachedElements.j[t]), cachedElements.d[t]));
    s.reused.push('element distances');
  }
  const known = s.elementDistances.size;
  const accept = params.elementCheck
    ? (a: number, b: number) => {
        let d = s.elementDistances.get(pairKey(a, b));
        if (d === undefined) {
          d = emd(labelledOf(a), labelledOf(b));
          s.elementDistances.set(pairKey(a, b), d);
        }
        return d <= params.toleranceAngstrom;
      }
    : undefined;
  const collapsed = collapseDuplicates(items.length, order, { i: close.i, j: close.j, d: close.distances }, params.toleranceAngstrom, {
    classOf: s.compositionClass,
    accept,
  });
  s.collapsed = collapsed;
  if (s.elementDistances.size > known) {
    const i: number[] = [];
    const j: number[] = [];
    const d: number[] = [];
    for (const [key, v] of s.elementDistances) {
      const [a, b] = key.split(',').map(Number);
      i.push(a);
      j.push(b);
      d.push(v);
    }
    s.comparisons.elementDistances = { itemsKey, i, j, d };
    s.comparisonsChanged = true;
  }
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

/** `auto`: the tolerance from the gap in the run's single-linkage distances (src/landscape/auto-tolerance.ts). */
function chooseFromGap(s: SiftState): void {
  const close = s.close!;
  const lengths = spanningEdgeLengths(s.items.length, { i: close.i, j: close.j, d: close.distances }, s.compositionClass);
  const choice = chooseTolerance(lengths, Math.min(close.radius, AUTO_SEARCH_RADIUS_ANGSTROM), s.params.toleranceAngstrom);
  s.toleranceChoice = choice;
  s.params.toleranceAngstrom = choice.chosenAngstrom;
  if (choice.clear && choice.gapLowAngstrom === null) {
    s.messages.push(
      `duplicate tolerance (auto): no two structures of one composition lie within ${choice.searchRadiusAngstrom} Å, so no tolerance up to that ` +
        `merges any; ${choice.chosenAngstrom} Å is recorded`,
    );
  } else if (choice.clear) {
    s.messages.push(
      `duplicate tolerance (auto): ${choice.chosenAngstrom} Å, the middle (log scale) of the gap between ${round4(choice.gapLowAngstrom!)} and ` +
        `${choice.gapOpen ? 'at least ' : ''}${round4(choice.gapHighAngstrom!)} Å in ${choice.edgeLengthsAngstrom.length} single-linkage distances` +
        (choice.gapOpen ? ' (nothing distinct lies closer; the search reached that far)' : ''),
    );
  } else s.messages.push(`warning: duplicate tolerance (auto): ${choice.warning}`);
}

function round4(x: number): number {
  return Number(x.toPrecision(4));
}

/** Key of an unordered pair of positions in `items`. */
export function pairKey(a: number, b: number): string {
  return a < b ? `${a},${b}` : `${b},${a}`;
}
