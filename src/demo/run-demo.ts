// The demo: an invented search on the invented molecule orvazinone, written as a multi-block CIF and an energies
// CSV, then sifted. Two kinds: a real mini search (random starts in common space groups relaxed under a simple pair
// potential, src/demo/search; the default), or planted distinct packings, each found many times again (other cells,
// settings, origins, supercells, P1, atom orders) with optimiser-like noise, whose truth is known.
import { join } from 'node:path';
import { generateLandscape, type GeneratorOptions } from './landscape.js';
import { runMiniSearchInWorkers } from './search/search.js';
import { binByWindows } from './window-binning.js';
import { sift, type SiftRun } from '../landscape/sift.js';
import { siftFiles } from '../landscape/sift-files.js';
import { writeFilesAtomically } from '../io/outputs.js';
import { csvLine } from '../io/outputs.js';
import { adjustedRandIndex } from '../cluster/stats.js';
import { compareWithWindows, describeWindowPair } from '../report/window-compare.js';
import type { Landscape } from '../landscape/schema.js';
import type { Progress } from '../progress.js';

export const DEMO_OUT = join('reports', 'demo');

/** 40 planted packings (6 of them close partners of another), 8 finds each: 320 structures. */
export const DEMO_GENERATOR: GeneratorOptions = { seed: 2026, packings: 40, copiesPerPacking: 8, closePairs: 6 };

/**
 * The default mini search: 400 random starts (a few are rejected as unphysical), seeded. Enough that the low-energy
 * minima are each found several times and the 5 kJ/mol curve levels off, in about 10 s on 2 cores (README, "demo").
 */
export const DEMO_SEARCH = { seed: 20, starts: 400 };

export type DemoKind = 'search' | 'planted';

export interface DemoResult {
  kind: DemoKind;
  /** Planted distinct packings (planted demo only, else null). */
  planted: number | null;
  /** Random starts and those rejected as unphysical (search demo only, else null). */
  starts: number | null;
  rejectedStarts: number | null;
  structures: number;
  kept: number;
  /** Sift's grouping and the window binning against the planted truth (planted demo only, else null). */
  ariSift: number | null;
  binGroups: number;
  ariBins: number | null;
  files: string[];
  /** What the report shows first, as printed lines (search demo). */
  summary: string[];
}

export async function runDemo(
  opts: {
    out?: string;
    threads?: number;
    progress?: Progress;
    kind?: DemoKind;
    generator?: GeneratorOptions;
    search?: { seed: number; starts: number };
  } = {},
): Promise<DemoResult> {
  if ((opts.kind ?? 'search') === 'planted' || opts.generator) return runPlantedDemo(opts);
  const out = opts.out ?? DEMO_OUT;
  const settings = opts.search ?? DEMO_SEARCH;
  opts.progress?.stage(`relaxing ${settings.starts} random starts`, settings.starts);
  const found = await runMiniSearchInWorkers({ ...settings, threads: opts.threads, onProgress: (done) => opts.progress?.tick(done) });
  opts.progress?.done();
  const rejectedCsv = [
    csvLine(['start', 'space_group', 'reason']),
    ...found.rejected.map((r) => csvLine([r.start, r.group, r.reason])),
  ].join('\n');
  const { run, files } = await writeAndSift(
    out,
    found.cif,
    found.energiesCsv,
    ['demo-rejected-starts.csv', `${rejectedCsv}\n`],
    `polysift demo: invented search on ${found.moleculeName} (${found.starts} random starts)`,
    opts,
  );
  const l = run.landscape;
  return {
    kind: 'search',
    planted: null,
    starts: found.starts,
    rejectedStarts: found.rejected.length,
    structures: found.ids.length,
    kept: l.counts.kept,
    ariSift: null,
    binGroups: compareWithWindows(l)?.groups ?? 0,
    ariBins: null,
    files,
    summary: demoSummary(l),
  };
}

/**
 * The story the demo's report tells, in a few printed lines: duplicates collapsed (and how often the lowest
 * structures were found), families, the convergence verdict, and a pair energy/density windows would merge.
 */
export function demoSummary(l: Landscape): string[] {
  const rows = l.structures;
  const lowest = l.kept.slice(0, 5).map((k) => `${rows[k]!.id} ${rows[k]!.members}x`);
  const unassigned = l.kept.filter((k) => rows[k]!.family < 0).length;
  const lines = [
    `sift: ${l.counts.input} minima are ${l.counts.kept} distinct structures; ${l.counts.duplicate} duplicates collapsed ` +
      `(the five lowest found ${lowest.join(', ')}).`,
    `families: ${l.families.length}${l.families.length ? ` (${l.families.map((f) => `${f.members.length} structures`).join(', ')})` : ''}; ` +
      `${unassigned} structures in none.`,
  ];
  if (l.convergence) lines.push(`convergence: ${l.convergence.statement}`);
  const w = compareWithWindows(l);
  if (w) lines.push(`windows: ${describeWindowPair(w, l)}`);
  return lines;
}

async function runPlantedDemo(
  opts: { out?: string; threads?: number; progress?: Progress; generator?: GeneratorOptions } = {},
): Promise<DemoResult> {
  const out = opts.out ?? DEMO_OUT;
  opts.progress?.stage('inventing a search');
  const gen = generateLandscape(opts.generator ?? DEMO_GENERATOR);
  opts.progress?.done();
  const truth = [csvLine(['id', 'planted_packing', 'written_as']), ...gen.ids.map((id, i) => csvLine([id, gen.truth[i], gen.kinds[i]]))].join('\n');
  const { run, files } = await writeAndSift(
    out,
    gen.cif,
    gen.energiesCsv,
    ['demo-truth.csv', `${truth}\n`],
    `polysift demo: invented search on ${gen.moleculeName}`,
    opts,
  );
  const l = run.landscape;
  const bins = binByWindows(gen.energiesKjPerMol, l.structures.map((r) => r.densityGPerCm3 ?? 0));
  return {
    kind: 'planted',
    planted: gen.packings.length,
    starts: null,
    rejectedStarts: null,
    structures: gen.ids.length,
    kept: l.counts.kept,
    ariSift: adjustedRandIndex(l.structures.map((r) => r.keptIndex ?? -1 - r.index), gen.truth),
    binGroups: new Set(bins).size,
    ariBins: adjustedRandIndex(bins, gen.truth),
    files,
    summary: demoSummary(l),
  };
}

/**
 * Both demo kinds end the same way: write the invented search (CIF, energies CSV and one side table) into `out`,
 * sift it there (cache beside it) and write the sift outputs. Returns the run and every file written, inputs first.
 */
async function writeAndSift(
  out: string,
  cif: string,
  energiesCsv: string,
  sideTable: [string, string],
  title: string,
  opts: { threads?: number; progress?: Progress },
): Promise<{ run: SiftRun; files: string[] }> {
  const inputs = writeFilesAtomically(out, [['demo-search.cif', cif], ['demo-energies.csv', energiesCsv], sideTable]);
  const run = await sift({
    inputs: [inputs[0]],
    energiesFile: inputs[1],
    threads: opts.threads,
    cacheDir: join(out, '.polysift-cache'),
    progress: opts.progress,
  });
  const outputs = writeFilesAtomically(out, siftFiles(run, { title }));
  return { run, files: [...inputs, ...outputs] };
}
