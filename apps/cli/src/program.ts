import { Command } from 'commander';
import { register as info } from './commands/info';
import { register as simulate } from './commands/simulate';
import { register as velocity } from './commands/velocity';
import { register as processCmd } from './commands/process';
import { register as recipe } from './commands/recipe';
import { register as score } from './commands/score';
import { register as view } from './commands/view';
import { register as exportCmd } from './commands/export';
import { register as tiles } from './commands/tiles';
import { register as processTile } from './commands/process-tile';
import { register as merge } from './commands/merge';

/** The `lamina` command and its subcommands (main.ts parses the command line with it; tests read its help). */
export function makeProgram(): Command {
  const program = new Command('lamina')
    .description('Lamina: GPR survey lines to depth slices, air-wave screening and a clean target layer')
    .showHelpAfterError()
    .configureOutput({ outputError: (s, write) => write(s) })
    .addHelpText('after', '\nStart with a site folder (site.json, plan.geojson, lines/*.sgy; docs/site-format.md):\n  pnpm lamina info <site>                 check it\n  pnpm lamina process <site> --out <out>  slices, anomalies, targets, report.html\n  pnpm lamina view <out>                  review on the map, then `lamina export <out>`\nRadar finds are not a locate: call the one-call centre before digging and verify by potholing.');
  for (const add of [info, simulate, recipe, processCmd, velocity, exportCmd, view, score, tiles, processTile, merge]) add(program);
  return program;
}
