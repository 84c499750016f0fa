#!/usr/bin/env node
// The command line: a thin shell over the library. Each command lives in src/commands/<name>.ts.
import { Command, CommanderError } from 'commander';
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

async function main(): Promise<void> {
  const program = buildProgram();
  program.exitOverride();
  try {
    await program.parseAsync(process.argv);
  } catch (err) {
    if (err instanceof CommanderError) {
      process.exitCode = err.exitCode;
      return;
    }
    // One clear line for the user; the stack only when asked for.
    const message = err instanceof Error ? err.message : String(err);
    process.stderr.write(`polysift: ${message}\n`);
    if (process.env.POLYSIFT_DEBUG && err instanceof Error && err.stack) process.stderr.write(`${err.stack}\n`);
    process.exitCode = 1;
  }
}

void main();
