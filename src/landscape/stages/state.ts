// The one data structure the sift stages pass along (src/landscape/sift.ts lists the stages). Each stage reads
// what earlier stages left here and adds its own results; no stage reaches back into another's internals. The
// heavy parts of a stage (periodic sets, invariants, EMD searches) run as jobs on the state's executor (local
// worker threads, or a Redis queue: src/parallel/executor.ts); the state itself stays on the main thread.
import type { CrystalFacts, CrystalRecord, Pdd } from '../../types.js';
import type { Invariants } from '../../invariants/batch.js';
import type { Executor } from '../../parallel/executor.js';
import type { EnergyBasis, EnergyUnit, Embedding, FlagCounts, HydrogenPolicy, SiftParameters, StructureRow, ToleranceChoice } from '../schema.js';
import type { EnergyAssignment, EnergyTable } from '../../io/energies.js';
import type { CacheEntry, CacheParams } from '../cache.js';
import type { Comparisons } from '../compare-cache.js';
import type { CollapseResult } from '../collapse.js';
import type { Progress } from '../../progress.js';
import type { RowElements } from '../../invariants/pdd.js';

export interface SiftOptions {
  inputs: string[];
  energiesFile?: string | null;
  idColumn?: string;
  energyColumn?: string;
  energyUnit?: EnergyUnit;
  /** What the energies are per (default 'molecule'); 'cell' energies are divided by each structure's Z. */
  energyBasis?: EnergyBasis;
  energyItem?: string | null;
  k?: number;
  hydrogens?: HydrogenPolicy;
  /** Symmetry tolerance (Å); default DEFAULT_SYMMETRY_TOLERANCE_ANGSTROM. */
  symmetryToleranceAngstrom?: number;
  /** Duplicate tolerance in Å, or 'auto' (the default) to choose it from the run's own gap (src/landscape/auto-tolerance.ts). */
  toleranceAngstrom?: number | 'auto';
  /** Compare elements too (element-aware EMD) before two structures of one composition become duplicates; default true. */
  elementCheck?: boolean;
  /** Energy mismatch threshold in `energyUnit` (default 1 kJ/mol converted; src/landscape/flags.ts). */
  energyMismatch?: number;
  /** Flat-minimum thresholds: energy in `energyUnit` (default 0.01 kJ/mol converted) and density. */
  flatEnergy?: number;
  flatDensityGPerCm3?: number;
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
  /** Where the heavy jobs run; default: local worker threads (`threads` of them). The caller closes it. */
  executor?: Executor;
  /** Blocks per periodic-set and invariants job (default BLOCKS_PER_JOB, less for small runs). */
  blocksPerJob?: number;
}

/** One input block on its way through the stages. */
export interface Work {
  row: StructureRow;
  record: CrystalRecord | null;
  text: string;
  /** Cache key of the block (SHA-256 of its text); '' for rejected blocks. */
  key: string;
  pdd: Pdd | null;
  amd: Float64Array | null;
  facts: CrystalFacts | null;
  /** Notes of the periodic-set construction (what the invariants cache stores beside the PDD). */
  setNotes: string[];
  /** Elements at the centres of the PDD rows (invariants stage), for the element-aware comparison. */
  elements: RowElements | null;
}

/** Pairs of compared structures (positions in `items`) with their EMD in Å, found within `radius`. */
export interface ClosePairs {
  i: Int32Array;
  j: Int32Array;
  distances: Float64Array;
  radius: number;
}

/** Nearest-neighbour lists of the kept structures: row r lists k positions in `kept` order and their EMDs. */
export interface KeptNeighbours {
  k: number;
  indices: Int32Array;
  distances: Float64Array;
}

export interface SiftState {
  params: SiftParameters;
  threads: number;
  executor: Executor;
  /** Blocks per job as asked for; null for the default. */
  blocksPerJob: number | null;
  cacheDir: string | null;
  denseLimit: number | undefined;
  idColumn: string | undefined;
  energyColumn: string | undefined;
  progress: Progress;
  /** Lines for stderr (energy problems, skipped steps). */
  messages: string[];

  // read: one entry per input block, in input order.
  work: Work[];
  // energies
  energyTable: EnergyTable | null;
  energyAssignment: EnergyAssignment | null;
  // periodic sets: the invariants cache as loaded, and the invariants computed with the periodic sets of blocks it
  // did not hold (or why they failed), for the invariants stage to take.
  cacheParams: CacheParams;
  cache: Map<string, CacheEntry>;
  cacheProblem: string | null;
  /** Cached entries whose facts were recomputed (another symmetry tolerance): the cache is written again. */
  cacheFactsChanged: boolean;
  computed: Map<Work, Invariants | { error: string }>;
  // window: the lowest energy among usable structures; the structures inside the window.
  lowest: number | null;
  active: Work[];
  // invariants: the compared structures (usable, in the window, with a PDD and AMD), in input order.
  items: Work[];
  cacheHits: number;
  cacheMisses: number;
  cacheFile: string | null;
  // comparison results shared by the comparison stages, and their cache.
  comparisons: Comparisons;
  comparisonsChanged: boolean;
  /** Names of the comparison results taken from the cache. */
  reused: string[];
  // duplicates: pairs within the search radius, the collapse, kept structures as positions in `items`.
  close: ClosePairs | null;
  /** Per position in `items`: composition class (equal reduced formula, src/geometry/composition.ts). */
  compositionClass: Int32Array;
  /** Element-aware EMDs (Å) computed by the collapse's check, keyed by pairKey (stages/duplicates.ts). */
  elementDistances: Map<string, number>;
  collapsed: CollapseResult | null;
  keptLocal: number[];
  /** Per position in `items`: rank in `keptLocal`, -1 for duplicates. */
  keptPos: Int32Array;
  // neighbours
  keptNeighbours: KeptNeighbours | null;
  edges: Array<[number, number, number]>;
  // duplicates: how `auto` chose the tolerance (null when given)
  toleranceChoice: ToleranceChoice | null;
  // flags
  flagCounts: FlagCounts;
  // families and map: per kept structure (keptLocal order).
  familyLabels: Int32Array;
  embedding: Embedding | null;
}

export function reject(w: Work, reason: string): void {
  w.row.status = 'rejected';
  // An energy problem noted earlier stays in the notes; the reason says why the structure is unusable.
  w.row.reason = reason;
}

/** Worker modules are .ts under the test runner and .js when built. */
export function workerModule(name: string): string {
  const ext = import.meta.url.endsWith('.ts') ? '.ts' : '.js';
  return new URL(`../${name}${ext}`, import.meta.url).href;
}
