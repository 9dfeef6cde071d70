import { CAUTION } from '@lamina/constants';
import type { Command } from 'commander';
import { InputError } from '@lamina/errors';
import { runMerge } from '@lamina/tiles';
import { action } from '../run';

export function register(program: Command): void {
  program
    .command('merge')
    .description('merge the processed tiles of a tiles.json into one output folder of `lamina process` (slices mosaic, anomalies once, review, targets, report)')
    .argument('<tiles>', 'tiles.json (or its folder), written by `lamina tiles`; every tile processed into <tile>-out (`lamina process-tile`)')
    .requiredOption('--out <dir>', 'output folder for the whole survey (replaced as a whole; its review.json is carried over)')
    .option('--tile-anomalies', "keep the tiles' own anomalies (each once, pieces joined at core edges) instead of screening the merged survey again as one run (default: off)")
    .option('--band-memory <MiB>', 'memory for one screened band, MiB, as for `lamina process`: the same value gives the untiled run\'s bands (default: 384)', Number.parseFloat)
    .option('--band-overlap <m>', 'how far a screened band reaches past its core, metres, as for `lamina process` (default: 20 or 2.5 x the deepest air-wave radius)', Number.parseFloat)
    .option('-q, --quiet', 'no step names (default: each step on stderr)')
    .addHelpText(
      'after',
      "\nslices.tif is the mosaic of the tiles' cores (the overlap is margin). The mosaic (and that of the tiles' slices\n" +
        'before background removal) is screened again as one run, in the row bands `lamina process` uses, so anomalies,\n' +
        'classes and targets are those of the untiled run, numbered as it numbers them. With --tile-anomalies (or tiles\n' +
        'processed by `lamina process` rather than `process-tile`) an anomaly belongs to the tile whose core holds its anchor\n' +
        "and is named <tile id>/<id in the tile>; pieces that meet at a core edge and overlap in depth are joined.\n" +
        "The tiles' review decisions are carried over.\n" +
        'The output opens in `lamina view` and re-exports with `lamina export`. Walk-through: docs/large-surveys.md.\n' +
        `${CAUTION}\n` +
        'Example:\n  pnpm lamina merge tiles/tiles.json --out survey-out',
    )
    .action(
      action(async (tiles: string, opts: { out: string; quiet?: boolean; tileAnomalies?: boolean; bandMemory?: number; bandOverlap?: number }) => {
        if (opts.bandMemory !== undefined && !(opts.bandMemory > 0)) throw new InputError('command line', '--band-memory must be a positive number of MiB');
        if (opts.bandOverlap !== undefined && !(opts.bandOverlap >= 0)) throw new InputError('command line', '--band-overlap must be a number of metres >= 0');
        const s = await runMerge(tiles, opts.out, {
          onStep: (step) => opts.quiet || process.stderr.write(`merge: ${step}\n`),
          ...(opts.tileAnomalies ? { rescreen: false } : {}),
          ...(opts.bandMemory !== undefined ? { screenBandBytes: opts.bandMemory * 2 ** 20 } : {}),
          ...(opts.bandOverlap !== undefined ? { bandOverlapM: opts.bandOverlap } : {}),
        });
        const r = s.exported;
        process.stdout.write(
          [
            `${s.tiles} tiles merged: slices.tif ${s.width} x ${s.height} cells, ${s.slices} depth slices`,
            `${s.anomalies} anomalies (${s.rescreened ? 'the merged survey screened as one run' : `${s.joined} joined across tile edges`}); ${s.decisions} review decisions carried over${s.unmatchedDecisions ? ` (${s.unmatchedDecisions} match no anomaly: kept, not applied)` : ''}`,
            `targets: ${r.accepted} accepted, ${r.targets - r.accepted} candidates to review; ${r.aboveGround} anomalies flagged above-ground`,
            `wrote ${opts.out}`,
            CAUTION,
          ].join('\n') + '\n',
        );
      }),
    );
}
