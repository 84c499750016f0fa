// Placeholder: the `sift` command is being built (see the open issues); it says so instead of pretending.
import type { Command } from 'commander';

export function registerSift(program: Command): void {
  program
    .command('sift')
    .description('(not built yet)')
    .allowUnknownOption(true)
    .action(() => {
      throw new Error('the sift command is not built yet');
    });
}
