// `--help` of every command explains itself (issue 14, part 5): every option states its default (or is
// required), every command has an example, and `process` keeps tuning options under their own heading.
import { describe, expect, it } from 'vitest';
import { makeProgram } from '../src/program';

const program = makeProgram();

describe('lamina --help', () => {
  for (const cmd of program.commands) {
    it(`${cmd.name()}: every option states its default, and there is an example`, () => {
      // what --help prints, the addHelpText('after') part included
      let help = '';
      cmd.configureOutput({ writeOut: (s) => (help += s), writeErr: () => {} });
      cmd.outputHelp();
      const flat = help.replace(/\s+/g, ' ');
      for (const o of cmd.options) {
        if (o.long === '--help') continue;
        if (o.mandatory) continue; // required: no default to state
        const start = flat.indexOf(o.flags);
        expect(start, `${cmd.name()} ${o.flags} in the help`).toBeGreaterThanOrEqual(0);
        // the option's entry runs up to the next option's flags (or the end)
        const rest = flat.slice(start + o.flags.length);
        const next = rest.search(/ (-[a-zA-Z], )?--[a-z]/);
        const entry = next < 0 ? rest : rest.slice(0, next);
        expect(entry, `${cmd.name()} ${o.flags}: ${entry}`).toMatch(/\(default: [^)]+\)/);
      }
      expect(help, `${cmd.name()} has an example`).toMatch(/Examples?:\n\s+pnpm lamina /);
    });
  }

  it('process: everyday options first, tuning options under "Advanced options"', () => {
    const help = program.commands.find((c) => c.name() === 'process')!.helpInformation();
    const advanced = help.indexOf('Advanced options');
    expect(advanced).toBeGreaterThan(0);
    for (const o of ['--out', '--recipe', '--slice-thickness', '--cell-size', '--quiet']) expect(help.indexOf(o)).toBeLessThan(advanced);
    for (const o of ['--threads', '--band-memory', '--band-overlap', '--timings']) expect(help.indexOf(o)).toBeGreaterThan(advanced);
  });
});
