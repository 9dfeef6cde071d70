import { CAUTION } from '@lamina/constants';
import { stat } from 'node:fs/promises';
import type { Command } from 'commander';
import { InputError } from '@lamina/errors';
import { exportTargets } from '@lamina/targets';
import { action } from '../run';

export function register(program: Command): void {
  program
    .command('export')
    .description('rewrite the target layer of a processed output folder from its review.json: targets.geojson, .gpkg, .csv, .dxf and report.html')
    .argument('<out-dir>', 'output folder of `lamina process` (reads run.json, anomalies.geojson, review.json, velocity.json, slices.json)')
    .option('--no-thumbnails', 'leave the slice previews out of report.html (default: previews in)')
    .addHelpText(
      'after',
      '\nRun it after reviewing anomalies in the viewer or editing review.json. Targets are the anomalies that\n' +
        'are subsurface (or relabelled subsurface) and not rejected; each file is replaced atomically.\n' +
        `${CAUTION}\n` +
        'Example:\n  pnpm lamina export out/yard',
    )
    .action(
      action(async (outDir: string, opts: { thumbnails: boolean }) => {
        const s = await stat(outDir).catch(() => undefined);
        if (!s?.isDirectory()) throw new InputError(outDir, 'expected the output folder of `lamina process`, found no folder');
        const r = await exportTargets(outDir, { ...(opts.thumbnails ? {} : { thumbnailSize: 0 }) });
        const lines = [
          `${r.targets} targets: ${r.accepted} accepted, ${r.targets - r.accepted} candidates to review (${r.aboveGround} anomalies flagged above-ground and ${r.rejected} rejected left out)`,
          ...(r.unmatchedDecisions ? [`note: ${r.unmatchedDecisions} review decision(s) match no anomaly id in anomalies.geojson and were not applied`] : []),
          `wrote ${outDir}: ${r.files.join(', ')}`,
          `caution: ${CAUTION}`,
        ];
        process.stdout.write(lines.join('\n') + '\n');
      }),
    );
}
