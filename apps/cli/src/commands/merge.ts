import { CAUTION } from '@lamina/constants';
import type { Command } from 'commander';
import { runMerge } from '@lamina/tiles';
import { action } from '../run';

export function register(program: Command): void {
  program
    .command('merge')
    .description('merge the processed tiles of a tiles.json into one output folder of `lamina process` (slices mosaic, anomalies once, review, targets, report)')
    .argument('<tiles>', 'tiles.json (or its folder), written by `lamina tiles`; every tile processed into <tile>-out (`lamina process-tile`)')
    .requiredOption('--out <dir>', 'output folder for the whole survey (replaced as a whole; its review.json is carried over)')
    .option('-q, --quiet', 'no step names (default: each step on stderr)')
    .addHelpText(
      'after',
      "\nslices.tif is the mosaic of the tiles' cores (the overlap is margin); an anomaly belongs to the tile whose core\n" +
        'holds its anchor and is named <tile id>/<id in the tile>; pieces of one object that meet at a core edge and\n' +
        "overlap in depth are joined under the first piece's id. The tiles' review decisions are carried over.\n" +
        'The output opens in `lamina view` and re-exports with `lamina export`. Walk-through: docs/large-surveys.md.\n' +
        `${CAUTION}\n` +
        'Example:\n  pnpm lamina merge tiles/tiles.json --out survey-out',
    )
    .action(
      action(async (tiles: string, opts: { out: string; quiet?: boolean }) => {
        const s = await runMerge(tiles, opts.out, { onStep: (step) => opts.quiet || process.stderr.write(`merge: ${step}\n`) });
        const r = s.exported;
        process.stdout.write(
          [
            `${s.tiles} tiles merged: slices.tif ${s.width} x ${s.height} cells, ${s.slices} depth slices`,
            `${s.anomalies} anomalies (${s.joined} joined across tile edges); ${s.decisions} review decisions carried over${s.unmatchedDecisions ? ` (${s.unmatchedDecisions} match no anomaly: kept, not applied)` : ''}`,
            `targets: ${r.accepted} accepted, ${r.targets - r.accepted} candidates to review; ${r.aboveGround} anomalies flagged above-ground`,
            `wrote ${opts.out}`,
            CAUTION,
          ].join('\n') + '\n',
        );
      }),
    );
}
