// `polysift demo [--out DIR]`: invent a search on an invented molecule, sift it, write report.html.
import type { Command } from 'commander';
import { join } from 'node:path';
import { DEMO_OUT, runDemo } from '../demo/run-demo.js';
import { makeProgress } from '../progress.js';
import { parseThreads } from './options.js';

export function registerDemo(program: Command): void {
  program
    .command('demo')
    .description('Invent a structure search on an invented molecule, sift it and write its report (nothing real is used).')
    .option('--out <dir>', 'output folder', DEMO_OUT)
    .option('--planted', 'plant known distinct packings and re-write each many times, instead of relaxing random starts')
    .option('--threads <n>', 'worker threads (default: available cores)')
    .option('--quiet', 'print nothing but errors (no progress, no summary)')
    .action(async (o: { out: string; threads?: string; quiet?: boolean; planted?: boolean }) => {
      const threads = parseThreads(o.threads);
      const kind = o.planted ? 'planted' : 'search';
      const r = await runDemo({ out: o.out, threads, kind, progress: makeProgress({ quiet: o.quiet }) });
      const lines =
        r.kind === 'planted'
          ? [
              `planted ${r.planted} distinct packings, found ${r.structures} times in all; sift kept ${r.kept} ` +
                `(grouping against the planted truth: adjusted Rand index ${r.ariSift!.toFixed(3)}).`,
              `energy/density windows (0.5 kJ/mol, 0.02 g/cm3) would give ${r.binGroups} groups (adjusted Rand index ${r.ariBins!.toFixed(3)}).`,
            ]
          : [
              `relaxed ${r.starts} random starts: ${r.structures} minima written, ${r.rejectedStarts} starts rejected as unphysical ` +
                `(demo-rejected-starts.csv).`,
              ...r.summary,
            ];
      if (!o.quiet) process.stdout.write(`${lines.join('\n')}\nreport: ${join(o.out, 'report.html')}\n`);
    });
}
