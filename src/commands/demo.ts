// `polysift demo [--out DIR]`: invent a search on an invented molecule, sift it, write report.html.
import type { Command } from 'commander';
import { join } from 'node:path';
import { DEMO_OUT, runDemo } from '../demo/run-demo.js';
import { makeProgress } from '../progress.js';

export function registerDemo(program: Command): void {
  program
    .command('demo')
    .description('Invent a structure search on an invented molecule, sift it and write its report (nothing real is used).')
    .option('--out <dir>', 'output folder', DEMO_OUT)
    .option('--threads <n>', 'worker threads (default: available cores)')
    .option('--quiet', 'no progress on stderr')
    .action(async (o: { out: string; threads?: string; quiet?: boolean }) => {
      const threads = o.threads === undefined ? undefined : Number(o.threads);
      if (threads !== undefined && !(Number.isInteger(threads) && threads >= 1)) throw new Error(`--threads must be a whole number >= 1, not '${o.threads}'`);
      const r = await runDemo({ out: o.out, threads, progress: makeProgress({ quiet: o.quiet }) });
      process.stdout.write(
        `planted ${r.planted} distinct packings, found ${r.structures} times in all; sift kept ${r.kept} ` +
          `(grouping against the planted truth: adjusted Rand index ${r.ariSift.toFixed(3)}).\n` +
          `energy/density windows (0.5 kJ/mol, 0.02 g/cm3) would give ${r.binGroups} groups (adjusted Rand index ${r.ariBins.toFixed(3)}).\n` +
          `report: ${join(o.out, 'report.html')}\n`,
      );
    });
}
