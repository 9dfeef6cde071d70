import type { Command } from 'commander';
import { InputError } from '@lamina/errors';
import { defaultRecipe } from '@lamina/processing';
import { loadSite } from '@lamina/site';
import { action } from '../run';

export function register(program: Command): void {
  program
    .command('recipe')
    .description('print the default processing recipe (JSON) for an antenna frequency, or for the antenna of a site')
    .argument('[site]', "site folder (or its site.json): its antenna frequency, and its own recipe when it has one")
    .option('-f, --frequency <MHz>', 'antenna centre frequency in MHz (default: the site\'s antenna; required without a site)', Number.parseFloat)
    .addHelpText(
      'after',
      '\nSave the output, edit it and pass it to `lamina process --recipe <file>` to change a step.\n' +
        'Steps: timeZero, dewow, bandpass, gain, backgroundRemoval, airEvents, migration (packages/processing/README.md).\n' +
        'Examples:\n  pnpm lamina recipe --frequency 400 > recipe.json\n  pnpm lamina recipe sample-sites/yard/site',
    )
    .action(
      action(async (site: string | undefined, opts: { frequency?: number }) => {
        if (opts.frequency !== undefined && !(opts.frequency > 0)) throw new InputError('command line', '--frequency must be a positive number of MHz');
        if (site === undefined) {
          if (opts.frequency === undefined) throw new InputError('command line', 'give a site folder or --frequency <MHz>');
          process.stdout.write(JSON.stringify(defaultRecipe(opts.frequency), null, 2) + '\n');
          return;
        }
        const s = await loadSite(site);
        const f = opts.frequency ?? s.antenna.frequencyMHz;
        const own = opts.frequency === undefined ? s.recipe : undefined;
        process.stdout.write(JSON.stringify(own ?? defaultRecipe(f), null, 2) + '\n');
      }),
    );
}
