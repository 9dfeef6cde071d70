import { readFile, stat } from 'node:fs/promises';
import { join } from 'node:path';
import type { Command } from 'commander';
import { InputError } from '@lamina/errors';
import { runProcess, type ProcessOptions } from '@lamina/pipeline';
import { ARRAY_INDEX_VARIABLES, arrayIndexFromEnv, manifestDir, readTilesManifest } from '@lamina/tiles';
import { action, progress } from '../run';
import { summaryLines } from '../summary';

/** Whether `outDir` already holds a finished run of the tile site `siteName` (run.json is written last, by rename). */
async function finished(outDir: string, siteName: string): Promise<boolean> {
  try {
    const run = JSON.parse(await readFile(join(outDir, 'run.json'), 'utf8')) as { site?: { name?: unknown } };
    return run.site?.name === siteName;
  } catch {
    return false;
  }
}

export function register(program: Command): void {
  program
    .command('process-tile')
    .description('process one tile of a tiles.json manifest (one task of a batch job array): `lamina process` of the tile into <tile>-out')
    .argument('<tiles>', 'tiles.json (or its folder), written by `lamina tiles`')
    .option('--index <n>', `the tile's index in tiles.json, from 0 (default: the engine's array index: ${ARRAY_INDEX_VARIABLES.join(', ')})`, (v) => Number.parseInt(v, 10))
    .option('--force', 'process the tile even if its output is already finished (default: a finished tile is skipped)')
    .option('-q, --quiet', 'no progress bars (default: bars on stderr when it is a terminal)')
    .optionsGroup('Advanced options (tuning; the defaults suit most sites):')
    .option('--threads <n>', 'worker threads (default: LAMINA_THREADS or the number of cores)', (v) => Number.parseInt(v, 10))
    .option('--band-memory <MiB>', 'memory for one band of the grid while it is screened (default: 384)', Number.parseFloat)
    .addHelpText(
      'after',
      "\nThe tile's output goes to the folder beside it that tiles.json names (<tile>-out); the survey's\n" +
        'velocity.json is used when tiles.json has one. The job files of `lamina tiles --emit` run this command.\n' +
        'Example:\n  pnpm lamina process-tile tiles/tiles.json --index 0',
    )
    .action(
      action(async (tiles: string, opts: { index?: number; force?: boolean; quiet?: boolean; threads?: number; bandMemory?: number }) => {
        const manifest = await readTilesManifest(tiles);
        const dir = manifestDir(tiles);
        let index = opts.index;
        let from = '--index';
        if (index === undefined) {
          const env = arrayIndexFromEnv();
          if (!env) throw new InputError('command line', `give --index or run as an array task (${ARRAY_INDEX_VARIABLES.join(', ')} is not set)`);
          ({ index } = env);
          from = env.variable;
        }
        if (!(Number.isInteger(index) && index >= 0 && index < manifest.tiles.length)) {
          throw new InputError('command line', `${from} ${index} is not a tile of ${join(dir, 'tiles.json')} (0 to ${manifest.tiles.length - 1})`);
        }
        const tile = manifest.tiles[index]!;
        const siteDir = join(dir, tile.dir);
        const outDir = join(dir, `${tile.dir}-out`);
        const siteName = `${manifest.site.name}-${tile.id}`;
        if (!opts.force && (await finished(outDir, siteName))) {
          process.stdout.write(`tile ${index} (${tile.id}) is finished in ${outDir}: skipped (--force to process it again)\n`);
          return;
        }
        // the merge screens the whole survey again from the tiles' stacks and line positions
        const options: ProcessOptions = { keepScreenInputs: true };
        if (manifest.velocity) {
          const file = join(dir, manifest.velocity);
          if (!(await stat(file).catch(() => undefined))) throw new InputError(file, "expected the survey's velocity.json that tiles.json names, found no file");
          options.velocityFile = file;
        }
        if (opts.threads !== undefined) options.threads = opts.threads;
        if (opts.bandMemory !== undefined) options.screenBandBytes = opts.bandMemory * 2 ** 20;
        const bar = progress({ quiet: opts.quiet === true });
        let current = '';
        options.onProgress = (stage, done, total) => {
          if (stage !== current) bar.start(stage, total);
          current = stage;
          bar.update(done);
        };
        const summary = await runProcess(siteDir, outDir, options);
        bar.stop();
        process.stdout.write([`tile ${index} (${tile.id}) of ${manifest.tiles.length}`, ...summaryLines(summary), `wrote ${outDir}`].join('\n') + '\n');
      }),
    );
}
