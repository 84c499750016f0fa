// `polysift locate <ref.cif...> --in <dir>`: find known structures among the kept structures of a sift output.
import type { Command } from 'commander';
import { loadLandscape } from '../landscape/load.js';
import { hydrogenProblem, locateReferences, locateSentence } from '../landscape/locate.js';
import { readReferences } from '../landscape/references.js';
import { writeLocateOutputs } from '../landscape/locate-files.js';
import type { HydrogenPolicy } from '../landscape/schema.js';

interface LocateCliOptions {
  in: string;
  out?: string;
  tolerance?: string;
  count?: string;
  hydrogens?: string;
  threads?: string;
  title?: string;
  json?: boolean;
  quiet?: boolean;
}

export function registerLocate(program: Command): void {
  program
    .command('locate')
    .description('Find known structures (e.g. experimental forms) among the kept structures of a sift output, with their energy rank.')
    .argument('<references...>', 'CIF files or folders holding the known structures (every block is one reference)')
    .requiredOption('--in <dir>', 'output folder of a sift run (or its landscape.json)')
    .option('--out <dir>', 'folder for locate.json, locate.csv and report.html')
    .option('--tolerance <angstrom>', "EMD in Å within which a reference counts as found (default: the landscape's duplicate tolerance)")
    .option('--count <n>', 'nearest kept structures listed per reference', '5')
    .option('--hydrogens <keep|drop>', "keep or drop hydrogens in the comparison (default: the landscape's setting); drop suits X-ray references, whose hydrogen positions are unreliable, and needs a landscape sifted with --hydrogens drop")
    .option('--threads <n>', 'worker threads for the EMD work (default: available cores)')
    .option('--title <text>', 'title of the report page')
    .option('--json', 'print the result as JSON on stdout')
    .option('--quiet', 'print nothing but errors')
    .action(async (refs: string[], opts: LocateCliOptions) => {
      const tolerance = opts.tolerance === undefined ? undefined : parseNumber(opts.tolerance, '--tolerance', false);
      const count = parseNumber(opts.count ?? '5', '--count', true);
      const threads = opts.threads === undefined ? undefined : parseNumber(opts.threads, '--threads', true);
      const { path, landscape } = loadLandscape(opts.in);
      // References use the landscape's settings; asking to drop hydrogens needs a landscape made without them.
      if (opts.hydrogens !== undefined && opts.hydrogens !== 'keep' && opts.hydrogens !== 'drop') {
        throw new Error(`--hydrogens must be keep or drop, got "${opts.hydrogens}"`);
      }
      const hydrogens: HydrogenPolicy = (opts.hydrogens as HydrogenPolicy | undefined) ?? landscape.invariants.hydrogens;
      const problem = hydrogenProblem(landscape, hydrogens, path);
      if (problem) throw new Error(problem);
      const { references, unusable } = await readReferences(refs, landscape.invariants.k, hydrogens, landscape.parameters.symmetryToleranceAngstrom);
      for (const u of unusable) process.stderr.write(`polysift: reference ${u.source} (line ${u.line}) not used: ${u.reason}\n`);
      if (references.length === 0) throw new Error(`no usable reference structure in ${refs.join(', ')}`);
      const result = await locateReferences(landscape, path, references, { toleranceAngstrom: tolerance, count, threads });
      result.unusable = unusable;
      const written = opts.out ? writeLocateOutputs(opts.out, result, landscape, opts.title) : [];
      if (opts.json) process.stdout.write(JSON.stringify(result, null, 1) + '\n');
      else if (!opts.quiet) {
        for (const r of result.references) process.stdout.write(locateSentence(r, result.energyUnit, result.toleranceAngstrom) + '\n');
        if (written.length) process.stdout.write(`wrote ${written.join(', ')}\n`);
      }
    });
}

function parseNumber(text: string, name: string, wholePositive: boolean): number {
  const v = Number(text);
  const ok = wholePositive ? Number.isInteger(v) && v > 0 : Number.isFinite(v) && v >= 0;
  if (!ok) throw new Error(`${name} must be ${wholePositive ? 'a positive whole number' : 'a non-negative number'}, got "${text}"`);
  return v;
}
