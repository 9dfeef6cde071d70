// Runs the chain up to screening on a sample site (lines -> default recipe -> envelope -> slices ->
// screenSite), for the screening end-to-end tests. Uses the packages directly (relative imports: the
// test package does not list them) and the truth soil model as the velocity model, so these tests judge
// screening alone; `lamina process` judges the whole chain with the fitted velocity.
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { loadSite, pointToWgs84, pointFromWgs84, readLine } from '@lamina/site';
import { defaultRecipe, envelope, runRecipe } from '../packages/processing/src';
import { defaultWindows, SliceBuilder } from '../packages/slices/src';
import { scoreRun, screenSite, type ScoreReport, type ScoreTruth, type ScreenResult } from '../packages/screening/src';
import type { VelocityModel, VelocityReport } from '../packages/velocity/src';

export interface SiteRun {
  result: ScreenResult;
  score: ScoreReport;
  truth: ScoreTruth;
  seconds: { chain: number; screen: number };
}

export async function screenSampleSite(dir: string): Promise<SiteRun> {
  const truth = JSON.parse(readFileSync(join(dir, 'truth.json'), 'utf8')) as ScoreTruth & { soil: { layers?: { topM: number; bottomM: number | null; velocityMPerNs: number; permittivity: number }[] } };
  const site = await loadSite(dir);
  const t0 = performance.now();
  const model: VelocityModel = {
    kind: (truth.soil.layers?.length ?? 0) > 1 ? 'layered' : 'constant',
    layers: (truth.soil.layers ?? [{ topM: 0, bottomM: null, velocityMPerNs: truth.soil.velocityMPerNs, permittivity: truth.soil.permittivity }]).map((l) => ({
      topM: l.topM,
      bottomM: l.bottomM ?? 1e9,
      velocityMPerNs: l.velocityMPerNs,
      permittivity: l.permittivity,
    })),
  };
  const velocity: VelocityReport = {
    site: { velocityMPerNs: truth.soil.velocityMPerNs, permittivity: truth.soil.permittivity, spreadMPerNs: 0.03 * truth.soil.velocityMPerNs, fitCount: 0 },
    model,
    hyperbolas: [],
  };
  const ctx = { frequencyMHz: site.antenna.frequencyMHz, separationM: site.antenna.separationM, velocityMPerNs: truth.soil.velocityMPerNs, metresPerUnit: site.crs.metresPerUnit };
  let full: SliceBuilder | undefined;
  let kept: SliceBuilder | undefined;
  const lines: { id: string; x: Float64Array; y: Float64Array }[] = [];
  for (const src of site.lines) {
    const r = runRecipe(await readLine(site, src), defaultRecipe(ctx.frequencyMHz), ctx, { keepBefore: 'backgroundRemoval' });
    lines.push({ id: r.line.id, x: r.line.x, y: r.line.y });
    const env = envelope(r.line);
    const make = () =>
      new SliceBuilder({
        windows: defaultWindows({ model, separationM: ctx.separationM, frequencyMHz: ctx.frequencyMHz, nSamples: env.nSamples, dtNs: env.dtNs, timeZeroNs: env.timeZeroNs, bottomM: 2.5 }),
        model,
        separationM: ctx.separationM,
      });
    full ??= make();
    kept ??= make();
    full.add(env);
    kept.add(envelope(r.before!));
  }
  const gridOptions = { crs: site.crs.code ?? site.crs.proj4, metresPerUnit: site.crs.metresPerUnit };
  const stack = full!.grid(gridOptions);
  const before = kept!.grid(gridOptions);
  const t1 = performance.now();
  const result = screenSite(
    { stack, plan: site.plan, velocity, lines, metresPerUnit: site.crs.metresPerUnit, toWgs84: (x, y) => pointToWgs84(site.crs, x, y), beforeBackgroundStack: before },
    { antennaFrequencyMHz: ctx.frequencyMHz, antennaSeparationM: ctx.separationM },
  );
  const t2 = performance.now();
  // targets: the subsurface anomalies (what the targets package exports before review)
  const targets = { type: 'FeatureCollection' as const, features: result.anomalies.features.filter((f) => f.properties.origin === 'subsurface') };
  const score = scoreRun(targets, result.anomalies, truth, (lon, lat) => pointFromWgs84(site.crs, lon, lat));
  return { result, score, truth, seconds: { chain: (t1 - t0) / 1000, screen: (t2 - t1) / 1000 } };
}
