// Stage "duplicates": the energy-ordered collapse (src/landscape/collapse.ts states the rule): each structure joins
// the nearest kept structure of its composition within the tolerance that the element-aware check accepts, or is
// kept. Rows get their status, kept structure, distance to it and group size. Every EMD solved goes into the run's
// pair store, which the later comparison stages read and the comparisons cache keeps for re-runs.
//
// Two paths, one result:
// - a given tolerance: the energy-ordered search (src/landscape/duplicate-rounds.ts) solves only the EMDs the rule
//   needs; the element check is then asked about each duplicate's kept structure, which is the first pair the
//   collapse would ask about, so when it accepts them all the collapse with the check is the same. If it refuses
//   one, every pair within the tolerance is solved and the collapse runs on them with the check;
// - `auto` (the default): the tolerance comes from the gap in the single-linkage distances of every pair within
//   the search radius (src/landscape/auto-tolerance.ts), so those pairs are solved (they serve the nearest
//   neighbours later too), and the collapse runs on them.
import { collapseDuplicates, visitOrder, type CollapseResult } from '../collapse.js';
import { closePairs, findDuplicates } from '../duplicate-rounds.js';
import { emptyComparisons, listKey, loadComparisons } from '../compare-cache.js';
import type { SiftState } from './state.js';
import { compositionClasses } from '../../geometry/composition.js';
import { AUTO_SEARCH_RADIUS_ANGSTROM, chooseTolerance, spanningEdgeLengths } from '../auto-tolerance.js';
import { emd } from '../../metric/emd.js';
import { labelledPdd } from '../../metric/element-emd.js';
import type { Pdd } from '../../types.js';

export async function duplicatesStage(s: SiftState): Promise<void> {
  const { items, params } = s;
  s.progress.stage('finding duplicates', items.length);
  const loaded = s.cacheDir ? loadComparisons(s.cacheDir, s.cacheParams) : { comparisons: emptyComparisons(), problem: null };
  if (loaded.problem) s.messages.push(loaded.problem);
  s.comparisons = loaded.comparisons;
  const itemsKey = listKey(items.map((w) => w.key));
  const cp = s.comparisons.pairs;
  if (cp && cp.itemsKey === itemsKey) {
    // EMDs solved by an earlier run on the same structures are not solved again.
    s.store.addAll(cp.i, cp.j, cp.d);
    s.reused.push('pairs');
  }
  s.compositionClass = compositionClasses(items.map((w) => w.row.composition ?? ''));
  const oneClass = s.compositionClass.every((c) => c === s.compositionClass[0]);
  const order = visitOrder(
    items.map((_, i) => i),
    items.map((w) => w.row.energy),
  );
  const accept = elementCheck(s, itemsKey);
  const auto = params.toleranceMode === 'auto';
  const pairsWithin = async (radius: number) => {
    const found = await closePairs(s.set!, s.index!, radius, s.store, s.pool);
    s.counters['duplicates: exact EMDs'] = (s.counters['duplicates: exact EMDs'] ?? 0) + found.emdEvaluations;
    s.close = { i: found.i, j: found.j, distances: found.d, radius };
  };
  let collapsed: CollapseResult;
  if (auto) {
    await pairsWithin(Math.max(AUTO_SEARCH_RADIUS_ANGSTROM, params.toleranceAngstrom));
    chooseFromGap(s);
    collapsed = collapseOnPairs(s, order, accept?.check);
  } else {
    const found = await findDuplicates({
      set: s.set!,
      index: s.index!,
      order,
      classOf: oneClass ? null : s.compositionClass,
      toleranceAngstrom: params.toleranceAngstrom,
      store: s.store,
      pool: s.pool,
      onProgress: (done) => s.progress.tick(done),
    });
    s.counters['duplicates: exact EMDs'] = found.emdEvaluations + found.otherClassEmdEvaluations;
    s.counters['duplicates: rounds'] = found.rounds;
    collapsed = { keptOf: found.keptOf, distanceToKept: found.distanceToKept, kept: found.kept, refused: [] };
    s.close = { i: found.otherPairs.i, j: found.otherPairs.j, distances: found.otherPairs.d, radius: params.toleranceAngstrom };
    if (accept && refusesAny(collapsed, order, accept.check)) {
      await pairsWithin(params.toleranceAngstrom);
      collapsed = collapseOnPairs(s, order, accept.check);
    }
  }
  accept?.save();
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

/** The collapse on every pair within the tolerance (all in `s.close`), with the element check. */
function collapseOnPairs(s: SiftState, order: Int32Array, check: ((a: number, b: number) => boolean) | undefined): CollapseResult {
  const close = s.close!;
  return collapseDuplicates(s.items.length, order, { i: close.i, j: close.j, d: close.distances }, s.params.toleranceAngstrom, {
    classOf: s.compositionClass,
    accept: check,
  });
}

/** Whether the element check refuses some duplicate's kept structure (asked in visit order). */
function refusesAny(c: CollapseResult, order: Int32Array, check: (a: number, b: number) => boolean): boolean {
  for (const p of order) if (c.keptOf[p] !== p && !check(p, c.keptOf[p])) return true;
  return false;
}

/**
 * The element-aware check (src/metric/element-emd.ts): two structures of one composition whose element-aware EMD
 * exceeds the tolerance are not duplicates (atoms of other elements sit at the same places). Its EMDs do not depend
 * on the tolerance: those of an earlier run on the same set are reused, and `save` puts the new ones in the cache.
 */
function elementCheck(s: SiftState, itemsKey: string): { check: (a: number, b: number) => boolean; save: () => void } | undefined {
  if (!s.params.elementCheck) return undefined;
  const { items } = s;
  const labelled = new Map<number, Pdd>();
  const labelledOf = (p: number) => {
    let l = labelled.get(p);
    if (!l) labelled.set(p, (l = labelledPdd(items[p].pdd!, items[p].elements!)));
    return l;
  };
  s.elementDistances = new Map();
  const cachedElements = s.comparisons.elementDistances;
  if (cachedElements && cachedElements.itemsKey === itemsKey) {
    cachedElements.i.forEach((a, t) => s.elementDistances.set(pairKey(a, cachedElements.j[t]), cachedElements.d[t]));
    s.reused.push('element distances');
  }
  const known = s.elementDistances.size;
  const check = (a: number, b: number) => {
    let d = s.elementDistances.get(pairKey(a, b));
    if (d === undefined) {
      d = emd(labelledOf(a), labelledOf(b));
      s.elementDistances.set(pairKey(a, b), d);
    }
    return d <= s.params.toleranceAngstrom;
  };
  const save = () => {
    if (s.elementDistances.size === known) return;
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
  };
  return { check, save };
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
