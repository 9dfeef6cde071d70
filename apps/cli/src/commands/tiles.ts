import { writeFile } from 'node:fs/promises';
import { join } from 'node:path';
import type { Command } from 'commander';
import { InputError } from '@lamina/errors';
import { readSurveyVelocity } from '@lamina/pipeline';
import { ENGINES, JOB_FILES, jobFile, writeTiles, type Engine, type TileOptions } from '@lamina/tiles';
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
    .option('--velocity <file>', "the survey's velocity.json (`lamina velocity`): copied beside tiles.json and used by every tile (default: each tile fits its own)")
    .option('--emit <engines>', 'also write job files for batch engines, comma-separated: slurm (run-slurm.sbatch), k8s (job-k8s.yaml), parallel (run-parallel.sh) (default: none)')
    .option('--threads <n>', 'worker threads per tile in the job files (default: 2)', (v) => Number.parseInt(v, 10))
    .option('--line-context <m>', 'metres of line processed with a piece beyond each end (default: the whole line, so pieces equal the untiled run, within the line memory)', Number.parseFloat)
    .option('--line-memory <MiB>', "memory for one line's processing per worker thread; a longer line is processed in a stretch of that size around each piece (default: 384 over the threads of the job files)", Number.parseFloat)
    .addHelpText(
      'after',
      '\nLines wholly inside a tile (plus overlap) are referenced in place; lines that leave it are cut into pieces,\n' +
        'each the same file with a "traces" range in the tile\'s site.json (nothing is copied), processed with its\n' +
        'whole line ("context") and kept alone. Then run, per tile,\n' +
        'from the --out folder:\n' +
        '  lamina process <tile> --out <tile>-out\n' +
        'Merging the tiles\' targets: docs/large-surveys.md.\nExample:\n  pnpm lamina tiles sample-sites/yard/site --size 10 --overlap 2 --out /tmp/yard-tiles',
    )
    .action(
      action(async (site: string, opts: { size: number; overlap?: number; planMargin?: number; absolute?: boolean; out: string; json?: boolean; velocity?: string; emit?: string; threads?: number; lineContext?: number; lineMemory?: number }) => {
        const engines = (opts.emit ?? '').split(',').map((e) => e.trim()).filter(Boolean);
        for (const e of engines) if (!(ENGINES as readonly string[]).includes(e)) throw new InputError('command line', `--emit: expected ${ENGINES.join(', ')}, found ${JSON.stringify(e)}`);
        if (opts.threads !== undefined && !(Number.isInteger(opts.threads) && opts.threads >= 1)) throw new InputError('command line', '--threads must be a whole number >= 1');
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
        if (opts.lineContext !== undefined) options.lineContextM = opts.lineContext;
        // a tile's line passes then need no more memory than its bands (the job files' --mem holds both)
        options.lineMemoryMiB = opts.lineMemory ?? 384 / (opts.threads ?? 2);
        if (opts.velocity) {
          const v = await readSurveyVelocity(opts.velocity);
          options.velocityFile = v.file;
          if (v.windows) options.windowsFile = v.windows.file;
        }
        const m = await writeTiles(site, opts.out, options);
        // the job files start Lamina as this process was started (the built CLI by its path)
        const lamina = [process.execPath, process.argv[1]!].map((a) => (/^[\w@%+=:,./-]+$/.test(a) ? a : `'${a.replace(/'/g, `'\\''`)}'`)).join(' ');
        for (const e of engines as Engine[]) {
          const file = join(opts.out, JOB_FILES[e]);
          await writeFile(file, jobFile(e, m, { lamina, ...(opts.threads ? { threads: opts.threads } : {}) }), { mode: e === 'k8s' ? 0o644 : 0o755 });
        }
        bar.stop();
        if (opts.json) {
          process.stdout.write(JSON.stringify(m, null, 2) + '\n');
          return;
        }
        const pieces = m.tiles.reduce((s, t) => s + t.lines.filter((l) => l.traces !== undefined).length, 0);
        const out: string[] = [`${m.tiles.length} tile${m.tiles.length === 1 ? '' : 's'} of ${m.sizeM} m (overlap ${m.overlapM} m, plan margin ${m.planMarginM.toFixed(1)} m) for ${m.traces} traces; ${pieces} line piece${pieces === 1 ? '' : 's'} (trace ranges of the original files, nothing copied), each processed with ${m.lineContextM !== undefined ? `${m.lineContextM} m of its line on each side` : `its whole line (at most ${m.lineMemoryMiB?.toFixed(0)} MiB of line work, else that much around it)`}`, `manifest  ${opts.out}/tiles.json`, 'run each tile (from the --out folder):'];
        for (const t of m.tiles) out.push(`  ${t.command}    # ${t.lines.length} lines, ${t.traces} traces, ${t.planFeatures} plan features`);
        for (const e of engines as Engine[]) out.push(`job file  ${join(opts.out, JOB_FILES[e])}`);
        process.stdout.write(out.join('\n') + '\n');
      }),
    );
}
