// Worker jobs of sift for many kept structures: lazy HDBSCAN (exact neighbour graph + AMD bound) and the
// landmark metric map. Both call the EMD one pair at a time on their own thread, so sift runs the two side by
// side in worker threads instead of one after the other.
import type { Pdd } from '../types.js';
import type { Embedding2d } from '../cluster/embedding.js';
import { hdbscanLazy } from '../cluster/hdbscan.js';
import { embed2dLandmarks } from '../cluster/embedding-landmarks.js';
import { emd, amdDistance } from '../metric/emd.js';

export type KeptTask =
  | { kind: 'families'; pdds: Pdd[]; amds: Float64Array[]; core: Float64Array; minFamilySize: number; minSamples: number }
  | { kind: 'map'; pdds: Pdd[]; landmarks: number };

export type KeptResult = { kind: 'families'; labels: Int32Array } | { kind: 'map'; embedding: Embedding2d };

export function keptTask(task: KeptTask): KeptResult {
  const n = task.pdds.length;
  // EMDs asked for twice (both algorithms revisit pairs) are computed once.
  const memo = new Map<number, number>();
  const distance = (a: number, b: number): number => {
    const key = a < b ? a * n + b : b * n + a;
    let d = memo.get(key);
    if (d === undefined) {
      d = emd(task.pdds[a], task.pdds[b]);
      memo.set(key, d);
    }
    return d;
  };
  if (task.kind === 'families') {
    const res = hdbscanLazy(n, distance, (a, b) => amdDistance(task.amds[a], task.amds[b]), task.core, {
      minClusterSize: task.minFamilySize,
      minSamples: task.minSamples,
    });
    return { kind: 'families', labels: res.labels };
  }
  const e = embed2dLandmarks(n, distance, { landmarks: task.landmarks });
  return { kind: 'map', embedding: { method: e.method, coords: e.coords, quality: e.quality } };
}
