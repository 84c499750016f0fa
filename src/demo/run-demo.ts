// The demo: an invented search on the invented molecule orvazinone. Planted distinct packings in common space
// groups, each found many times again (other cells, settings, origins, supercells, P1, atom orders) with
// optimiser-like noise and energies, written as a multi-block CIF and an energies CSV, then sifted.
import { join } from 'node:path';
import { generateLandscape, type GeneratorOptions } from './landscape.js';
import { binByWindows } from './window-binning.js';
import { sift } from '../landscape/sift.js';
import { siftFiles } from '../landscape/sift-files.js';
import { writeFilesAtomically } from '../io/outputs.js';
import { csvLine } from '../io/outputs.js';
import { adjustedRandIndex } from '../cluster/stats.js';
import type { Progress } from '../progress.js';

export const DEMO_OUT = join('reports', 'demo');

/** 40 planted packings (6 of them close partners of another), 8 finds each: 320 structures. */
export const DEMO_GENERATOR: GeneratorOptions = { seed: 2026, packings: 40, copiesPerPacking: 8, closePairs: 6 };

export interface DemoResult {
  planted: number;
  structures: number;
  kept: number;
  ariSift: number;
  binGroups: number;
  ariBins: number;
  files: string[];
}

export async function runDemo(
  opts: { out?: string; threads?: number; progress?: Progress; generator?: GeneratorOptions } = {},
): Promise<DemoResult> {
  const out = opts.out ?? DEMO_OUT;
  opts.progress?.stage('inventing a search');
  const gen = generateLandscape(opts.generator ?? DEMO_GENERATOR);
  opts.progress?.done();
  const truth = [csvLine(['id', 'planted_packing', 'written_as']), ...gen.ids.map((id, i) => csvLine([id, gen.truth[i], gen.kinds[i]]))].join('\n');
  const inputs = writeFilesAtomically(out, [
    ['demo-search.cif', gen.cif],
    ['demo-energies.csv', gen.energiesCsv],
    ['demo-truth.csv', `${truth}\n`],
  ]);
  const run = await sift({
    inputs: [inputs[0]],
    energiesFile: inputs[1],
    threads: opts.threads,
    cacheDir: join(out, '.polysift-cache'),
    progress: opts.progress,
  });
  const files = writeFilesAtomically(out, siftFiles(run, { title: `polysift demo: invented search on ${gen.moleculeName}` }));
  const l = run.landscape;
  const bins = binByWindows(gen.energiesKjPerMol, l.structures.map((r) => r.densityGPerCm3 ?? 0));
  return {
    planted: gen.packings.length,
    structures: gen.ids.length,
    kept: l.counts.kept,
    ariSift: adjustedRandIndex(l.structures.map((r) => r.keptIndex ?? -1 - r.index), gen.truth),
    binGroups: new Set(bins).size,
    ariBins: adjustedRandIndex(bins, gen.truth),
    files: [...inputs, ...files],
  };
}
