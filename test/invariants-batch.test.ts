// computeInvariants (worker threads, chunked messages) must give exactly what pdd() and amd() give
// on the calling thread, in input order, and report a bad structure by its position.
import { describe, expect, it } from 'vitest';
import { computeInvariants, computeInvariantsSettled, InvariantsError, invariantsOfChunk, packSets, unpackInvariants } from '../src/invariants/batch.js';
import { pdd } from '../src/invariants/pdd.js';
import { amd } from '../src/invariants/amd.js';
import { expandOperations, makeSet, monoclinicBasis, P21C_OPS, randomSet, seededRandom } from './helpers/periodic-sets.js';
import type { PeriodicPointSet } from '../src/types.js';

function sampleSets(n: number): PeriodicPointSet[] {
  const rand = seededRandom(99);
  const out: PeriodicPointSet[] = [];
  for (let i = 0; i < n; i++) {
    if (i % 3 === 2) out.push(expandOperations(monoclinicBasis(6 + rand(), 5 + rand(), 8 + rand(), 100 + 10 * rand()), [rand(), rand(), rand(), rand(), rand(), rand()], P21C_OPS));
    else out.push(randomSet(rand, 1 + (i % 3), 1 + (i % 5)));
  }
  return out;
}

describe('invariants of many structures', () => {
  it('equal the single-thread pdd() and amd() exactly, in input order, on 2 worker threads with small chunks', async () => {
    const sets = sampleSets(40);
    let last = 0;
    const got = await computeInvariants(sets, 30, { threads: 2, chunkSize: 7, onProgress: (done, total) => (last = done / total) });
    expect(got.length).toBe(sets.length);
    expect(last).toBe(1);
    sets.forEach((s, i) => {
      const p = pdd(s, 30);
      expect(Array.from(got[i].pdd.rows)).toEqual(Array.from(p.rows));
      expect(Array.from(got[i].pdd.weights)).toEqual(Array.from(p.weights));
      expect(Array.from(got[i].amd)).toEqual(Array.from(amd(p)));
      expect(got[i].pdd.k).toBe(30);
    });
  });

  it('packs and unpacks a chunk without changing anything (the calling-thread path)', () => {
    const sets = sampleSets(9);
    const back = unpackInvariants(invariantsOfChunk(packSets(sets, 12)));
    back.forEach((r, i) => {
      if ('error' in r) throw new Error(r.error);
      expect(Array.from(r.pdd.rows)).toEqual(Array.from(pdd(sets[i], 12).rows));
    });
  });

  it('names the structure that failed, and the settled form keeps the others', async () => {
    const sets = sampleSets(6);
    sets[4] = makeSet(2, [1, 0, 0, 1], [0, Number.NaN]);
    await expect(computeInvariants(sets, 5, { threads: 1 })).rejects.toThrow(InvariantsError);
    await expect(computeInvariants(sets, 5, { threads: 1 })).rejects.toThrow(/#4: motif point 0 has a coordinate that is not a finite number/);
    const settled = await computeInvariantsSettled(sets, 5, { threads: 2, chunkSize: 2 });
    expect(settled.map((r) => 'error' in r)).toEqual([false, false, false, false, true, false]);
  });

  it('returns an empty list for no structures and refuses k = 0', async () => {
    expect(await computeInvariants([], 10)).toEqual([]);
    await expect(computeInvariants(sampleSets(1), 0)).rejects.toThrow(/positive integer/);
  });
});
