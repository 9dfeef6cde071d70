import type { Command } from 'commander';
import { writeTiles, type TileOptions } from '@lamina/tiles';
import { action, progress } from '../run';

export function register(program: Command): void {
  program
    .command('tiles')
    .description('split a site too large for one machine into independent tile sites (one `lamina process` each) and a tiles.json manifest')
    .argument('<site>', 'site folder (or its site.json); format: docs/site-format.md')
    .requiredOption('--size <m>', 'side of a tile square in metres', Number.parseFloat)
    .option('--overlap <m>', 'margin around each tile in metres, so edge anomalies are seen whole (default: 5)', Number.parseFloat)
    .option('--plan-margin <m>', 'keep plan features this close to a tile in metres (default: overlap + c * record / 2)', Number.parseFloat)
    .option('--absolute', 'refer to the original SEG-Y and CSV files by absolute path (default: off, relative paths)')
    .requiredOption('--out <dir>', 'folder for tiles.json and the tile folders (replaced as a whole)')
    .option('--json', 'print the manifest as JSON (default: text)')
    .addHelpText(
      'after',
      '\nLines wholly inside a tile (plus overlap) are referenced in place; lines that leave it are cut into pieces,\n' +
        'each the same file with a "traces" range in the tile\'s site.json (nothing is copied). Then run, per tile,\n' +
        'from the --out folder:\n' +
        '  lamina process <tile> --out <tile>-out\n' +
        'Merging the tiles\' targets: docs/large-surveys.md.\nExample:\n  pnpm lamina tiles sample-sites/yard/site --size 10 --overlap 2 --out /tmp/yard-tiles',
    )
    .action(
      action(async (site: string, opts: { size: number; overlap?: number; planMargin?: number; absolute?: boolean; out: string; json?: boolean }) => {
        const bar = progress();
        let started = false;
        const onLine = (done: number, total: number): void => {
          if (!started) bar.start('placing lines', total);
          started = true;
          bar.update(done);
        };
        const options: TileOptions = { sizeM: opts.size, onLine };
        if (opts.overlap !== undefined) options.overlapM = opts.overlap;
        if (opts.planMargin !== undefined) options.planMarginM = opts.planMargin;
        if (opts.absolute) options.absolutePaths = true;
        const m = await writeTiles(site, opts.out, options);
        bar.stop();
        if (opts.json) {
          process.stdout.write(JSON.stringify(m, null, 2) + '\n');
          return;
        }
        const pieces = m.tiles.reduce((s, t) => s + t.lines.filter((l) => l.traces !== undefined).length, 0);
        const out: string[] = [`${m.tiles.length} tile${m.tiles.length === 1 ? '' : 's'} of ${m.sizeM} m (overlap ${m.overlapM} m, plan margin ${m.planMarginM.toFixed(1)} m) for ${m.traces} traces; ${pieces} line piece${pieces === 1 ? '' : 's'} (trace ranges of the original files, nothing copied)`, `manifest  ${opts.out}/tiles.json`, 'run each tile (from the --out folder):'];
        for (const t of m.tiles) out.push(`  ${t.command}    # ${t.lines.length} lines, ${t.traces} traces, ${t.planFeatures} plan features`);
        process.stdout.write(out.join('\n') + '\n');
      }),
    );
}
