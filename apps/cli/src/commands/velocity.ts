import type { Command } from 'commander';
import { action } from '../run';

// Placeholder until the issue that owns this command lands it.
export function register(program: Command): void {
  program
    .command('velocity')
    .description('(not yet available)')
    .action(
      action(async () => {
        throw new Error('velocity is not implemented yet');
      }),
    );
}
