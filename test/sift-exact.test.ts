// Every fast path of sift's comparison stages (energy-ordered duplicate search, tiered kept-neighbour search, nearest
// neighbours from the duplicate groups, lazy HDBSCAN with merged-row brackets) must give what the rules give on the
// full all-pairs EMD matrix: the same kept structures, duplicates, distances to them, nearest neighbours, kept
// neighbour lists and HDBSCAN labels. Checked on generated landscapes written the way searches write what they find
// (noisy P1 cells, relaxed supercells, other cells and settings; close partners turned by a few degrees), with 1 and
// 2 threads, on the dense and the lazy families path. The brute force computes every PDD independently and every
// EMD with `emd`; the rules are collapse.ts (visit order, nearest kept within the tolerance), the nearest neighbour
// with ties by index (common practice), and scikit-learn's HDBSCAN as src/cluster/hdbscan.ts follows it (its dense
// path is checked against scikit-learn itself in test/cluster-hdbscan.test.ts).
import { describe, expect, it } from 'vitest';
import { mkdtempSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { generateLandscape, type CopyKind } from '../src/demo/landscape.js';
import { readCifText } from '../src/io/read.js';
import { toPeriodicSet } from '../src/geometry/periodic-set.js';
import { pdd } from '../src/invariants/pdd.js';
import { emd } from '../src/metric/emd.js';
import { collapseDuplicates, visitOrder } from '../src/landscape/collapse.js';
import { hdbscanDense } from '../src/cluster/hdbscan.js';
import { initialState, SIFT_STAGES, type SiftOptions } from '../src/landscape/sift.js';
import { buildLandscape } from '../src/landscape/stages/landscape.js';
import type { SiftState } from '../src/landscape/stages/state.js';
import { round6 } from '../src/landscape/stages/round.js';
import type { Pdd } from '../src/types.js';

const KINDS: CopyKind[] = ['p1', 'relaxed-supercell', 'other-cell', 'p1', 'symbol-only', 'relaxed-supercell', 'other-setting'];

interface Brute {
  ids: string[];
  d: Float64Array;
  n: number;
}

function bruteForce(cif: string): Brute {
  const pdds: Pdd[] = [];
  const ids: string[] = [];
  for (const b of readCifText(cif, 'landscape.cif')) {
    if (b.kind !== 'record') throw new Error(`generated block rejected: ${b.rejected.reason}`);
    pdds.push(pdd(toPeriodicSet(b.record, { hydrogens: 'keep' }).set, 100));
    ids.push(b.record.id);
  }
  const n = pdds.length;
  const d = new Float64Array(n * n);
  for (let i = 0; i < n; i++)
    for (let j = i + 1; j < n; j++) {
      const v = emd(pdds[i], pdds[j]);
      d[i * n + j] = v;
      d[j * n + i] = v;
    }
  return { ids, d, n };
}

/** sift's stages one by one (as `sift` runs them), keeping the state: its rows hold the distances before rounding. */
async function sift(opts: SiftOptions): Promise<{ landscape: ReturnType<typeof buildLandscape>; counters: Record<string, number>; state: SiftState }> {
  const s = initialState(opts);
  try {
    for (const [, stage] of SIFT_STAGES) await stage(s);
  } finally {
    await s.pool.close();
  }
  return { landscape: buildLandscape(s, {}), counters: s.counters, state: s };
}

/** Equal within 1e-9 Å (both null, or both numbers that close). */
function near(got: number | null | undefined, want: number): void {
  expect(typeof got).toBe('number');
  expect(Math.abs((got as number) - want)).toBeLessThanOrEqual(1e-9);
}

function checkAgainstBrute(run: Awaited<ReturnType<typeof sift>>, brute: Brute, energies: number[], tol: number, minSamples: number, neighbours: number): void {
  const { d, n } = brute;
  const l = run.landscape;
  expect(l.structures.map((r) => r.id)).toEqual(brute.ids);
  // Duplicates: the collapse rule on every pair within the tolerance.
  const order = visitOrder(
    Array.from({ length: n }, (_, i) => i),
    energies,
  );
  const ei: number[] = [];
  const ej: number[] = [];
  const ed: number[] = [];
  for (let i = 0; i < n; i++) for (let j = i + 1; j < n; j++) if (d[i * n + j] <= tol) (ei.push(i), ej.push(j), ed.push(d[i * n + j]));
  const c = collapseDuplicates(n, order, { i: Int32Array.from(ei), j: Int32Array.from(ej), d: Float64Array.from(ed) }, tol);
  expect(l.kept).toEqual(c.kept);
  const keptRank = new Map(c.kept.map((p, r) => [p, r]));
  for (let i = 0; i < n; i++) {
    const row = l.structures[i];
    const raw = run.state.work[i].row;
    expect(row.keptIndex).toBe(c.keptOf[i]);
    expect(row.distanceToKept).toBe(round6(c.distanceToKept[i]));
    near(raw.distanceToKept, c.distanceToKept[i]);
    // Nearest other structure, any status.
    let nn = Infinity;
    for (let j = 0; j < n; j++) if (j !== i && d[i * n + j] < nn) nn = d[i * n + j];
    expect(row.nnDistance).toBe(round6(nn));
    near(raw.nnDistance, nn);
    // Nearest kept structure (other than itself), ties to the kept structure visited first.
    let best = -1;
    for (const t of c.kept) {
      if (t === i) continue;
      const v = d[i * n + t];
      if (best < 0 || v < d[i * n + best] || (v === d[i * n + best] && keptRank.get(t)! < keptRank.get(best)!)) best = t;
    }
    // For a kept structure the first of its neighbour list, for a duplicate its nearest kept structure.
    expect(row.nearestIndex).toBe(best);
    expect(row.nearestDistance).toBe(round6(d[i * n + best]));
    near(raw.nearestDistance, d[i * n + best]);
  }
  // Kept neighbour lists: k nearest kept, ties by kept position; the report's edges are their first `neighbours`.
  const kept = c.kept;
  const kk = Math.min(Math.max(neighbours, minSamples), kept.length - 1);
  const edges = new Map<string, number>();
  for (let r = 0; r < kept.length; r++) {
    const others = kept.map((t, s) => [d[kept[r] * n + t], s] as [number, number]).filter(([, s]) => s !== r);
    others.sort((x, y) => x[0] - y[0] || x[1] - y[1]);
    for (let q = 0; q < Math.min(neighbours, kk); q++) {
      const a = kept[r];
      const b = kept[others[q][1]];
      edges.set(a < b ? `${a},${b}` : `${b},${a}`, round6(others[q][0]));
    }
  }
  const expected = [...edges.entries()].map(([key, v]) => [...key.split(',').map(Number), v]).sort((x, y) => x[0] - y[0] || x[1] - y[1]);
  expect(l.edges).toEqual(expected);
  // The kept neighbour lists themselves (HDBSCAN's core distances come from them), before rounding.
  const nbr = run.state.keptNeighbours!;
  for (let r = 0; r < kept.length; r++) {
    const others = kept.map((t, s) => d[kept[r] * n + t]).filter((_, s) => s !== r).sort((x, y) => x - y);
    for (let q = 0; q < nbr.k; q++) near(nbr.distances[r * nbr.k + q], others[q]);
  }
  // Families: HDBSCAN on the kept structures' full matrix.
  const m = kept.length;
  const km = new Float64Array(m * m);
  for (let a = 0; a < m; a++) for (let b = 0; b < m; b++) km[a * m + b] = d[kept[a] * n + kept[b]];
  const labels = hdbscanDense(km, m, { minClusterSize: l.parameters.minFamilySize, minSamples }).labels;
  expect(kept.map((p) => l.structures[p].family)).toEqual(Array.from(labels));
}

describe('sift comparisons equal the all-pairs brute force', () => {
  const gen = generateLandscape({ seed: 31, packings: 14, copiesPerPacking: 7, closePairs: 4, copyKinds: KINDS, squeezeMoves: 150 });
  const dir = mkdtempSync(join(tmpdir(), 'polysift-exact-'));
  writeFileSync(join(dir, 'landscape.cif'), gen.cif);
  writeFileSync(join(dir, 'energies.csv'), gen.energiesCsv);
  const brute = bruteForce(gen.cif);
  const energies = gen.energiesKjPerMol.map((e) => Number(e.toFixed(4)));

  for (const threads of [1, 2])
    for (const denseLimit of [undefined, 3]) {
      it(`on ${gen.ids.length} structures with P1 and supercell copies, ${threads} thread(s), ${denseLimit ? 'lazy' : 'dense'} families`, async () => {
        const run = await sift({
          inputs: [join(dir, 'landscape.cif')],
          energiesFile: join(dir, 'energies.csv'),
          threads,
          denseLimit,
          minFamilySize: 2,
          cacheDir: null,
        });
        expect(run.landscape.counts.kept).toBe(14);
        checkAgainstBrute(run, brute, energies, run.landscape.parameters.toleranceAngstrom, 2, run.landscape.parameters.neighbours);
      }, 120_000);
    }

  it('with minima found once and short neighbour lists, where the nearest neighbours need the wider search', async () => {
    // Half the packings found once (no duplicates to bound their nearest neighbour), half found several times.
    const once = generateLandscape({ seed: 32, packings: 12, copiesPerPacking: 1, closePairs: 3, squeezeMoves: 150, idPrefix: 'once' });
    const text = `${gen.cif}\n${once.cif}`;
    writeFileSync(join(dir, 'mixed.cif'), text);
    writeFileSync(join(dir, 'mixed.csv'), `${gen.energiesCsv}${once.energiesCsv.split('\n').slice(1).join('\n')}`);
    const run = await sift({ inputs: [join(dir, 'mixed.cif')], energiesFile: join(dir, 'mixed.csv'), threads: 2, neighbours: 1, minFamilySize: 2, minSamples: 1, cacheDir: null });
    expect(run.counters['nearest, wider search: structures'] ?? 0).toBeGreaterThan(0);
    const mixedEnergies = [...energies, ...once.energiesKjPerMol.map((e) => Number(e.toFixed(4)))];
    checkAgainstBrute(run, bruteForce(text), mixedEnergies, run.landscape.parameters.toleranceAngstrom, 1, 1);
  }, 120_000);

  it('also at a tolerance wide enough to merge close partners (groups with several kept candidates)', async () => {
    const run = await sift({ inputs: [join(dir, 'landscape.cif')], energiesFile: join(dir, 'energies.csv'), threads: 2, toleranceAngstrom: 0.2, minFamilySize: 2, cacheDir: null });
    expect(run.landscape.counts.kept).toBeLessThan(14);
    checkAgainstBrute(run, brute, energies, 0.2, 2, run.landscape.parameters.neighbours);
  }, 120_000);
});
