// End to end: a sample site in US survey feet (carpark-ft, EPSG:2264) simulated, processed, exported;
// the exports checked with GDAL 3.6 (Debian) and scored against the simulator's truth.json.
import { spawnSync } from 'node:child_process';
import { mkdtemp, readFile, writeFile } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { dirname, join, resolve } from 'node:path';
import { fileURLToPath } from 'node:url';
import { beforeAll, describe, expect, it } from 'vitest';
import { runProcess } from '@lamina/pipeline';
import type { FeatureCollection } from '@lamina/screening';
import { scoreRun, type ScoreTruth } from '@lamina/scoring';
import { simulateScenarioFile } from '@lamina/simulate';
import { pointFromWgs84, resolveCrs } from '@lamina/site';
import { exportTargets, type ExportResult } from '@lamina/targets';

const root = resolve(dirname(fileURLToPath(import.meta.url)), '..');
let out: string;
let site: string;
let first: ExportResult;

const sh = (cmd: string, args: string[]) => {
  const r = spawnSync(cmd, args, { encoding: 'utf8' });
  return { code: r.status, out: r.stdout + r.stderr };
};
const json = async <T>(p: string) => JSON.parse(await readFile(p, 'utf8')) as T;

beforeAll(async () => {
  const work = await mkdtemp(join(tmpdir(), 'lamina-targets-'));
  site = join(work, 'site');
  out = join(work, 'out');
  await simulateScenarioFile(join(root, 'sample-sites/carpark-ft/scenario.json'), site);
  await runProcess(site, out, { threads: 2 });
  first = await exportTargets(out);
}, 600_000);

describe('target export of a processed US-survey-foot site (carpark-ft)', () => {
  it('writes every file; GDAL validates the GeoPackage and reads each file with the same count', async () => {
    const fc = await json<FeatureCollection>(join(out, 'targets.geojson'));
    const n = fc.features.length;
    expect(n).toBe(first.targets);
    expect(n).toBeGreaterThan(0);
    const v = sh('/usr/bin/python3', ['-m', 'osgeo_utils.samples.validate_gpkg', join(out, 'targets.gpkg')]);
    expect(v.out.trim()).toBe('');
    expect(v.code).toBe(0);
    const g = sh('ogrinfo', ['-al', '-so', join(out, 'targets.gpkg')]).out;
    expect(g.match(new RegExp(`Feature Count: ${n}\\n`, 'g'))).toHaveLength(2);
    expect(g).toMatch(/ID\["EPSG",2264\]/);
    expect(g).toMatch(/US survey foot/);
    expect(sh('ogrinfo', ['-al', '-so', join(out, 'targets.dxf')]).out).toMatch(new RegExp(`Feature Count: ${2 * n}\\n`));
    expect(sh('ogrinfo', ['-al', '-so', '-oo', 'GEOM_POSSIBLE_NAMES=wkt', join(out, 'targets.csv')]).out).toMatch(new RegExp(`Feature Count: ${n}\\n`));
    expect(sh('ogrinfo', ['-al', '-so', join(out, 'targets.geojson')]).out).toMatch(new RegExp(`Feature Count: ${n}\\n`));
  });

  // issue 12: targets are the subsurface anomalies classed utility or structure that are not echoes of another
  it("report.html's plan map has one symbol per target, and its scale bar is the CRS distance it claims (issue 14)", async () => {
    const html = await readFile(join(out, 'report.html'), 'utf8');
    const fc = await json<FeatureCollection>(join(out, 'targets.geojson'));
    const map = /<svg xmlns="http:\/\/www.w3.org\/2000\/svg" class="plan-map"[\s\S]*?<\/svg>/.exec(html)![0];
    const ids = [...map.matchAll(/class="target" data-id="([^"]+)"/g)].map((m) => m[1]).sort();
    expect(ids).toEqual(fc.features.map((f) => String((f.properties as { id: string }).id)).sort());
    // the bar's drawn length over the map scale is its stated length in US survey feet, and its metres are
    // feet x 1200/3937 (NIST SP 811)
    const scale = Number(/data-mm-per-unit="([^"]+)"/.exec(map)![1]);
    const bar = /<g class="scale-bar" data-length="([^"]+)" data-length-m="([^"]+)">[\s\S]*?<line x1="([^"]+)" y1="[^"]+" x2="([^"]+)"/.exec(map)!;
    expect((Number(bar[4]) - Number(bar[3])) / scale).toBeCloseTo(Number(bar[1]), 1);
    expect(Number(bar[2])).toBeCloseTo(Number(bar[1]) * (1200 / 3937), 6);
  });

  it('targets are the subsurface utilities and structures, and cover buried utilities as well as those anomalies do', async () => {
    const anomalies = await json<FeatureCollection>(join(out, 'anomalies.geojson'));
    const targets = await json<FeatureCollection>(join(out, 'targets.geojson'));
    const sub = anomalies.features.filter((f) => f.properties.origin === 'subsurface' && ['utility', 'structure'].includes(String(f.properties.class)) && f.properties.echoOf === undefined);
    expect(targets.features.map((f) => f.properties.id).sort()).toEqual(sub.map((f) => f.properties.id).sort());
    const truth = await json<ScoreTruth>(join(site, 'truth.json'));
    const crs = resolveCrs(truth.crs);
    const to = (lon: number, lat: number) => pointFromWgs84(crs, lon, lat);
    const ours = scoreRun(targets, anomalies, truth, to);
    // Reference: the subsurface anomalies themselves (outlines and per-slice members) taken as targets.
    const ref = scoreRun({ type: 'FeatureCollection', features: sub }, anomalies, truth, to);
    console.log(
      `carpark-ft: ${targets.features.length} targets; linear recall ${(100 * ours.buriedRecall.linear).toFixed(1)} % (anomalies as targets ${(100 * ref.buriedRecall.linear).toFixed(1)} %), ` +
        `compact ${(100 * ours.buriedRecall.compact).toFixed(1)} % (${(100 * ref.buriedRecall.compact).toFixed(1)} %), air fraction ${(100 * ours.targetAirFraction).toFixed(1)} %`,
    );
    // Centrelines instead of outlines may lose a little coverage at the ends; no more than 10 points.
    expect(ours.buriedRecall.linear).toBeGreaterThanOrEqual(ref.buriedRecall.linear - 0.1);
    expect(ours.buriedRecall.compact).toBeGreaterThanOrEqual(ref.buriedRecall.compact - 1e-9);
  });

  it('a rejection and a utility type set in review.json reach every file on re-export', async () => {
    const targets = await json<FeatureCollection>(join(out, 'targets.geojson'));
    const review = await json<{ decisions: unknown[] } & Record<string, unknown>>(join(out, 'review.json'));
    const [a, b] = targets.features;
    if (!a || !b) throw new Error('expected two targets at least');
    const anchor = (f: (typeof targets.features)[number]) => ({ lon: (f.properties.centroid as number[])[0]!, lat: (f.properties.centroid as number[])[1]!, depthTopM: f.properties.depthTopM as number, depthBottomM: f.properties.depthBottomM as number });
    review.decisions = [
      { anomalyId: a.properties.id, anchor: anchor(a), decision: 'reject', updatedAt: '2026-12-01T12:00:00.000Z' },
      { anomalyId: b.properties.id, anchor: anchor(b), decision: 'accept', utilityType: 'gas', updatedAt: '2026-12-01T12:00:00.000Z' },
    ];
    await writeFile(join(out, 'review.json'), JSON.stringify(review));
    const r = await exportTargets(out);
    expect(r.targets).toBe(first.targets - 1);
    expect(r.rejected).toBe(1);
    const id = String(a.properties.id);
    const fc = await json<FeatureCollection>(join(out, 'targets.geojson'));
    expect(fc.features.map((f) => f.properties.id)).not.toContain(id);
    expect(await readFile(join(out, 'targets.csv'), 'utf8')).not.toMatch(new RegExp(`^${id},`, 'm'));
    const sql = sh('ogrinfo', ['-q', '-sql', `SELECT COUNT(*) AS n FROM targets WHERE id = '${id}'`, join(out, 'targets.gpkg')]).out;
    expect(sql).toMatch(/n \(Integer\) = 0/);
    const gas = sh('ogrinfo', ['-q', '-sql', `SELECT apwaColour FROM targets_wgs84 WHERE utilityType = 'gas'`, join(out, 'targets.gpkg')]).out;
    expect(gas).toMatch(/apwaColour \(String\) = #ffd700/); // APWA yellow: gas, oil, steam
    const dxf = sh('ogrinfo', ['-q', '-sql', `SELECT * FROM entities WHERE Layer = 'LAMINA_GAS'`, join(out, 'targets.dxf')]).out;
    expect(dxf.match(/OGRFeature/g)).toHaveLength(2); // its geometry and its label
  });
});
