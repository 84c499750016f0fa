// polysift as a library: every command is a thin shell over these functions.
export type * from './types.js';
export type * from './landscape/schema.js';
export { VERSION } from './version.js';

// Reading CIFs (src/io)
export { expandInputs, readStructures, readCifFile, readCifText } from './io/read.js';
export { parseEnergyCsv, assignEnergies, convertEnergy } from './io/energies.js';

// Geometry (src/geometry)
export { cellToBasis, cellVolume } from './geometry/cell.js';
export { parseSymopXyz, opsFromSymbol, closeGroup } from './geometry/symmetry.js';
export { opsFromHall } from './geometry/hall.js';
export {
  SPACE_GROUP_SETTINGS, OTHER_SETTINGS, settingByHall, settingByOperations, defaultSetting, groupSymbol, settingsOfGroup, settingLabel,
  type SpaceGroupSetting,
} from './geometry/space-group-table.js';
export { settingFromSymbol, settingFromNumber, type ResolvedSetting, type SettingHints } from './geometry/space-group-symbol.js';
export { toPeriodicSet } from './geometry/periodic-set.js';
export { crystalFacts } from './geometry/facts.js';
export { reduceBasis } from './geometry/reduce.js';

// Invariants (src/invariants)
export { pdd } from './invariants/pdd.js';
export { amd } from './invariants/amd.js';
export { computeInvariants, computeInvariantsSettled } from './invariants/batch.js';

// Metric (src/metric)
export { emd, amdDistance } from './metric/emd.js';
export { nearestNeighbours, nearestAcross, pairsWithin, distanceMatrix } from './metric/graph.js';

// Clustering and statistics (src/cluster)
export { hdbscanDense, hdbscanLazy } from './cluster/hdbscan.js';
export { embed2d } from './cluster/embedding.js';
export { adjustedRandIndex, spearman } from './cluster/stats.js';

// Pipelines (src/landscape)
export { sift, SIFT_STAGES } from './landscape/sift.js';
export { localExecutor } from './parallel/executor.js';
export { openQueue, serveQueueJobs } from './queue/lazy.js';
export { siftFiles } from './landscape/sift-files.js';
export { collapseDuplicates } from './landscape/collapse.js';
export { convergenceCurve } from './landscape/convergence.js';
export { loadLandscape } from './landscape/load.js';
export { diffLandscapes } from './landscape/diff.js';
export { locateReferences } from './landscape/locate.js';
export { keptWithPolicy } from './landscape/kept-comparison.js';
export { decideFound, DEFAULT_FOUND_CRITERION } from './landscape/found-criterion.js';

// Reports (src/report)
export { renderSiftReport } from './report/sift-report.js';
export { renderDiffReport } from './report/diff-report.js';
export { renderLocateReport } from './report/locate-report.js';
