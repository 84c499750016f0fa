// Placeholder: the `demo` command is being built (see the open issues); it says so instead of pretending.
import type { Command } from 'commander';

export function registerDemo(program: Command): void {
  program
    .command('demo')
    .description('(not built yet)')
    .allowUnknownOption(true)
    .action(() => {
      throw new Error('the demo command is not built yet');
    });
}
