// The command set: one command per file in src/commands/, registered on one commander program. Kept apart from
// src/cli.ts (which runs it) so tests can read the commands and their options without running anything.
import { Command } from 'commander';
import { VERSION } from './version.js';
import { registerInspect } from './commands/inspect.js';
import { registerDistance } from './commands/distance.js';
import { registerSift } from './commands/sift.js';
import { registerDemo } from './commands/demo.js';
import { registerDiff } from './commands/diff.js';
import { registerLocate } from './commands/locate.js';
import { registerWorker } from './commands/worker.js';

export function buildProgram(): Command {
  const program = new Command();
  program
    .name('polysift')
    .description('Sift crystal structure prediction landscapes with isometry invariants (PDD, AMD) and the EMD metric.')
    .version(VERSION);
  registerSift(program);
  registerDiff(program);
  registerLocate(program);
  registerWorker(program);
  registerDemo(program);
  registerInspect(program);
  registerDistance(program);
  return program;
}
