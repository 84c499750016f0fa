// Placeholder: the `inspect` command is being built (see the open issues); it says so instead of pretending.
import type { Command } from 'commander';

export function registerInspect(program: Command): void {
  program
    .command('inspect')
    .description('(not built yet)')
    .allowUnknownOption(true)
    .action(() => {
      throw new Error('the inspect command is not built yet');
    });
}
