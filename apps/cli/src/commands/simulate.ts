import type { Command } from 'commander';
import { simulateScenarioFile } from '@lamina/simulate';
import { action, progress } from '../run';

export function register(program: Command): void {
  program
    .command('simulate')
    .description('simulate a GPR survey from an invented scenario.json: writes a site folder (site.json, plan.geojson, lines/*.sgy) and truth.json')
    .argument('<scenario>', 'scenario JSON file (format: packages/simulate/README.md)')
    .option('-o, --out <dir>', 'output site folder (default: site/ beside the scenario); replaced atomically')
    .addHelpText('after', '\nSame scenario and seed give identical bytes. Example:\n  pnpm lamina simulate sample-sites/yard/scenario.json --out sample-sites/yard/site')
    .action(
      action(async (scenario: string, opts: { out?: string }) => {
        const bar = progress();
        bar.start('simulating lines', 1);
        let started = false;
        const t0 = Date.now();
        const res = await simulateScenarioFile(scenario, opts.out, {
          onProgress: (done, total) => {
            if (!started) {
              bar.start('simulating lines', total);
              started = true;
            }
            bar.update(done);
          },
        });
        bar.stop();
        const t = res.truth;
        process.stdout.write(
          `${res.dir}: ${res.lines} lines, ${res.traces} traces of ${res.samples} samples (${(res.bytes / 1e6).toFixed(1)} MB), ` +
            `${t.buried.length} buried targets, ${t.aboveGround.length} above-ground reflectors, soil K ${t.soil.permittivity}, ${((Date.now() - t0) / 1000).toFixed(1)} s\n`,
        );
      }),
    );
}
