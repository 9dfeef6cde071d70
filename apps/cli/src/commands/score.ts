import { existsSync, readFileSync } from 'node:fs';
import { join } from 'node:path';
import type { Command } from 'commander';
import { InputError } from '@lamina/errors';
import type { VelocityModel } from '@lamina/velocity';
import { scoreRun, type FeatureCollection, type ScoreTruth } from '@lamina/screening';
import { pointFromWgs84, resolveCrs } from '@lamina/site';
import { action } from '../run';

function readJson(file: string): unknown {
  let text: string;
  try {
    text = readFileSync(file, 'utf8');
  } catch {
    throw new InputError(file, 'expected a readable file, found none');
  }
  try {
    return JSON.parse(text);
  } catch (e) {
    throw new InputError(file, `expected JSON, found a parse error (${(e as Error).message})`);
  }
}

function collection(file: string): FeatureCollection {
  const v = readJson(file) as { type?: unknown; features?: unknown };
  if (v?.type !== 'FeatureCollection' || !Array.isArray(v.features)) throw new InputError(file, `expected a GeoJSON FeatureCollection, found ${JSON.stringify(v?.type)}`, { field: 'type' });
  return v as FeatureCollection;
}

function truthOf(file: string): ScoreTruth {
  const t = readJson(file) as Partial<ScoreTruth>;
  if (typeof t.crs !== 'string') throw new InputError(file, `expected a CRS string, found ${JSON.stringify(t.crs)}`, { field: 'crs' });
  if (typeof t.metresPerUnit !== 'number' || !(t.metresPerUnit > 0)) throw new InputError(file, `expected a positive number, found ${JSON.stringify(t.metresPerUnit)}`, { field: 'metresPerUnit' });
  if (!t.soil || !(typeof t.soil.velocityMPerNs === 'number' && t.soil.velocityMPerNs > 0)) throw new InputError(file, 'expected a positive soil velocity', { field: 'soil.velocityMPerNs' });
  if (!Array.isArray(t.buried)) throw new InputError(file, 'expected an array', { field: 'buried' });
  if (!Array.isArray(t.aboveGround)) throw new InputError(file, 'expected an array', { field: 'aboveGround' });
  t.buried.forEach((b, i) => {
    if (!b.center && !(b.from && b.to)) throw new InputError(file, 'expected from/to or center', { field: `buried[${i}]` });
  });
  t.aboveGround.forEach((a, i) => {
    if (!a.center && !(a.from && a.to)) throw new InputError(file, 'expected from/to or center', { field: `aboveGround[${i}]` });
  });
  return t as ScoreTruth;
}

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
        const truth = truthOf(truthFile);
        const crs = resolveCrs(truth.crs, { file: truthFile, field: 'crs' });
        const aFile = join(outDir, 'anomalies.geojson');
        const tFile = join(outDir, 'targets.geojson');
        if (!existsSync(aFile)) throw new InputError(aFile, 'expected the anomalies of a processed folder, found no file');
        const anomalies = collection(aFile);
        const targets = existsSync(tFile) ? collection(tFile) : undefined;
        const vFile = join(outDir, 'velocity.json');
        const runModel = existsSync(vFile) ? (readJson(vFile) as { model?: VelocityModel }).model : undefined;
        const report = scoreRun(targets, anomalies, truth, (lon, lat) => pointFromWgs84(crs, lon, lat), {
          planToleranceM: Number(opts.planTolerance),
          depthToleranceM: Number(opts.depthTolerance),
          ...(runModel ? { runModel } : {}),
        });
        if (opts.json) {
          process.stdout.write(JSON.stringify({ ...report, targetsFile: targets ? tFile : null }, null, 2) + '\n');
          return;
        }
        const out: string[] = [];
        if (!targets) out.push(`note: ${tFile} not found; buried recall counts no targets`);
        out.push('buried utilities (fraction of length covered by targets.geojson):');
        for (const b of report.buried) out.push(`  ${b.id.padEnd(16)} ${b.kind.padEnd(8)} ${b.lengthM ? `${b.lengthM.toFixed(1)} m` : 'compact'}  ${pct(b.recall)}  ${b.targets.join(' ')}`);
        out.push(`  recall: linear ${pct(report.buriedRecall.linear)} (lowest ${pct(report.buriedRecall.minimum)}), compact ${pct(report.buriedRecall.compact)}`);
        const ag = report.aboveGround;
        out.push(`above-ground flags: precision ${pct(ag.precision)}, recall ${pct(ag.recall)} (TP ${ag.truePositive}, FP ${ag.falsePositive}, FN ${ag.falseNegative}, ambiguous ${ag.ambiguous})`);
        out.push(`targets that are air-wave reflections: ${pct(report.targetAirFraction)} of ${report.targets.length}`);
        for (const d of report.definitions) out.push(`  (${d})`);
        process.stdout.write(out.join('\n') + '\n');
      }),
    );
}
