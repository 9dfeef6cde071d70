import type { Command } from 'commander';
import { action } from '../run';

// Placeholder until the scale work lands it.
export function register(program: Command): void {
  program
    .command('tiles')
    .description('(not yet available)')
    .action(
      action(async () => {
        throw new Error('tiles is not implemented yet');
      }),
    );
}
