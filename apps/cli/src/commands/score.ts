import { join } from 'node:path';
import type { Command } from 'commander';
import { scoreFolder } from '@lamina/scoring';
import { action } from '../run';

const pct = (v: number) => `${(100 * v).toFixed(1)} %`;

export function register(program: Command): void {
  program
    .command('score')
    .description('score a processed output folder against a simulator truth.json: recall of buried utilities, precision/recall of above-ground flags')
    .argument('<out-dir>', 'output folder of `lamina process` (reads targets.geojson and anomalies.geojson, WGS84)')
    .argument('<truth>', 'truth.json written by `lamina simulate` (site CRS)')
    .option('--json', 'print the full report as JSON')
    .option('--plan-tolerance <m>', 'plan distance within which a target covers a utility, m (plus its radius)', '0.5')
    .option('--depth-tolerance <m>', 'depth tolerance, m (at least; 25 % of depth when larger)', '0.25')
    .action(
      action(async (outDir: string, truthFile: string, opts: { json?: boolean; planTolerance: string; depthTolerance: string }) => {
        const { report, targetsFile } = scoreFolder(outDir, truthFile, { planToleranceM: Number(opts.planTolerance), depthToleranceM: Number(opts.depthTolerance) });
        const tFile = join(outDir, 'targets.geojson');
        if (opts.json) {
          process.stdout.write(JSON.stringify({ ...report, targetsFile }, null, 2) + '\n');
          return;
        }
        const out: string[] = [];
        if (!targetsFile) out.push(`note: ${tFile} not found; buried recall counts no targets`);
        out.push('buried utilities (fraction of the surveyed length covered by targets.geojson):');
        for (const b of report.buried)
          out.push(`  ${b.id.padEnd(16)} ${b.kind.padEnd(8)} ${b.lengthM ? `${b.lengthM.toFixed(1)} m (${b.surveyedLengthM.toFixed(1)} m surveyed)` : 'compact'}  ${pct(b.recall)}${b.lengthM ? ` (full length ${pct(b.recallFullLength)})` : ''}  ${b.targets.join(' ')}`);
        const br = report.buriedRecall;
        out.push(`  recall over the surveyed length: linear ${pct(br.linear)} (lowest ${pct(br.minimum)}), compact ${pct(br.compact)}; over the full length: linear ${pct(br.linearFullLength)} (lowest ${pct(br.minimumFullLength)})`);
        const ag = report.aboveGround;
        out.push(`above-ground flags: precision ${pct(ag.precision)}, recall ${pct(ag.recall)} (TP ${ag.truePositive}, FP ${ag.falsePositive}, FN ${ag.falseNegative}, ambiguous ${ag.ambiguous})`);
        out.push(`targets that are air-wave reflections: ${pct(report.targetAirFraction)} of ${report.targets.length}`);
        for (const d of report.definitions) out.push(`  (${d})`);
        process.stdout.write(out.join('\n') + '\n');
      }),
    );
}
