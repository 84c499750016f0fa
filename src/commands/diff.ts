// Placeholder: the `diff` command is being built (see the open issues); it says so instead of pretending.
import type { Command } from 'commander';

export function registerDiff(program: Command): void {
  program
    .command('diff')
    .description('(not built yet)')
    .allowUnknownOption(true)
    .action(() => {
      throw new Error('the diff command is not built yet');
    });
}
