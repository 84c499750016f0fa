// `polysift locate <ref.cif...> --in <dir>`: find known structures among the kept structures of a sift output.
import type { Command } from 'commander';
import { join, dirname } from 'node:path';
import { loadLandscape } from '../landscape/load.js';
import { locateReferences, locateSentence, type LocateScale } from '../landscape/locate.js';
import { readReferences } from '../landscape/references.js';
import { writeLocateOutputs } from '../landscape/locate-files.js';
import { keptWithPolicy } from '../landscape/kept-comparison.js';
import { DEFAULT_FOUND_CRITERION } from '../landscape/found-criterion.js';
import { CACHE_FOLDER } from '../landscape/cache.js';
import type { HydrogenPolicy } from '../landscape/schema.js';
import { addHydrogens, addOutputModes, addThreads, addTitle, addTolerance, parseDecimal, parseHydrogens, parseThreads, parseWhole } from './options.js';

interface LocateCliOptions {
  in: string;
  out?: string;
  tolerance?: string;
  gapLimit?: string;
  gapRatio?: string;
  scale: string;
  count: string;
  hydrogens?: string;
  cache?: string | boolean;
  threads?: string;
  title?: string;
  json?: boolean;
  quiet?: boolean;
}

export function registerLocate(program: Command): void {
  const c = DEFAULT_FOUND_CRITERION;
  const cmd = program
    .command('locate')
    .description('Find known structures (e.g. experimental forms) among the kept structures of a sift output, with their energy rank.')
    .argument('<references...>', 'CIF files or folders holding the known structures (every block is one reference)')
    .requiredOption('--in <dir>', 'output folder of a sift run (or its landscape.json)')
    .option('--out <dir>', 'folder for locate.json, locate.csv and report.html');
  addTolerance(cmd, 'EMD in Å within which the nearest kept structure is the reference (found)', `${c.toleranceAngstrom}, measured for experimental against predicted structures; not the duplicate tolerance`);
  cmd
    .option('--gap-limit <angstrom>', `EMD in Å up to which a nearest kept structure beyond the tolerance is still the reference when it stands out by the gap ratio (default: ${c.gapLimitAngstrom})`)
    .option('--gap-ratio <x>', `how many times farther the second-nearest must be for that (default: ${c.gapRatio})`)
    .option('--scale <volume|none>', 'volume: bring both sides to one volume per atom before comparing, so uniform thermal expansion does not count; none: compare as they are', 'volume')
    .option('--count <n>', 'nearest kept structures listed per reference', '5');
  addHydrogens(cmd, null, "the landscape's setting; drop suits X-ray references and works against any landscape (its kept structures are recomputed from unique.cif)");
  cmd
    .option('--cache <dir>', `folder of the invariants cache for recomputed kept structures (default: <landscape folder>/${CACHE_FOLDER})`)
    .option('--no-cache', 'neither read nor write that cache');
  addThreads(cmd);
  addTitle(cmd);
  addOutputModes(cmd, 'the result');
  cmd.action(async (refs: string[], opts: LocateCliOptions) => {
    const criterion = {
      toleranceAngstrom: opts.tolerance === undefined ? undefined : parseDecimal(opts.tolerance, '--tolerance'),
      gapLimitAngstrom: opts.gapLimit === undefined ? undefined : parseDecimal(opts.gapLimit, '--gap-limit'),
      gapRatio: opts.gapRatio === undefined ? undefined : parseDecimal(opts.gapRatio, '--gap-ratio', 1),
    };
    // A tolerance above the default gap limit moves the limit with it (the gap rule then has nothing to add).
    if (criterion.toleranceAngstrom !== undefined && criterion.gapLimitAngstrom === undefined) {
      criterion.gapLimitAngstrom = Math.max(criterion.toleranceAngstrom, c.gapLimitAngstrom);
    }
    if (opts.scale !== 'volume' && opts.scale !== 'none') throw new Error(`--scale must be volume or none, not '${opts.scale}'`);
    const count = parseWhole(opts.count, '--count', 1);
    const threads = parseThreads(opts.threads);
    const { path, landscape } = loadLandscape(opts.in);
    const hydrogens: HydrogenPolicy = opts.hydrogens === undefined ? landscape.invariants.hydrogens : parseHydrogens(opts.hydrogens);
    const cacheDir = opts.cache === false ? null : typeof opts.cache === 'string' ? opts.cache : join(dirname(path), CACHE_FOLDER);
    const kept = await keptWithPolicy(landscape, path, hydrogens, { cacheDir, threads });
    const { references, unusable } = await readReferences(refs, landscape.invariants.k, hydrogens, landscape.parameters.symmetryToleranceAngstrom);
    for (const u of unusable) process.stderr.write(`polysift: reference ${u.source} (line ${u.line}) not used: ${u.reason}\n`);
    if (references.length === 0) throw new Error(`no usable reference structure in ${refs.join(', ')}`);
    const result = await locateReferences(landscape, path, references, { criterion, scale: opts.scale as LocateScale, count, threads, kept });
    result.unusable = unusable;
    const written = opts.out ? writeLocateOutputs(opts.out, result, landscape, opts.title) : [];
    if (opts.json) process.stdout.write(JSON.stringify(result, null, 1) + '\n');
    else if (!opts.quiet) {
      for (const r of result.references) process.stdout.write(locateSentence(r, result.energyUnit) + '\n');
      for (const n of result.notes) process.stdout.write(`note: ${n}\n`);
      if (written.length) process.stdout.write(`wrote ${written.join(', ')}\n`);
    }
  });
}
