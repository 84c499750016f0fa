// Stage "neighbours": every structure's nearest neighbour distance (the noise-versus-distinct distribution), a
// duplicate's nearest kept structure, and each kept structure's nearest kept neighbours (the report's
// neighbourhood lines and HDBSCAN's core distances), exactly.
import { nearestAcross, nearestNeighbours } from '../../metric/graph.js';
import { listKey } from '../compare-cache.js';
import type { SiftState } from './state.js';

export async function neighboursStage(s: SiftState): Promise<void> {
  const { items, keptLocal, keptPos, params } = s;
  const close = s.close!;
  s.progress.stage('nearest neighbours', items.length);
  const graphItems = items.map((w) => ({ pdd: w.pdd!, amd: w.amd! }));
  // Every pair within the tolerance is known from the collapse, which settles two things without more EMDs:
  // a duplicate's nearest kept structure lies within the tolerance (its own kept structure does), and any
  // structure with a partner within the tolerance has its nearest neighbour among those partners.
  const nearestPair = new Float64Array(items.length).fill(Infinity);
  const nearestKeptOfDup = new Int32Array(items.length).fill(-1);
  const nearestKeptD = new Float64Array(items.length).fill(Infinity);
  for (let t = 0; t < close.i.length; t++) {
    const a = close.i[t];
    const b = close.j[t];
    const d = close.distances[t];
    if (d < nearestPair[a]) nearestPair[a] = d;
    if (d < nearestPair[b]) nearestPair[b] = d;
    for (const [x, y] of [
      [a, b],
      [b, a],
    ]) {
      // x a duplicate, y kept: the nearest kept structure of x (ties to the lower-energy kept structure).
      if (keptPos[x] >= 0 || keptPos[y] < 0) continue;
      if (d < nearestKeptD[x] || (d === nearestKeptD[x] && keptPos[y] < keptPos[nearestKeptOfDup[x]])) {
        nearestKeptD[x] = d;
        nearestKeptOfDup[x] = y;
      }
    }
  }
  for (let p = 0; p < items.length; p++) {
    if (keptPos[p] >= 0) continue;
    const row = items[p].row;
    const y = nearestKeptOfDup[p];
    if (y < 0) throw new Error(`internal: duplicate ${row.id} has no kept structure among the pairs within the tolerance`);
    row.nearestIndex = items[y].row.index;
    row.nearest = items[y].row.id;
    row.nearestDistance = nearestKeptD[p];
  }
  // Structures with no partner within the tolerance: their nearest other structure by search.
  const alone: number[] = [];
  for (let p = 0; p < items.length; p++) if (nearestPair[p] === Infinity) alone.push(p);
  if (alone.length > 0 && items.length >= 2) {
    const across = await nearestAcross(
      alone.map((p) => graphItems[p]),
      graphItems,
      2,
      { threads: s.threads },
    );
    alone.forEach((p, q) => {
      for (let c = 0; c < across.k; c++)
        if (across.indices[q * across.k + c] !== p) {
          nearestPair[p] = across.distances[q * across.k + c];
          break;
        }
    });
  }
  for (let p = 0; p < items.length; p++) items[p].row.nnDistance = nearestPair[p] === Infinity ? null : nearestPair[p];

  // Kept structures: their nearest kept neighbours (edges of the report, core distances of HDBSCAN).
  const nKept = keptLocal.length;
  const keptItems = keptLocal.map((p) => graphItems[p]);
  const kNbr = Math.min(Math.max(params.neighbours, params.minSamples), nKept - 1);
  if (kNbr >= 1) {
    const keptKey = listKey(keptLocal.map((p) => items[p].key));
    const kg = s.comparisons.keptGraph;
    let keptNbr;
    if (kg && kg.keptKey === keptKey && kg.k >= kNbr) {
      // Rows of a deeper cached graph: its first kNbr columns are the kNbr nearest (ties by index, as computed).
      const indices = new Int32Array(nKept * kNbr);
      const distances = new Float64Array(nKept * kNbr);
      for (let r = 0; r < nKept; r++)
        for (let c = 0; c < kNbr; c++) {
          indices[r * kNbr + c] = kg.indices[r * kg.k + c];
          distances[r * kNbr + c] = kg.distances[r * kg.k + c];
        }
      keptNbr = { k: kNbr, indices, distances };
      s.reused.push('kept neighbours');
    } else {
      keptNbr = await nearestNeighbours(keptItems, kNbr, { threads: s.threads });
      s.comparisons.keptGraph = { keptKey, k: keptNbr.k, indices: Array.from(keptNbr.indices), distances: Array.from(keptNbr.distances) };
      s.comparisonsChanged = true;
    }
    s.keptNeighbours = keptNbr;
    const kk = keptNbr.k;
    const seen = new Set<string>();
    for (let r = 0; r < nKept; r++) {
      const row = items[keptLocal[r]].row;
      const first = keptLocal[keptNbr.indices[r * kk]];
      row.nearestIndex = items[first].row.index;
      row.nearest = items[first].row.id;
      row.nearestDistance = keptNbr.distances[r * kk];
      for (let q = 0; q < Math.min(params.neighbours, kk); q++) {
        const a = row.index;
        const b = items[keptLocal[keptNbr.indices[r * kk + q]]].row.index;
        const key = a < b ? `${a},${b}` : `${b},${a}`;
        if (seen.has(key)) continue;
        seen.add(key);
        const d = keptNbr.distances[r * kk + q];
        s.edges.push(a < b ? [a, b, d] : [b, a, d]);
      }
    }
    s.edges.sort((x, y) => x[0] - y[0] || x[1] - y[1]);
  }
  s.progress.done();
}
