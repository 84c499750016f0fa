// `polysift diff <dirA> <dirB> --out DIR`: compare the kept structures of two sift outputs (no CIF is re-read).
import type { Command } from 'commander';
import { loadLandscape } from '../landscape/load.js';
import { diffLandscapes } from '../landscape/diff.js';
import { writeDiffOutputs } from '../landscape/diff-files.js';
import { addOutputModes, addThreads, addTitle, addTolerance, parseDecimal, parseThreads } from './options.js';

interface DiffCliOptions {
  out: string;
  tolerance?: string;
  threads?: string;
  title?: string;
  json?: boolean;
  quiet?: boolean;
}

export function registerDiff(program: Command): void {
  const cmd = program
    .command('diff')
    .description('Compare two sift outputs: which kept structures both runs found, which only one did, and how the energy ranking changed.')
    .argument('<dirA>', 'output folder of the first sift run (or its landscape.json)')
    .argument('<dirB>', 'output folder of the second sift run (or its landscape.json)')
    .requiredOption('--out <dir>', 'folder for diff.json, diff-structures.csv, diff-pairs.csv and report.html');
  addTolerance(cmd, 'EMD in Å within which a structure of one run is the same as one of the other', 'the larger duplicate tolerance of the two runs');
  addThreads(cmd);
  addTitle(cmd);
  addOutputModes(cmd, 'the summary');
  cmd.action(async (dirA: string, dirB: string, opts: DiffCliOptions) => {
    const tolerance = opts.tolerance === undefined ? undefined : parseDecimal(opts.tolerance, '--tolerance');
    const threads = parseThreads(opts.threads);
    const a = loadLandscape(dirA);
    const b = loadLandscape(dirB);
    if (!opts.quiet) process.stderr.write(`comparing ${a.landscape.kept.length} kept structures of ${a.path} with ${b.landscape.kept.length} of ${b.path}\n`);
    const d = await diffLandscapes(a.landscape, b.landscape, a.path, b.path, { toleranceAngstrom: tolerance, threads });
    const written = writeDiffOutputs(opts.out, d, opts.title);
    const summary = {
      both: d.counts.both, onlyA: d.counts.onlyA, onlyB: d.counts.onlyB, toleranceAngstrom: d.toleranceAngstrom,
      spearman: d.spearman, spearmanPairs: d.spearmanPairs, files: written, notes: d.notes,
    };
    if (opts.json) process.stdout.write(JSON.stringify(summary, null, 1) + '\n');
    else if (!opts.quiet) {
      const rho = d.spearman === null ? 'not defined (fewer than 2 matched pairs with energies)' : d.spearman.toFixed(4);
      process.stdout.write(
        `in both runs: ${d.counts.both}; only in A: ${d.counts.onlyA}; only in B: ${d.counts.onlyB} (EMD tolerance ${d.toleranceAngstrom} Å)\n` +
        `Spearman's rank correlation of energies over ${d.spearmanPairs} matched pairs: ${rho}\n` +
        d.notes.map((n) => `note: ${n}\n`).join('') +
        `wrote ${written.join(', ')}\n`,
      );
    }
  });
}
