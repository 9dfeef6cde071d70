#!/usr/bin/env node
import { Command } from 'commander';
import { register as info } from './commands/info';
import { register as simulate } from './commands/simulate';
import { register as velocity } from './commands/velocity';
import { register as processCmd } from './commands/process';
import { register as score } from './commands/score';
import { register as view } from './commands/view';
import { register as exportCmd } from './commands/export';
import { register as tiles } from './commands/tiles';

const program = new Command('lamina')
  .description('Lamina: GPR survey lines to depth slices, air-wave screening and a clean target layer')
  .showHelpAfterError()
  .configureOutput({ outputError: (s, write) => write(s) });

for (const add of [info, simulate, velocity, processCmd, score, exportCmd, view, tiles]) add(program);

await program.parseAsync(process.argv);
