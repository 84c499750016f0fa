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
import { BLOCKS_PER_JOB } from '../landscape/stages/periodic-sets.js';
import { addHiddenAlias, addHydrogens, addOutputModes, addPddDepth, addSymmetryTolerance, addThreads, addTitle, addTolerance, parseDecimal, parseHydrogens, parseSeconds, parseSymmetryTolerance, parseThreads, parseWhole } from './options.js';
import { CACHE_FOLDER } from '../landscape/cache.js';
import type { EnergyUnit } from '../landscape/schema.js';
import { DEFAULT_ENERGY_MISMATCH_KJ_PER_MOL, DEFAULT_FLAT_DENSITY_G_PER_CM3, DEFAULT_FLAT_ENERGY_KJ_PER_MOL, FLAG_CODES } from '../landscape/flags.js';

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
  elementCheck: boolean;
  energyMismatch?: string;
  flatEnergy?: string;
  flatDensity?: string;
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
  queue?: string;
  queuePatience: string;
  jobSize?: string;
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
  addTolerance(cmd, `EMD in Å within which a structure is a duplicate of a kept one, or 'auto': from the gap in the run's own distances (${DEFAULT_TOLERANCE_ANGSTROM} Å when it shows none)`, 'auto');
  addHiddenAlias(cmd, '--duplicate-tolerance <angstrom>');
  addSymmetryTolerance(cmd);
  cmd
    .option('--no-element-check', 'let structures of one composition be duplicates on geometry alone (skip the element-aware EMD)')
    .option('--energy-mismatch <energy>', `flag duplicates this far from their group's median energy (default ${DEFAULT_ENERGY_MISMATCH_KJ_PER_MOL} kJ/mol)`)
    .option('--flat-energy <energy>', `flag kept pairs just beyond the tolerance within this energy (and --flat-density) as one flat minimum (default ${DEFAULT_FLAT_ENERGY_KJ_PER_MOL} kJ/mol)`)
    .option('--flat-density <g/cm3>', `density agreement for the flat-minimum flag (default ${DEFAULT_FLAT_DENSITY_G_PER_CM3} g/cm3)`)
    .option('--min-family-size <n>', 'smallest family HDBSCAN reports (kept structures)', String(DEFAULT_MIN_FAMILY_SIZE))
    .option('--family-min-samples <n>', 'HDBSCAN neighbour count for core distances (default: the minimum family size)')
    .option('--energy-window <energy>', 'only structures within this energy above the lowest are compared, e.g. 20 or 5kcal/mol');
  addHydrogens(cmd, 'keep');
  cmd
    .option('--neighbours <n>', 'nearest kept neighbours recorded per kept structure', String(DEFAULT_NEIGHBOURS))
    .option('--cache <dir>', `folder of the invariants and comparisons cache (default: <out>/${CACHE_FOLDER})`)
    .option('--no-cache', 'neither read nor write the invariants cache')
    .option('--queue <url>', 'run the heavy jobs on a Redis job queue served by `polysift worker` processes, e.g. redis://HOST:6379')
    .option('--queue-patience <s>', 'with --queue: keep trying to reach Redis this long before giving up', '30')
    .option('--job-size <blocks>', `structures per periodic-set and invariants job (default ${BLOCKS_PER_JOB}; fewer in small runs, so there are at least 16 jobs)`);
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
      toleranceAngstrom: tolerance === undefined || tolerance.trim().toLowerCase() === 'auto' ? 'auto' : parseDecimal(tolerance, '--tolerance'),
      elementCheck: o.elementCheck,
      energyMismatch: o.energyMismatch === undefined ? undefined : positiveEnergy(o.energyMismatch, unit, '--energy-mismatch'),
      flatEnergy: o.flatEnergy === undefined ? undefined : positiveEnergy(o.flatEnergy, unit, '--flat-energy'),
      flatDensityGPerCm3: o.flatDensity === undefined ? undefined : parseDecimal(o.flatDensity, '--flat-density'),
      symmetryToleranceAngstrom: parseSymmetryTolerance(o.symmetryTolerance),
      minFamilySize,
      minSamples: o.familyMinSamples === undefined ? minFamilySize : parseWhole(o.familyMinSamples, '--family-min-samples', 1),
      energyWindow: o.energyWindow === undefined ? null : parseEnergyAmount(o.energyWindow, unit),
      neighbours: parseWhole(o.neighbours, '--neighbours', 1),
      threads: parseThreads(o.threads),
      cacheDir: o.cache === false ? null : typeof o.cache === 'string' ? o.cache : join(o.out, CACHE_FOLDER),
      progress: makeProgress({ quiet: o.quiet }),
      blocksPerJob: o.jobSize === undefined ? undefined : parseWhole(o.jobSize, '--job-size', 1),
    };
    const patienceSeconds = parseSeconds(o.queuePatience, '--queue-patience');
    // Ctrl-C: files are staged under temporary names and renamed together, so only temporaries can be left.
    const onInterrupt = () => {
      removePendingFiles();
      // Written synchronously: an asynchronous write to a pipe would be lost at exit.
      writeSync(2, 'polysift: interrupted; output files were left as they were\n');
      process.exit(130);
    };
    process.on('SIGINT', onInterrupt);
    process.on('SIGTERM', onInterrupt);
    // The queue code (bullmq, ioredis) is loaded only when a queue is asked for.
    if (o.queue !== undefined) {
      const { openQueueExecutor } = await import('../queue/queue-executor.js');
      const note = o.quiet ? undefined : (line: string) => process.stderr.write(`polysift: ${line}\n`);
      options.executor = await openQueueExecutor(o.queue, { patienceSeconds, note });
    }
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
      await options.executor?.close();
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
  const f = l.flagCounts;
  const flags = [
    f.otherChemistry ? `${f.otherChemistry} ${FLAG_CODES.otherChemistry}` : '',
    f.energyMismatch ? `${f.energyMismatch} ${FLAG_CODES.energyMismatch}` : '',
    f.flatMinimum ? `${f.flatMinimum} ${FLAG_CODES.flatMinimum}` : '',
  ].filter((x) => x !== '');
  const tc = l.toleranceChoice;
  return (
    `sifted ${c.input} structure(s): ${c.kept} kept, ${c.duplicate} duplicate, ${c.rejected} rejected, ${c.outsideWindow} outside the window; ` +
    `${l.families.length} famil${l.families.length === 1 ? 'y' : 'ies'}; ` +
    (tc ? `tolerance ${l.parameters.toleranceAngstrom} Å (auto${tc.clear ? '' : ', no clear gap'}); ` : '') +
    (flags.length ? `flagged: ${flags.join(', ')} (column flags of structures.csv); ` : '') +
    `wrote ${join(out, 'report.html')}`
  );
}

function summary(run: SiftRun, out: string, files: string[]) {
  const l = run.landscape;
  return {
    out,
    files,
    counts: l.counts,
    flagCounts: l.flagCounts,
    toleranceChoice: l.toleranceChoice && { ...l.toleranceChoice, edgeLengthsAngstrom: undefined },
    families: l.families.length,
    parameters: l.parameters,
    lowestEnergy: l.lowestEnergy,
    cache: { hits: run.cache.hits, misses: run.cache.misses, reused: run.cache.reused },
    timingsSeconds: l.run.timingsSeconds,
    messages: run.messages,
  };
}

function positiveEnergy(text: string, unit: EnergyUnit, name: string): number {
  const v = parseEnergyAmount(text, unit);
  if (!(v > 0)) throw new Error(`${name} must be an energy > 0, not '${text}'`);
  return v;
}
