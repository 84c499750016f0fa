// The sift pipeline as a library function: a short list of named stages over one state (stages/state.ts). Each
// stage is a function in its own file under stages/; every input block ends up in exactly one row with one
// status (kept, duplicate, rejected or outside-window); nothing is dropped silently.
import type { Landscape, SiftParameters } from './schema.js';
import type { EnergyAssignment, EnergyTable } from '../io/energies.js';
import { defaultThreads } from '../parallel/pool.js';
import { emptyComparisons } from './compare-cache.js';
import { VERSION } from '../version.js';
import { makeProgress } from '../progress.js';
import { DEFAULT_SYMMETRY_TOLERANCE_ANGSTROM } from '../geometry/detect-symmetry.js';
import type { SiftOptions, SiftState } from './stages/state.js';
import { readStage } from './stages/read.js';
import { energiesStage } from './stages/energies.js';
import { energyBasisStage } from './stages/energy-basis.js';
import { periodicSetsStage } from './stages/periodic-sets.js';
import { localExecutor } from '../parallel/executor.js';
import { windowStage } from './stages/window.js';
import { invariantsStage } from './stages/invariants.js';
import { duplicatesStage } from './stages/duplicates.js';
import { neighboursStage } from './stages/neighbours.js';
import { familiesStage } from './stages/families.js';
import { flagsStage } from './stages/flags.js';
import { buildLandscape } from './stages/landscape.js';
import { renameBlockText } from './unique-ids.js';
import { DEFAULT_ENERGY_MISMATCH_KJ_PER_MOL, DEFAULT_FLAT_DENSITY_G_PER_CM3, DEFAULT_FLAT_ENERGY_KJ_PER_MOL, inUnit } from './flags.js';

export type { SiftOptions } from './stages/state.js';
export { PAIR_RADIUS_FACTOR } from './stages/duplicates.js';
export { DENSE_LIMIT, EMBED_LIMIT, LANDMARKS } from './stages/families.js';

/**
 * Fixed duplicate tolerance, EMD in Å: what `auto` (the default, src/landscape/auto-tolerance.ts) falls back to
 * when a run shows no clear gap, and what a run searches pairs around (twice it). Chosen from measurements on the generator's landscapes
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

/** The stages of a sift, in order: [name used in progress and timings, function]. */
export const SIFT_STAGES: ReadonlyArray<readonly [string, (s: SiftState) => Promise<void>]> = [
  ['read', readStage],
  ['energies', energiesStage],
  ['periodic sets', periodicSetsStage],
  ['energy basis', energyBasisStage],
  ['window', windowStage],
  ['invariants', invariantsStage],
  ['duplicates', duplicatesStage],
  ['neighbours', neighboursStage],
  ['flags', flagsStage],
  ['families and map', familiesStage],
];

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

/** Run the whole sift. Throws only when the inputs cannot be read at all (missing path, bad energies file). */
export async function sift(opts: SiftOptions): Promise<SiftRun> {
  const t0 = performance.now();
  const timings: Record<string, number> = {};
  const s = initialState(opts);
  for (const [name, stage] of SIFT_STAGES) {
    const t = performance.now();
    await stage(s);
    timings[name] = Math.round(performance.now() - t) / 1000;
  }
  const t = performance.now();
  const landscape = buildLandscape(s, timings);
  timings.landscape = Math.round(performance.now() - t) / 1000;
  timings.total = Math.round(performance.now() - t0) / 1000;
  return {
    landscape,
    keptTexts: s.keptLocal.map((p) => renameBlockText(s.items[p].text, s.items[p].row.block, s.items[p].row.id)),
    energyTable: s.energyTable,
    energyAssignment: s.energyAssignment,
    messages: s.messages,
    cache: { hits: s.cacheHits, misses: s.cacheMisses, file: s.cacheFile, problem: s.cacheProblem, reused: s.reused },
  };
}

export function initialState(opts: SiftOptions): SiftState {
  const unit = opts.energyUnit ?? 'kJ/mol';
  const params: SiftParameters = {
    k: opts.k ?? DEFAULT_K,
    hydrogens: opts.hydrogens ?? 'keep',
    // Auto (the default) lets the duplicates stage choose; the fixed default stands in until then, and stays when
    // the run shows no clear gap.
    toleranceAngstrom: typeof opts.toleranceAngstrom === 'number' ? opts.toleranceAngstrom : DEFAULT_TOLERANCE_ANGSTROM,
    toleranceMode: typeof opts.toleranceAngstrom === 'number' ? 'given' : 'auto',
    elementCheck: opts.elementCheck ?? true,
    energyMismatch: opts.energyMismatch ?? inUnit(DEFAULT_ENERGY_MISMATCH_KJ_PER_MOL, unit),
    flatEnergy: opts.flatEnergy ?? inUnit(DEFAULT_FLAT_ENERGY_KJ_PER_MOL, unit),
    flatDensityGPerCm3: opts.flatDensityGPerCm3 ?? DEFAULT_FLAT_DENSITY_G_PER_CM3,
    symmetryToleranceAngstrom: opts.symmetryToleranceAngstrom ?? DEFAULT_SYMMETRY_TOLERANCE_ANGSTROM,
    minFamilySize: opts.minFamilySize ?? DEFAULT_MIN_FAMILY_SIZE,
    minSamples: opts.minSamples ?? opts.minFamilySize ?? DEFAULT_MIN_FAMILY_SIZE,
    energyWindow: opts.energyWindow ?? null,
    energyUnit: unit,
    energyBasis: opts.energyBasis ?? 'molecule',
    neighbours: opts.neighbours ?? DEFAULT_NEIGHBOURS,
    inputs: opts.inputs.slice(),
    energiesFile: opts.energiesFile ?? null,
    energyItem: opts.energyItem ?? null,
  };
  checkParameters(params);
  if (opts.blocksPerJob !== undefined && !(Number.isInteger(opts.blocksPerJob) && opts.blocksPerJob >= 1))
    throw new Error(`the blocks per job must be a whole number >= 1, not ${opts.blocksPerJob}`);
  const threads = opts.threads ?? defaultThreads();
  return {
    params,
    threads,
    executor: opts.executor ?? localExecutor(threads),
    blocksPerJob: opts.blocksPerJob ?? null,
    cacheDir: opts.cacheDir ?? null,
    denseLimit: opts.denseLimit,
    idColumn: opts.idColumn,
    energyColumn: opts.energyColumn,
    progress: opts.progress ?? makeProgress({ quiet: true }),
    messages: [],
    work: [],
    energyTable: null,
    energyAssignment: null,
    cacheParams: { k: params.k, hydrogens: params.hydrogens, version: VERSION },
    cache: new Map(),
    cacheProblem: null,
    cacheFactsChanged: false,
    computed: new Map(),
    lowest: null,
    active: [],
    items: [],
    cacheHits: 0,
    cacheMisses: 0,
    cacheFile: null,
    comparisons: emptyComparisons(),
    comparisonsChanged: false,
    reused: [],
    close: null,
    compositionClass: new Int32Array(0),
    elementDistances: new Map(),
    collapsed: null,
    keptLocal: [],
    keptPos: new Int32Array(0),
    keptNeighbours: null,
    toleranceChoice: null,
    flagCounts: { otherChemistryPairs: 0, otherChemistry: 0, energyMismatch: 0, flatMinimumPairs: 0, flatMinimum: 0 },
    edges: [],
    familyLabels: new Int32Array(0),
    embedding: null,
  };
}

function checkParameters(p: SiftParameters): void {
  if (!Number.isInteger(p.k) || p.k < 1) throw new Error(`the PDD depth k must be a positive integer, not ${p.k}`);
  if (!(p.toleranceAngstrom >= 0)) throw new Error(`the duplicate tolerance must be a number of Å >= 0, not ${p.toleranceAngstrom}`);
  if (!(p.symmetryToleranceAngstrom > 0 && p.symmetryToleranceAngstrom <= 1)) {
    throw new Error(`the symmetry tolerance must be a distance in Å above 0 and at most 1, not ${p.symmetryToleranceAngstrom}`);
  }
  if (!Number.isInteger(p.minFamilySize) || p.minFamilySize < 2) throw new Error(`the minimum family size must be an integer >= 2, not ${p.minFamilySize}`);
  if (!Number.isInteger(p.minSamples) || p.minSamples < 1) throw new Error(`the minimum samples must be an integer >= 1, not ${p.minSamples}`);
  if (!(p.energyMismatch > 0)) throw new Error(`the energy mismatch must be an energy > 0, not ${p.energyMismatch}`);
  if (!(p.flatEnergy >= 0)) throw new Error(`the flat-minimum energy must be an energy >= 0, not ${p.flatEnergy}`);
  if (!(p.flatDensityGPerCm3 >= 0)) throw new Error(`the flat-minimum density must be >= 0 g/cm3, not ${p.flatDensityGPerCm3}`);
  if (p.energyWindow !== null && !(p.energyWindow >= 0)) throw new Error(`the energy window must be >= 0, not ${p.energyWindow}`);
  if (!Number.isInteger(p.neighbours) || p.neighbours < 1) throw new Error(`the neighbour count must be an integer >= 1, not ${p.neighbours}`);
  if (p.energyBasis !== 'molecule' && p.energyBasis !== 'cell') throw new Error(`the energy basis must be molecule or cell, not ${String(p.energyBasis)}`);
  if (p.inputs.length === 0) throw new Error('no inputs: give CIF files or folders');
}
