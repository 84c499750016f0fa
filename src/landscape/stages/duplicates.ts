// Stage "duplicates": the energy-ordered collapse (collapse.ts states the rule) as a search that solves only the
// EMDs the rule needs (duplicate-rounds.ts): each structure joins the nearest kept structure of its composition
// class within the tolerance, or is kept. Rows get their status, kept structure, distance to it and group size.
// Every EMD solved goes into the run's pair store, which the comparisons cache keeps for re-runs.
import { visitOrder } from '../collapse.js';
import { findDuplicates } from '../duplicate-rounds.js';
import { emptyComparisons, listKey, loadComparisons } from '../compare-cache.js';
import type { SiftState } from './state.js';

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
  const order = visitOrder(
    items.map((_, i) => i),
    items.map((w) => w.row.energy),
  );
  const found = await findDuplicates({
    set: s.set!,
    index: s.index!,
    order,
    classOf: s.classOf,
    toleranceAngstrom: params.toleranceAngstrom,
    store: s.store,
    pool: s.pool,
    onProgress: (done) => s.progress.tick(done),
  });
  s.duplicates = found;
  s.counters['duplicates: exact EMDs'] = found.emdEvaluations;
  s.counters['duplicates: rounds'] = found.rounds;
  s.keptLocal = found.kept;
  s.keptPos = new Int32Array(items.length).fill(-1);
  found.kept.forEach((p, r) => (s.keptPos[p] = r));
  for (let p = 0; p < items.length; p++) {
    const row = items[p].row;
    const kp = found.keptOf[p];
    row.keptIndex = items[kp].row.index;
    row.distanceToKept = found.distanceToKept[p];
    if (kp === p) row.status = 'kept';
    else {
      row.status = 'duplicate';
      row.duplicateOf = items[kp].row.id;
    }
  }
  for (const p of s.keptLocal) items[p].row.members = 0;
  for (let p = 0; p < items.length; p++) items[found.keptOf[p]].row.members++;
  s.progress.done();
}
