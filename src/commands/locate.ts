// Placeholder: the `locate` command is being built (see the open issues); it says so instead of pretending.
import type { Command } from 'commander';

export function registerLocate(program: Command): void {
  program
    .command('locate')
    .description('(not built yet)')
    .allowUnknownOption(true)
    .action(() => {
      throw new Error('the locate command is not built yet');
    });
}
