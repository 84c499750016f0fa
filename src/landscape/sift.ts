// The sift pipeline as a library function: read -> energies -> periodic sets -> energy window -> invariants
// (cached) -> duplicate collapse -> neighbours -> families -> embedding -> landscape (+ output files).
// Every input block ends up in exactly one row with one status; nothing is dropped silently.
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import type { BlockResult, CrystalFacts, CrystalRecord, Pdd, PeriodicPointSet } from '../types.js';
import type {
  Embedding,
  EnergyUnit,
  Family,
  HydrogenPolicy,
  KeptInvariants,
  Landscape,
  SiftParameters,
  StructureRow,
} from './schema.js';
import { readStructures } from '../io/read.js';
import { assignEnergies, energySummary, parseEnergyCsv, type EnergyAssignment, type EnergyTable } from '../io/energies.js';
import { mapInWorkers, chunkRanges, defaultThreads } from '../parallel/pool.js';
import { computeInvariants } from '../invariants/batch.js';
import { pdd as computePdd } from '../invariants/pdd.js';
import { amd as computeAmd } from '../invariants/amd.js';
import { distanceMatrix, nearestAcross, nearestNeighbours, pairsWithin } from '../metric/graph.js';
import { hdbscanDense, coreDistancesFromNeighbours } from '../cluster/hdbscan.js';
import { embed2d } from '../cluster/embedding.js';
import { convergenceCurve, defaultWindows } from './convergence.js';
import { collapseDuplicates, visitOrder } from './collapse.js';
import { blockKey, cacheFileName, loadCache, saveCache, type CacheEntry } from './cache.js';
import { emptyComparisons, listKey, loadComparisons, saveComparisons, type Comparisons } from './compare-cache.js';
import type { Prepared, PrepareInput } from './prepare.js';
import type { KeptResult, KeptTask } from './kept-work.js';
import { prepareChunk } from './prepare.js';
import { VERSION } from '../version.js';
import { makeProgress, type Progress } from '../progress.js';

/**
 * Default duplicate tolerance, EMD in Å, chosen from measurements on the generator's landscapes
 * (`npm run bench`, module sift-tolerance; k = 100, hydrogens kept). Copies of one minimum with optimiser-like
 * noise of sigma Å per coordinate (plus 2e-4 relative on cell lengths) lie at most 0.008 / 0.014 / 0.020 /
 * 0.031 Å apart for sigma = 0.001 / 0.002 / 0.003 / 0.005 Å; distinct packings whose molecule is turned by only
 * 1 / 2 / 4 degrees (same density within 0.005 g/cm3, energy within 0.1 kJ/mol) lie at least 0.054 / 0.084 /
 * 0.137 Å apart, and unrelated packings at least 0.35 Å. 0.04 Å sits in that gap (about its geometric middle
 * between the noisiest copies and the 1-degree partners). The report's nearest-neighbour histogram shows the
 * same gap for the run at hand, so a user can check it.
 */
export const DEFAULT_TOLERANCE_ANGSTROM = 0.04;
export const DEFAULT_K = 100;
export const DEFAULT_MIN_FAMILY_SIZE = 5;
/** Nearest kept neighbours stored per kept structure (edges of the report's neighbourhood lines). */
export const DEFAULT_NEIGHBOURS = 5;
/**
 * Largest number of kept structures for which the full EMD matrix is computed (dense HDBSCAN, full metric map):
 * 300 kept structures are 44,850 EMDs, a few seconds on 2 threads at the measured 0.1-0.5 ms per EMD of
 * 11-44-row PDDs at k = 100 (the matrix itself, 0.7 MB, is never the limit; the EMD count grows as n^2).
 * Above it HDBSCAN runs lazily from the exact neighbour graph and the AMD lower bound (same labels), and the
 * metric map is landmark MDS (src/cluster/embedding-landmarks.ts, method named in the landscape).
 */
export const DENSE_LIMIT = 300;
/** Above DENSE_LIMIT the metric map is landmark MDS with this many landmarks (LANDMARKS x kept EMDs), up to EMBED_LIMIT kept structures. */
export const LANDMARKS = 60;
export const EMBED_LIMIT = 20000;
/**
 * Pairs are searched within this multiple of the tolerance and cached, so a re-run with a tolerance up to that
 * large reuses them (distinct structures mostly lie far beyond, so the wider search costs few extra EMDs).
 */
export const PAIR_RADIUS_FACTOR = 2;
/** Records sent to a worker at a time when building periodic sets. */
const PREPARE_CHUNK = 250;

export interface SiftOptions {
  inputs: string[];
  energiesFile?: string | null;
  idColumn?: string;
  energyColumn?: string;
  energyUnit?: EnergyUnit;
  energyItem?: string | null;
  k?: number;
  hydrogens?: HydrogenPolicy;
  toleranceAngstrom?: number;
  minFamilySize?: number;
  minSamples?: number;
  /** Energy window above the lowest energy, in `energyUnit`; null for none. */
  energyWindow?: number | null;
  neighbours?: number;
  threads?: number;
  /** Folder of the invariants cache; null to disable. Default: none (the CLI passes `<out>/.polysift-cache`). */
  cacheDir?: string | null;
  progress?: Progress;
  /** Kept-structure count up to which the full EMD matrix is used (default DENSE_LIMIT; for tests and benchmarks). */
  denseLimit?: number;
}

export interface SiftRun {
  landscape: Landscape;
  /** Kept structures' CIF text, in `landscape.kept` order. */
  keptTexts: string[];
  energyTable: EnergyTable | null;
  energyAssignment: EnergyAssignment | null;
  /** Lines for stderr (energy problems, skipped steps). */
  messages: string[];
  /** Invariants cache hits and misses; `reused` names the comparison results taken from the comparisons cache. */
  cache: { hits: number; misses: number; file: string | null; problem: string | null; reused: string[] };
}

interface Work {
  row: StructureRow;
  record: CrystalRecord | null;
  text: string;
  key: string;
  pdd: Pdd | null;
  amd: Float64Array | null;
  facts: CrystalFacts | null;
  /** Notes of the periodic-set construction (what the invariants cache stores beside the PDD). */
  setNotes: string[];
}

/** Run the whole sift. Throws only when the inputs cannot be read at all (missing path, bad energies file). */
export async function sift(opts: SiftOptions): Promise<SiftRun> {
  const t0 = performance.now();
  const timings: Record<string, number> = {};
  const lap = (name: string, since: number) => {
    timings[name] = round(performance.now() - since) / 1000;
    return performance.now();
  };
  const progress = opts.progress ?? makeProgress({ quiet: true });
  const threads = opts.threads ?? defaultThreads();
  const params: SiftParameters = {
    k: opts.k ?? DEFAULT_K,
    hydrogens: opts.hydrogens ?? 'keep',
    toleranceAngstrom: opts.toleranceAngstrom ?? DEFAULT_TOLERANCE_ANGSTROM,
    minFamilySize: opts.minFamilySize ?? DEFAULT_MIN_FAMILY_SIZE,
    minSamples: opts.minSamples ?? opts.minFamilySize ?? DEFAULT_MIN_FAMILY_SIZE,
    energyWindow: opts.energyWindow ?? null,
    energyUnit: opts.energyUnit ?? 'kJ/mol',
    neighbours: opts.neighbours ?? DEFAULT_NEIGHBOURS,
    inputs: opts.inputs.slice(),
    energiesFile: opts.energiesFile ?? null,
    energyItem: opts.energyItem ?? null,
  };
  checkParameters(params);
  const messages: string[] = [];

  // ---- read every block ----
  let t = performance.now();
  progress.stage('reading structures');
  const work: Work[] = [];
  for await (const r of readStructures(params.inputs, { energyItem: params.energyItem })) {
    work.push(workFromBlock(r, work.length));
    if (work.length % 500 === 0) progress.tick(work.length);
  }
  progress.done();
  t = lap('read', t);

  // ---- energies ----
  let energyTable: EnergyTable | null = null;
  let energyAssignment: EnergyAssignment | null = null;
  if (params.energiesFile !== null) {
    let text: string;
    try {
      text = readFileSync(params.energiesFile, 'utf8');
    } catch (err) {
      throw new Error(`cannot read the energies file ${params.energiesFile}: ${(err as NodeJS.ErrnoException).code ?? (err as Error).message}`);
    }
    energyTable = parseEnergyCsv(text, params.energiesFile, { idColumn: opts.idColumn, energyColumn: opts.energyColumn });
    const recordsAt = work.filter((w) => w.record !== null);
    energyAssignment = assignEnergies(recordsAt.map((w) => w.row.id), energyTable);
    recordsAt.forEach((w, i) => {
      w.row.energy = energyAssignment!.energy[i];
      const problem = energyAssignment!.problem[i];
      if (problem !== '') {
        w.row.notes.push(problem);
        w.row.reason = problem;
      }
    });
    messages.push(...energySummary(energyTable, energyAssignment));
  } else if (params.energyItem !== null) {
    let missing = 0;
    for (const w of work) {
      if (!w.record) continue;
      w.row.energy = w.record.energy;
      if (w.record.energy === null) {
        missing++;
        const problem = `no energy: the block has no numeric ${params.energyItem}`;
        w.row.notes.push(problem);
        w.row.reason = problem;
      }
    }
    if (missing > 0) messages.push(`${missing} structure(s) have no numeric ${params.energyItem} (reason per row in structures.csv)`);
  }
  t = lap('energies', t);

  // ---- periodic sets and facts (cache hits need neither) ----
  const cacheParams = { k: params.k, hydrogens: params.hydrogens, version: VERSION };
  const loaded = opts.cacheDir ? loadCache(opts.cacheDir, cacheParams) : { entries: new Map<string, CacheEntry>(), problem: null };
  if (loaded.problem) messages.push(loaded.problem);
  const cache = loaded.entries;
  const missing: Work[] = [];
  for (const w of work) {
    if (!w.record) continue;
    const hit = cache.get(w.key);
    if (hit) applyFacts(w, hit.facts, hit.atoms, hit.notes);
    else missing.push(w);
  }
  const prepared = new Map<Work, PeriodicPointSet>();
  if (missing.length > 0) {
    progress.stage('building periodic sets', missing.length);
    const ranges = chunkRanges(missing.length, Math.ceil(missing.length / PREPARE_CHUNK));
    const inputs: PrepareInput[] = ranges.map(([a, b]) => ({ records: missing.slice(a, b).map((w) => w.record!), hydrogens: params.hydrogens }));
    const out = await mapInWorkers<PrepareInput, Prepared[]>(new URL(`./prepare${extOf()}`, import.meta.url).href, 'prepareChunk', inputs, {
      threads,
      onProgress: (d) => progress.tick(Math.min(missing.length, d * PREPARE_CHUNK)),
    });
    let i = 0;
    for (const chunk of out)
      for (const p of chunk) {
        const w = missing[i++];
        if (p.ok) {
          applyFacts(w, p.facts, p.set.motif.length / p.set.dim, p.notes);
          prepared.set(w, p.set);
        } else reject(w, p.reason);
      }
    progress.done();
  }
  t = lap('periodic sets', t);

  // ---- energy window over usable structures ----
  const usable = work.filter((w) => w.row.status !== 'rejected');
  let lowest: number | null = null;
  for (const w of usable) if (w.row.energy !== null && (lowest === null || w.row.energy < lowest)) lowest = w.row.energy;
  for (const w of usable) {
    if (w.row.energy === null || lowest === null) continue;
    w.row.energyRel = w.row.energy - lowest;
    if (params.energyWindow !== null && w.row.energyRel > params.energyWindow) w.row.status = 'outside-window';
  }
  if (params.energyWindow !== null)
    for (const w of usable)
      if (w.row.energy === null) w.row.notes.push('no energy, so the energy window could not be applied; compared with the rest');
  const active = usable.filter((w) => w.row.status !== 'outside-window');

  // ---- invariants: cache first, then computed across threads ----
  const toCompute: Work[] = [];
  let hits = 0;
  for (const w of active) {
    const hit = cache.get(w.key);
    if (hit) {
      w.pdd = hit.pdd;
      hits++;
    } else toCompute.push(w);
  }
  if (toCompute.length > 0) {
    progress.stage('computing invariants', toCompute.length);
    const sets = toCompute.map((w) => prepared.get(w)!);
    let results: Array<{ pdd: Pdd; amd: Float64Array } | Error>;
    try {
      results = await computeInvariants(sets, params.k, { threads, onProgress: (d: number) => progress.tick(d) });
    } catch {
      // One set broke the batch: compute one at a time so only the broken ones are rejected.
      results = sets.map((s) => {
        try {
          const p = computePdd(s, params.k);
          return { pdd: p, amd: computeAmd(p) };
        } catch (err) {
          return err as Error;
        }
      });
    }
    results.forEach((r, i) => {
      const w = toCompute[i];
      if (r instanceof Error) reject(w, `invariants could not be computed: ${r.message}`);
      else {
        w.pdd = r.pdd;
        w.amd = r.amd;
        cache.set(w.key, { pdd: r.pdd, atoms: w.row.atoms ?? 0, facts: w.facts, notes: w.setNotes });
      }
    });
    progress.done();
  }
  const items = active.filter((w) => w.row.status !== 'rejected');
  for (const w of items) if (!w.amd) w.amd = computeAmd(w.pdd!);
  let cacheFile: string | null = null;
  if (opts.cacheDir && toCompute.length > 0) {
    // Keep what this run used (and earlier entries of other blocks, up to the size of this run again).
    const keep = new Map<string, CacheEntry>();
    for (const w of items) keep.set(w.key, cache.get(w.key)!);
    for (const [key, e] of cache) if (keep.size < 2 * items.length && !keep.has(key)) keep.set(key, e);
    cacheFile = saveCache(opts.cacheDir, cacheParams, keep);
  } else if (opts.cacheDir) cacheFile = join(opts.cacheDir, cacheFileName(cacheParams));
  t = lap('invariants', t);

  // ---- duplicate collapse ----
  progress.stage('finding duplicates', items.length);
  const graphItems = items.map((w) => ({ pdd: w.pdd!, amd: w.amd! }));
  const itemsKey = listKey(items.map((w) => w.key));
  const loadedCmp = opts.cacheDir ? loadComparisons(opts.cacheDir, cacheParams) : { comparisons: emptyComparisons(), problem: null };
  if (loadedCmp.problem) messages.push(loadedCmp.problem);
  const cmp: Comparisons = loadedCmp.comparisons;
  let cmpChanged = false;
  const reused: string[] = [];
  let close: { i: Int32Array; j: Int32Array; distances: Float64Array; radius: number };
  const cp = cmp.pairs;
  if (cp && cp.itemsKey === itemsKey && cp.radiusAngstrom >= params.toleranceAngstrom) {
    close = { i: Int32Array.from(cp.i), j: Int32Array.from(cp.j), distances: Float64Array.from(cp.d), radius: cp.radiusAngstrom };
    reused.push('pairs');
  } else {
    const radius = params.toleranceAngstrom * PAIR_RADIUS_FACTOR;
    const found = await pairsWithin(graphItems, radius, { threads, onProgress: (d: number) => progress.tick(d) });
    close = { i: found.i, j: found.j, distances: found.distances, radius };
    cmp.pairs = { itemsKey, radiusAngstrom: radius, i: Array.from(found.i), j: Array.from(found.j), d: Array.from(found.distances) };
    cmpChanged = true;
  }
  const order = visitOrder(
    items.map((_, i) => i),
    items.map((w) => w.row.energy),
  );
  const collapsed = collapseDuplicates(items.length, order, { i: close.i, j: close.j, d: close.distances }, params.toleranceAngstrom);
  progress.done();
  t = lap('duplicates', t);

  const keptLocal = collapsed.kept; // positions in `items`, lowest energy first
  const keptPos = new Int32Array(items.length).fill(-1);
  keptLocal.forEach((p, r) => (keptPos[p] = r));
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
  for (const p of keptLocal) items[p].row.members = 0;
  for (let p = 0; p < items.length; p++) items[collapsed.keptOf[p]].row.members++;

  // ---- neighbours ----
  // Every pair within the tolerance is known from the collapse, which settles two things without more EMDs:
  // a duplicate's nearest kept structure lies within the tolerance (its own kept structure does), and any
  // structure with a partner within the tolerance has its nearest neighbour among those partners.
  progress.stage('nearest neighbours', items.length);
  const keptItems = keptLocal.map((p) => graphItems[p]);
  const nKept = keptItems.length;
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
      { threads },
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
  const kNbr = Math.min(Math.max(params.neighbours, params.minSamples), nKept - 1);
  const keptKey = listKey(keptLocal.map((p) => items[p].key));
  const edges: Array<[number, number, number]> = [];
  let keptNbr: { k: number; indices: Int32Array; distances: Float64Array } | null = null;
  if (kNbr >= 1) {
    const kg = cmp.keptGraph;
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
      reused.push('kept neighbours');
    } else {
      keptNbr = await nearestNeighbours(keptItems, kNbr, { threads });
      cmp.keptGraph = { keptKey, k: keptNbr.k, indices: Array.from(keptNbr.indices), distances: Array.from(keptNbr.distances) };
      cmpChanged = true;
    }
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
        edges.push(a < b ? [a, b, d] : [b, a, d]);
      }
    }
    edges.sort((x, y) => x[0] - y[0] || x[1] - y[1]);
  }
  progress.done();
  t = lap('neighbours', t);

  // ---- families (HDBSCAN over kept structures) and the metric map ----
  const familyLabels = new Int32Array(nKept).fill(-1);
  let embedding: Embedding | null = null;
  if (nKept >= 2) {
    progress.stage('families and metric map', nKept);
    const hdbOptions = { minClusterSize: params.minFamilySize, minSamples: params.minSamples };
    const clusterable = params.minSamples <= nKept && params.minFamilySize <= nKept;
    const dense = nKept <= (opts.denseLimit ?? DENSE_LIMIT);
    const cachedLabels = cmp.labels.find(
      (l) => l.keptKey === keptKey && l.minFamilySize === params.minFamilySize && l.minSamples === params.minSamples && l.dense === dense,
    );
    const cachedEmbedding = cmp.embedding && cmp.embedding.keptKey === keptKey ? cmp.embedding.embedding : null;
    let dist: Float64Array | null = null;
    if (dense && ((clusterable && !cachedLabels) || !cachedEmbedding)) {
      if (cmp.matrix && cmp.matrix.keptKey === keptKey) {
        dist = Float64Array.from(cmp.matrix.values);
        reused.push('distance matrix');
      }
      else {
        dist = await distanceMatrix(keptItems, { threads });
        cmp.matrix = { keptKey, values: Array.from(dist) };
        cmpChanged = true;
      }
    }
    // Above the dense limit, lazy HDBSCAN and the landmark map run side by side in worker threads.
    const tasks: KeptTask[] = [];
    if (clusterable && !cachedLabels && !dense) {
      const core = coreDistancesFromNeighbours(keptNbr!.distances, nKept, keptNbr!.k, params.minSamples);
      tasks.push({ kind: 'families', pdds: keptItems.map((x) => x.pdd), amds: keptItems.map((x) => x.amd), core, minFamilySize: params.minFamilySize, minSamples: params.minSamples });
    }
    if (!cachedEmbedding && !dense) {
      if (nKept <= EMBED_LIMIT) tasks.push({ kind: 'map', pdds: keptItems.map((x) => x.pdd), landmarks: LANDMARKS });
      else messages.push(`no metric map: ${nKept} kept structures is more than ${EMBED_LIMIT}`);
    }
    const done = await mapInWorkers<KeptTask, KeptResult>(new URL(`./kept-work${extOf()}`, import.meta.url).href, 'keptTask', tasks, { threads });
    if (clusterable) {
      if (cachedLabels) {
        familyLabels.set(cachedLabels.labels);
        reused.push('families');
      } else {
        if (dense) familyLabels.set(hdbscanDense(dist!, nKept, hdbOptions).labels);
        else for (const r of done) if (r.kind === 'families') familyLabels.set(r.labels);
        cmp.labels.push({ keptKey, minFamilySize: params.minFamilySize, minSamples: params.minSamples, dense, labels: Array.from(familyLabels) });
        cmpChanged = true;
      }
    }
    t = lap('families', t);
    if (cachedEmbedding) {
      embedding = cachedEmbedding;
      reused.push('metric map');
    } else {
      if (dense) embedding = embeddingOf(embed2d(dist!, nKept));
      else for (const r of done) if (r.kind === 'map') embedding = embeddingOf(r.embedding);
      if (embedding) {
        cmp.embedding = { keptKey, method: embedding.method, embedding };
        cmpChanged = true;
      }
    }
    if (!clusterable) messages.push(`families not computed: ${nKept} kept structure(s), fewer than the minimum family size or samples`);
    progress.done();
  }
  t = lap(nKept >= 2 ? 'metric map' : 'families', t);
  if (opts.cacheDir && cmpChanged) saveComparisons(opts.cacheDir, cacheParams, cmp);
  const families: Family[] = [];
  for (let r = 0; r < nKept; r++) {
    const f = familyLabels[r];
    items[keptLocal[r]].row.family = f;
    if (f < 0) continue;
    while (families.length <= f) families.push({ id: families.length, members: [] });
    families[f].members.push(items[keptLocal[r]].row.index);
  }
  for (const w of items) if (w.row.status === 'duplicate') w.row.family = work[w.row.keptIndex!].row.family;

  // ---- the landscape ----
  const rows = work.map((w) => roundRow(w.row));
  const kept = keptLocal.map((p) => items[p].row.index);
  const counts = { input: rows.length, kept: 0, duplicate: 0, rejected: 0, outsideWindow: 0 };
  for (const r of rows) {
    if (r.status === 'kept') counts.kept++;
    else if (r.status === 'duplicate') counts.duplicate++;
    else if (r.status === 'rejected') counts.rejected++;
    else counts.outsideWindow++;
  }
  const invariants: KeptInvariants[] = keptLocal.map((p) => ({
    index: items[p].row.index,
    amd: Array.from(items[p].amd!, (x) => round6(x)),
    pddWeights: Array.from(items[p].pdd!.weights, (x) => roundTo(x, 12)),
    pddRows: Array.from(items[p].pdd!.rows, (x) => round6(x)),
  }));
  const landscape: Landscape = {
    format: 'polysift-landscape',
    formatVersion: 1,
    tool: { name: 'polysift', version: VERSION },
    run: { createdAt: new Date().toISOString(), timingsSeconds: timings },
    parameters: params,
    counts,
    lowestEnergy: lowest === null ? null : round6(lowest),
    structures: rows,
    kept,
    edges: edges.map(([a, b, d]) => [a, b, round6(d)]),
    families,
    embedding,
    invariants: { k: params.k, hydrogens: params.hydrogens, kept: invariants },
    convergence: null,
  };
  landscape.convergence = convergenceCurve(rows, defaultWindows(params.energyUnit), { energyUnit: params.energyUnit });
  lap('landscape', t);
  timings.total = round(performance.now() - t0) / 1000;
  return {
    landscape,
    keptTexts: keptLocal.map((p) => items[p].text),
    energyTable,
    energyAssignment,
    messages,
    cache: { hits, misses: toCompute.length, file: cacheFile, problem: loaded.problem, reused },
  };
}

function workFromBlock(r: BlockResult, index: number): Work {
  const base = r.kind === 'record' ? r.record : r.rejected;
  const row: StructureRow = {
    index,
    id: base.id,
    source: base.source,
    file: base.file,
    block: base.block,
    line: base.line,
    status: 'rejected',
    reason: '',
    energy: null,
    energyRel: null,
    densityGPerCm3: null,
    atoms: null,
    spaceGroup: r.kind === 'record' ? r.record.spaceGroup : null,
    z: null,
    zPrime: null,
    formulas: [],
    keptIndex: null,
    duplicateOf: null,
    distanceToKept: null,
    family: -1,
    nearestIndex: null,
    nearest: null,
    nearestDistance: null,
    nnDistance: null,
    members: 0,
    notes: r.kind === 'record' ? r.record.notes.slice() : [],
  };
  if (r.kind === 'rejected') {
    row.reason = r.rejected.reason;
    return { row, record: null, text: r.rejected.text, key: '', pdd: null, amd: null, facts: null, setNotes: [] };
  }
  // Usable so far; the status is settled later (kept, duplicate, outside-window or rejected).
  row.status = 'kept';
  return { row, record: r.record, text: r.record.text, key: blockKey(r.record.text), pdd: null, amd: null, facts: null, setNotes: [] };
}

function applyFacts(w: Work, facts: CrystalFacts | null, atoms: number, notes: string[]): void {
  w.row.atoms = atoms;
  if (facts) {
    w.row.densityGPerCm3 = facts.densityGPerCm3;
    w.row.z = facts.z;
    w.row.zPrime = facts.zPrime;
    w.row.formulas = facts.formulas.slice();
    w.row.notes.push(...facts.notes);
  }
  w.row.notes.push(...notes);
  w.facts = facts;
  w.setNotes = notes;
}

function reject(w: Work, reason: string): void {
  w.row.status = 'rejected';
  // An energy problem noted earlier stays in the notes; the reason says why the structure is unusable.
  w.row.reason = reason;
}

function embeddingOf(e: { method: string; coords: Array<[number, number]>; quality: Array<{ name: string; value: number }> }): Embedding {
  return {
    method: e.method,
    quality: e.quality.map((q) => ({ name: q.name, value: round6(q.value) })),
    coords: e.coords.map(([x, y]) => [round6(x), round6(y)] as [number, number]),
  };
}

function checkParameters(p: SiftParameters): void {
  if (!Number.isInteger(p.k) || p.k < 1) throw new Error(`the PDD depth k must be a positive integer, not ${p.k}`);
  if (!(p.toleranceAngstrom >= 0)) throw new Error(`the duplicate tolerance must be a number of Å >= 0, not ${p.toleranceAngstrom}`);
  if (!Number.isInteger(p.minFamilySize) || p.minFamilySize < 2) throw new Error(`the minimum family size must be an integer >= 2, not ${p.minFamilySize}`);
  if (!Number.isInteger(p.minSamples) || p.minSamples < 1) throw new Error(`the minimum samples must be an integer >= 1, not ${p.minSamples}`);
  if (p.energyWindow !== null && !(p.energyWindow >= 0)) throw new Error(`the energy window must be >= 0, not ${p.energyWindow}`);
  if (!Number.isInteger(p.neighbours) || p.neighbours < 1) throw new Error(`the neighbour count must be an integer >= 1, not ${p.neighbours}`);
  if (p.inputs.length === 0) throw new Error('no inputs: give CIF files or folders');
}

/** Worker modules are .ts under the test runner and .js when built. */
function extOf(): string {
  return import.meta.url.endsWith('.ts') ? '.ts' : '.js';
}

function roundTo(x: number, d: number): number {
  const r = Number(x.toFixed(d));
  return r === 0 ? 0 : r;
}
function round6(x: number): number {
  return roundTo(x, 6);
}
function round(x: number): number {
  return Math.round(x);
}

/** Output rounding of a row: Å, g/cm3 and energies to 6 decimals. */
function roundRow(r: StructureRow): StructureRow {
  const o = (x: number | null) => (x === null ? null : round6(x));
  return {
    ...r,
    energy: o(r.energy),
    energyRel: o(r.energyRel),
    densityGPerCm3: o(r.densityGPerCm3),
    distanceToKept: o(r.distanceToKept),
    nearestDistance: o(r.nearestDistance),
    nnDistance: o(r.nnDistance),
  };
}
