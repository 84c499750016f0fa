// Placeholder: the `distance` command is being built (see the open issues); it says so instead of pretending.
import type { Command } from 'commander';

export function registerDistance(program: Command): void {
  program
    .command('distance')
    .description('(not built yet)')
    .allowUnknownOption(true)
    .action(() => {
      throw new Error('the distance command is not built yet');
    });
}
