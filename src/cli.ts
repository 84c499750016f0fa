#!/usr/bin/env node
// The command line: a thin shell over the library. Each command lives in src/commands/<name>.ts (src/program.ts
// registers them).
import { CommanderError } from 'commander';
import { buildProgram } from './program.js';

export { buildProgram };

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
