import { CAUTION } from '@lamina/constants';
import type { Command } from 'commander';
import { readFile } from 'node:fs/promises';
import { InputError } from '@lamina/errors';
import { formatTimings, runProcess, type ProcessOptions } from '@lamina/pipeline';
import { action, progress } from '../run';
import { summaryLines } from '../summary';

export function register(program: Command): void {
  program
    .command('process')
    .description('process a site end to end: lines, velocity, depth slices, air-wave screening, targets')
    .argument('<site>', 'site folder (with site.json) or a site.json file')
    .requiredOption('-o, --out <dir>', 'output folder (written atomically; review.json in it is kept)')
    .option('--recipe <file>', "processing recipe JSON, overriding site.json (default: site.json's recipe, else the default for the antenna: see `lamina recipe`)")
    .option('--slice-thickness <m>', 'slice thickness in metres (default: half a wavelength in the soil at the antenna frequency)', Number.parseFloat)
    .option('--max-depth <m>', 'deepest slice bottom in metres (default: as deep as the record reaches)', Number.parseFloat)
    .option('--cell-size <m>', 'grid cell size in metres (default: a quarter of the line spacing)', Number.parseFloat)
    .option('--velocity <file>', "velocity.json of the whole survey (`lamina velocity`): its model gives the depths instead of this run's own fit (default: this run's fit)")
    .option('--json', 'print the summary as JSON (default: text)')
    .option('-q, --quiet', 'no progress bars (default: bars on stderr when it is a terminal)')
    .optionsGroup('Advanced options (tuning; the defaults suit most sites):')
    .option('--threads <n>', 'worker threads, 0 = none (default: LAMINA_THREADS or the number of cores)', (v) => Number.parseInt(v, 10))
    .option('--slice-overlap <fraction>', 'overlap of neighbouring slices, 0..0.9 (default: 0)', Number.parseFloat)
    .option('--level', 'level line-to-line gain differences before gridding (default: off)')
    .option('--band-memory <MiB>', 'memory for one band of the grid while it is screened; a larger grid is done in overlapping row bands (default: 384)', Number.parseFloat)
    .option('--band-overlap <m>', 'how far a screening band reaches past its core, metres (default: 20 or 2.5 x the deepest air-wave radius)', Number.parseFloat)
    .option('--remove-air-events', 'take air-wave (above-ground) events out of the data before slicing: adds the airEvents step (f-k at the speed of light, the diffractions of the plan\'s above-ground objects and of air-velocity hyperbolas masked, modelled back and subtracted) before migration (default: off; packages/processing/README.md says why)')
    .option('--keep-air-events', 'drop the airEvents step of a recipe file that has one (default: off)')
    .option('--timings', 'print the time of each stage (seconds and share of the run) on stderr (default: off)')
    .addHelpText('after', '\nWrites run.json, velocity.json, slices.tif and slices.json, anomalies.geojson, targets.* and report.html.\nRadar finds are not a locate: call the one-call centre before digging and verify by potholing.\nExample:\n  pnpm lamina process sample-sites/yard/site --out out/yard')
    .action(
      action(async (siteDir: string, opts: { out: string; recipe?: string; threads?: number; sliceThickness?: number; sliceOverlap?: number; maxDepth?: number; cellSize?: number; level?: boolean; bandMemory?: number; bandOverlap?: number; json?: boolean; quiet?: boolean; timings?: boolean; velocity?: string; keepAirEvents?: boolean; removeAirEvents?: boolean }) => {
        const options: ProcessOptions = {};
        if (opts.recipe) {
          let text: string;
          try {
            text = await readFile(opts.recipe, 'utf8');
          } catch {
            throw new InputError(opts.recipe, 'cannot read the recipe file');
          }
          try {
            options.recipe = JSON.parse(text);
          } catch (e) {
            throw new InputError(opts.recipe, `not valid JSON (${(e as Error).message})`);
          }
          options.recipeFile = opts.recipe;
        }
        for (const [k, v] of Object.entries({ threads: opts.threads, sliceThickness: opts.sliceThickness, sliceOverlap: opts.sliceOverlap, maxDepth: opts.maxDepth, cellSize: opts.cellSize, bandMemory: opts.bandMemory, bandOverlap: opts.bandOverlap })) {
          if (v !== undefined && !Number.isFinite(v)) throw new InputError('command line', `--${k.replace(/[A-Z]/g, (c) => '-' + c.toLowerCase())} must be a number`);
        }
        if (opts.threads !== undefined) options.threads = opts.threads;
        if (opts.sliceThickness !== undefined) options.sliceThicknessM = opts.sliceThickness;
        if (opts.sliceOverlap !== undefined) options.sliceOverlap = opts.sliceOverlap;
        if (opts.maxDepth !== undefined) options.maxDepthM = opts.maxDepth;
        if (opts.cellSize !== undefined) options.cellSizeM = opts.cellSize;
        if (opts.level) options.level = true;
        if (opts.velocity) options.velocityFile = opts.velocity;
        if (opts.keepAirEvents) options.keepAirEvents = true;
        if (opts.removeAirEvents) options.removeAirEvents = true;
        if (opts.bandMemory !== undefined) {
          if (!(opts.bandMemory > 0)) throw new InputError('command line', '--band-memory must be a positive number of MiB');
          options.screenBandBytes = opts.bandMemory * 2 ** 20;
        }
        if (opts.bandOverlap !== undefined) {
          if (!(opts.bandOverlap >= 0)) throw new InputError('command line', '--band-overlap must be zero or more metres');
          options.bandOverlapM = opts.bandOverlap;
        }
        const bar = progress({ quiet: opts.quiet === true || opts.json === true });
        let current = '';
        // LAMINA_STAGE_RSS=1: peak resident memory of the process (worker threads included) per stage,
        // sampled every 100 ms and printed to stderr at the end (for benchmarks).
        const peaks = new Map<string, number>();
        let band = '';
        const sample = () => {
          const k = (current || 'start') + band;
          peaks.set(k, Math.max(peaks.get(k) ?? 0, process.memoryUsage.rss()));
        };
        const sampler = process.env.LAMINA_STAGE_RSS === '1' ? setInterval(sample, 100) : undefined;
        options.onProgress = (stage, done, total) => {
          if (stage !== current) {
            if (sampler) sample();
            bar.start(stage, total);
            current = stage;
            band = '';
          }
          // screening reports one step per row band: each band's peak of its own
          if (sampler && stage === 'air-wave screening' && done < total) {
            sample();
            band = ` ${done + 1}/${total}`;
          }
          bar.update(done);
        };
        let summary: Awaited<ReturnType<typeof runProcess>>;
        try {
          summary = await runProcess(siteDir, opts.out, options);
        } finally {
          if (sampler) {
            clearInterval(sampler);
            sample();
            process.stderr.write(`stage peak RSS MB: ${JSON.stringify(Object.fromEntries([...peaks].map(([k, v]) => [k, Math.round(v / 2 ** 20)])))}\n`);
          }
        }
        bar.stop();
        if (opts.timings) process.stderr.write(`${formatTimings(summary.timings)}\n`);
        if (opts.json) {
          process.stdout.write(JSON.stringify(summary, null, 2) + '\n');
          return;
        }
        process.stdout.write(
          [
            ...summaryLines(summary),
            `wrote ${summary.outDir}: ${summary.files.join(', ')}`,
            CAUTION,
          ].join('\n') + '\n',
        );
      }),
    );
}
