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
    .option('--json', 'print the full report as JSON (default: text)')
    .option('--plan-tolerance <m>', 'plan distance within which a target covers a utility, m (plus its radius)', '0.5')
    .option('--depth-tolerance <m>', 'depth tolerance, m (at least; 25 % of depth when larger)', '0.25')
    .addHelpText('after', '\nThe definitions are frozen (packages/scoring/README.md).\nExample:\n  pnpm lamina score out/yard sample-sites/yard/site/truth.json --json')
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
          out.push(`  ${b.id.padEnd(16)} ${b.kind.padEnd(8)} ${b.lengthM ? `${b.lengthM.toFixed(1)} m (${b.surveyedLengthM.toFixed(1)} m surveyed)` : 'compact'}  ${pct(b.recall)}${b.lengthM ? ` (full length ${pct(b.recallFullLength)})` : ''}${b.recorded ? '' : ' (recorded on no trace)'}  ${b.targets.join(' ')}`);
        const br = report.buriedRecall;
        out.push(`  recall over the surveyed length: linear ${pct(br.linear)} (lowest ${pct(br.minimum)}), compact ${pct(br.compact)}; over the full length: linear ${pct(br.linearFullLength)} (lowest ${pct(br.minimumFullLength)})`);
        if (br.unrecorded > 0) out.push(`  ${br.unrecorded} buried object(s) recorded on no trace (truth.json response.traces 0), left out above; counting them: linear ${pct(br.linearAll)}, compact ${pct(br.compactAll)}`);
        const ag = report.aboveGround;
        out.push(`above-ground flags: precision ${pct(ag.precision)}, recall ${pct(ag.recall)} (TP ${ag.truePositive}, FP ${ag.falsePositive}, FN ${ag.falseNegative}, ambiguous ${ag.ambiguous})`);
        out.push(`targets that are air-wave reflections: ${pct(report.targetAirFraction)} of ${report.targets.length}`);
        const pr = report.precision;
        out.push(`target precision: ${pct(pr.byCount)} by count (${pr.buriedTargets} of ${pr.targets} cover a buried object), ${pct(pr.byArea)} by area (${pr.buriedAreaM2.toFixed(1)} of ${pr.areaM2.toFixed(1)} m2)`);
        out.push(`clutter targets: ${pr.clutterTargets}${pr.clutterPer100M2 === null ? '' : ` (${pr.clutterPer100M2.toFixed(2)} per 100 m2 of ${pr.surveyedAreaM2!.toFixed(0)} m2 surveyed)`}`);
        out.push(`pieces per utility: mean ${pr.piecesMean === null ? '-' : pr.piecesMean.toFixed(1)}, max ${pr.piecesMax}`);
        if (pr.largest) out.push(`largest target: ${pr.largest.id}, ${pr.largest.areaM2.toFixed(1)} m2 over ${pr.largest.depthExtentM.toFixed(2)} m of depth`);
        out.push(`air flags per anomaly: ${pct(pr.airFlags.recall)} of ${pr.airFlags.onLocus} on a locus flagged; ${pct(pr.airFlags.realFlaggedShare)} of ${pr.airFlags.real} real ones flagged`);
        const k = pr.siteK;
        out.push(`site K: truth ${k.truth.toFixed(2)}, fitted ${k.fitted === null ? '-' : `${k.fitted.toFixed(2)} (${(100 * k.relError!).toFixed(1)} %)`}`);
        for (const o of k.atObjects) out.push(`  at ${o.id} (${o.depthM.toFixed(2)} m): truth ${o.truth.toFixed(2)}, fitted ${o.fitted.toFixed(2)} (${(100 * o.relError).toFixed(1)} %)`);
        const cls = Object.entries(pr.classes).filter(([, v]) => v.buried + v.air + v.ambiguous + v.unmatched > 0);
        if (cls.length) out.push('anomaly class vs truth (buried / air / ambiguous / unmatched):', ...cls.map(([c, v]) => `  ${c.padEnd(13)} ${v.buried} / ${v.air} / ${v.ambiguous} / ${v.unmatched}`));
        for (const d of report.definitions) out.push(`  (${d})`);
        process.stdout.write(out.join('\n') + '\n');
      }),
    );
}
