// `polysift sift <inputs...>`: the main job. A thin shell over `sift()` (src/landscape/sift.ts) and the output
// writers: parse options, run, write every output file atomically, print a summary.
import type { Command } from 'commander';
import { join } from 'node:path';
import { writeSync } from 'node:fs';
import { sift, DEFAULT_MIN_FAMILY_SIZE, DEFAULT_NEIGHBOURS, DEFAULT_TOLERANCE_ANGSTROM, type SiftOptions, type SiftRun } from '../landscape/sift.js';
import { siftFiles } from '../landscape/sift-files.js';
import { writeFilesAtomically, removePendingFiles } from '../io/outputs.js';
import { parseEnergyAmount, parseEnergyUnit } from '../io/energies.js';
import { makeProgress } from '../progress.js';
import { addHiddenAlias, addHydrogens, addOutputModes, addPddDepth, addThreads, addTitle, addTolerance, parseDecimal, parseHydrogens, parseSymmetryTolerance, parseThreads, parseWhole, addSymmetryTolerance } from './options.js';

import { CACHE_FOLDER } from '../landscape/cache.js';

export const DEFAULT_OUT = 'sift-out';
export { CACHE_FOLDER };

interface SiftCliOptions {
  out: string;
  energies?: string;
  idColumn: string;
  energyColumn: string;
  energyUnit: string;
  energyBasis: string;
  energyItem?: string;
  pddDepth: string;
  tolerance?: string;
  /** The old spelling of --tolerance, still read. */
  duplicateTolerance?: string;
  symmetryTolerance: string;
  minFamilySize: string;
  familyMinSamples?: string;
  energyWindow?: string;
  hydrogens: string;
  neighbours: string;
  threads?: string;
  cache?: string | boolean;
  title?: string;
  json?: boolean;
  quiet?: boolean;
}

export function registerSift(program: Command): void {
  const cmd = program
    .command('sift')
    .description('Collapse duplicate minima by EMD, group families with HDBSCAN, and write the landscape (CSV, JSON, CIF, report.html).')
    .argument('<inputs...>', 'CIF files, folders (searched for *.cif and *.cif.gz) or multi-block CIFs')
    .option('--out <dir>', 'output folder', DEFAULT_OUT)
    .option('--energies <file>', 'CSV with one energy per structure id')
    .option('--id-column <name>', 'column of the energies CSV holding the structure id (the block name)', 'id')
    .option('--energy-column <name>', 'column of the energies CSV holding the energy', 'energy')
    .option('--energy-unit <unit>', 'unit of the energies: kJ/mol, kcal/mol or eV; outputs keep it', 'kJ/mol')
    .option('--energy-basis <molecule|cell>', 'what the energies are per: molecule, or cell (divided by each structure\'s Z, the molecules per cell found from its bonds)', 'molecule')
    .option('--energy-item <name>', 'CIF data item holding each structure\'s energy (instead of --energies)');
  addPddDepth(cmd);
  addTolerance(cmd, 'EMD in Å within which a structure is a duplicate of a kept one', String(DEFAULT_TOLERANCE_ANGSTROM));
  addHiddenAlias(cmd, '--duplicate-tolerance <angstrom>');
  addSymmetryTolerance(cmd);
  cmd
    .option('--min-family-size <n>', 'smallest family HDBSCAN reports (kept structures)', String(DEFAULT_MIN_FAMILY_SIZE))
    .option('--family-min-samples <n>', 'HDBSCAN neighbour count for core distances (default: the minimum family size)')
    .option('--energy-window <energy>', 'only structures within this energy above the lowest are compared, e.g. 20 or 5kcal/mol');
  addHydrogens(cmd, 'keep');
  cmd
    .option('--neighbours <n>', 'nearest kept neighbours recorded per kept structure', String(DEFAULT_NEIGHBOURS))
    .option('--cache <dir>', `folder of the invariants and comparisons cache (default: <out>/${CACHE_FOLDER})`)
    .option('--no-cache', 'neither read nor write the invariants cache');
  addThreads(cmd);
  addTitle(cmd);
  addOutputModes(cmd, 'a summary');
  cmd.action(async (inputs: string[], o: SiftCliOptions) => {
    const unit = parseEnergyUnit(o.energyUnit);
    if (o.energies && o.energyItem) throw new Error('give energies either with --energies or with --energy-item, not both');
    if (o.energyBasis !== 'molecule' && o.energyBasis !== 'cell') throw new Error(`--energy-basis must be molecule or cell, not '${o.energyBasis}'`);
    const hydrogens = parseHydrogens(o.hydrogens);
    const minFamilySize = parseWhole(o.minFamilySize, '--min-family-size', 2);
    if (o.tolerance !== undefined && o.duplicateTolerance !== undefined) throw new Error('give the tolerance once, with --tolerance');
    const tolerance = o.tolerance ?? o.duplicateTolerance;
    const options: SiftOptions = {
      inputs,
      energiesFile: o.energies ?? null,
      idColumn: o.idColumn,
      energyColumn: o.energyColumn,
      energyUnit: unit,
      energyBasis: o.energyBasis,
      energyItem: o.energyItem ?? null,
      k: parseWhole(o.pddDepth, '-k', 1),
      hydrogens,
      toleranceAngstrom: tolerance === undefined ? DEFAULT_TOLERANCE_ANGSTROM : parseDecimal(tolerance, '--tolerance'),
      symmetryToleranceAngstrom: parseSymmetryTolerance(o.symmetryTolerance),
      minFamilySize,
      minSamples: o.familyMinSamples === undefined ? minFamilySize : parseWhole(o.familyMinSamples, '--family-min-samples', 1),
      energyWindow: o.energyWindow === undefined ? null : parseEnergyAmount(o.energyWindow, unit),
      neighbours: parseWhole(o.neighbours, '--neighbours', 1),
      threads: parseThreads(o.threads),
      cacheDir: o.cache === false ? null : typeof o.cache === 'string' ? o.cache : join(o.out, CACHE_FOLDER),
      progress: makeProgress({ quiet: o.quiet }),
    };
    // Ctrl-C: files are staged under temporary names and renamed together, so only temporaries can be left.
    const onInterrupt = () => {
      removePendingFiles();
      // Written synchronously: an asynchronous write to a pipe would be lost at exit.
      writeSync(2, 'polysift: interrupted; output files were left as they were\n');
      process.exit(130);
    };
    process.on('SIGINT', onInterrupt);
    process.on('SIGTERM', onInterrupt);
    try {
      const run = await sift(options);
      for (const m of run.messages) if (!o.quiet) process.stderr.write(`polysift: ${m}\n`);
      const c = run.landscape.counts;
      if (c.kept === 0) throw new Error(nothingUsable(run));
      const written = writeFilesAtomically(o.out, siftFiles(run, { title: o.title }));
      if (o.json) process.stdout.write(`${JSON.stringify(summary(run, o.out, written), null, 1)}\n`);
      else if (!o.quiet) process.stdout.write(`${summaryLine(run, o.out)}\n`);
    } finally {
      process.off('SIGINT', onInterrupt);
      process.off('SIGTERM', onInterrupt);
    }
  });
}

function nothingUsable(run: SiftRun): string {
  const c = run.landscape.counts;
  if (c.input === 0) return `no CIF data blocks found in ${run.landscape.parameters.inputs.join(', ')}`;
  const first = run.landscape.structures.find((r) => r.status === 'rejected');
  const why = first ? ` (first: ${first.source}: ${first.reason})` : '';
  return `nothing usable: all ${c.input} block(s) were rejected${why}`;
}

export function summaryLine(run: SiftRun, out: string): string {
  const l = run.landscape;
  const c = l.counts;
  return (
    `sifted ${c.input} structure(s): ${c.kept} kept, ${c.duplicate} duplicate, ${c.rejected} rejected, ${c.outsideWindow} outside the window; ` +
    `${l.families.length} famil${l.families.length === 1 ? 'y' : 'ies'}; wrote ${join(out, 'report.html')}`
  );
}

function summary(run: SiftRun, out: string, files: string[]) {
  const l = run.landscape;
  return {
    out,
    files,
    counts: l.counts,
    families: l.families.length,
    parameters: l.parameters,
    lowestEnergy: l.lowestEnergy,
    cache: { hits: run.cache.hits, misses: run.cache.misses, reused: run.cache.reused },
    timingsSeconds: l.run.timingsSeconds,
    messages: run.messages,
  };
}
