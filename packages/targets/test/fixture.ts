import { spawnSync } from 'node:child_process';
import { mkdtemp, writeFile } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { pointToWgs84, resolveCrs } from '@lamina/site';
import type { Decision, Review } from '../src';
import { C_M_PER_NS } from '@lamina/constants';

/**
 * A small processed output folder written by the test itself (nothing committed): run.json,
 * anomalies.geojson, velocity.json, slices.json + slices.tif (written by GDAL), review.json.
 * Positions are given in metres from the site origin and converted to the site CRS units.
 */
export interface FixtureOptions {
  crs: string;
  origin: [number, number];
  name?: string;
  decisions?: (ids: Record<string, string>) => Partial<Decision>[];
  spreadMPerNs?: number;
  /** velocity.json `site.uncertaintyMPerNs` (absent when not given, as in files before it). */
  uncertaintyMPerNs?: number;
  review?: boolean;
  /** site.json's survey block, carried in run.json's site. */
  survey?: Record<string, unknown>;
}

export { PYTHON as PY } from '@lamina/test-utils';
import { PYTHON as PY } from '@lamina/test-utils';

export function py(script: string, args: string[] = []): string {
  const r = spawnSync(PY, ['-c', script, ...args], { encoding: 'utf8' });
  if (r.status !== 0) throw new Error(`python failed (${r.status}): ${r.stderr}`);
  return r.stdout;
}

export interface Fixture {
  dir: string;
  crs: ReturnType<typeof resolveCrs>;
  identity: Review['site'];
}

export async function makeFolder(o: FixtureOptions): Promise<Fixture> {
  const dir = await mkdtemp(join(tmpdir(), 'targets-'));
  const crs = resolveCrs(o.crs);
  const mpu = crs.metresPerUnit;
  const xy = (ex: number, ny: number): [number, number] => [o.origin[0] + ex / mpu, o.origin[1] + ny / mpu];
  const ll = (ex: number, ny: number) => pointToWgs84(crs, ...xy(ex, ny));
  const box = (x0: number, y0: number, x1: number, y1: number) => ({ type: 'Polygon', coordinates: [[ll(x0, y0), ll(x1, y0), ll(x1, y1), ll(x0, y1), ll(x0, y0)]] });
  const ev = (test: string, passed: boolean) => ({ test, featureId: 'fence-1', measured: 1.2, expected: 1.25, tolerance: 0.3, units: 'm', passed, detail: `${test} check` });
  const feature = (id: string, kind: 'linear' | 'compact', origin: string, top: number, bottom: number, geometry: unknown, extra: Record<string, unknown> = {}) => ({
    type: 'Feature',
    id,
    geometry,
    properties: { id, depthTopM: top, depthBottomM: bottom, origin, confidence: 0.8, evidence: [ev('move-out', origin === 'above-ground')], kind, ...extra },
  });
  const features = [
    // W: a pipe along x at 1.0-1.2 m; E: a cable along y; C: a compact target; G: a fence reflection.
    feature('W', 'linear', 'subsurface', 1.0, 1.2, box(1, 4.8, 19, 5.2), {
      centreline: { type: 'LineString', coordinates: [ll(1, 5), ll(10, 5), ll(19, 5)] },
      // Sloping: seen from 1.0 m in the west half, from 1.1 m in the east half.
      members: [
        { slice: 3, topM: 1.0, bottomM: 1.1, centroid: ll(5.5, 5), outline: box(0.5, 4.5, 10.5, 5.5) },
        { slice: 4, topM: 1.1, bottomM: 1.2, centroid: ll(14.5, 5), outline: box(9.5, 4.5, 19.5, 5.5) },
      ],
    }),
    feature('E', 'linear', 'subsurface', 0.5, 0.62, box(14.8, 1, 15.2, 14), { centreline: { type: 'LineString', coordinates: [ll(15, 1), ll(15, 14)] } }),
    feature('C', 'compact', 'subsurface', 0.8, 1.1, box(4, 10, 5, 11), { centroid: ll(4.5, 10.5) }),
    feature('G', 'linear', 'above-ground', 0.3, 0.9, box(1, 13.8, 19, 14.2), { centreline: { type: 'LineString', coordinates: [ll(1, 14), ll(19, 14)] } }),
    feature('R', 'compact', 'subsurface', 0.4, 0.6, box(8, 8, 9, 9), { centroid: ll(8.5, 8.5) }),
    feature('U', 'compact', 'above-ground', 1.5, 1.7, box(11, 11, 12, 12), { centroid: ll(11.5, 11.5) }),
    feature('D', 'compact', 'subsurface', 0.9, 1.0, box(2, 2, 3, 3), { centroid: ll(2.5, 2.5) }),
  ];
  const extentWgs84 = [...ll(0, 0), ...ll(20, 15)] as [number, number, number, number];
  const identity = { name: o.name ?? 'fixture', crs: o.crs, extent: extentWgs84 };
  const run = {
    tool: { name: 'lamina', version: '0.1.0' },
    createdAt: '2026-11-30T12:00:00.000Z',
    site: {
      name: identity.name,
      dir: '/nowhere',
      crs: { input: crs.input, ...(crs.code ? { code: crs.code } : {}), proj4: crs.proj4, units: crs.units, metresPerUnit: crs.metresPerUnit },
      antenna: { frequencyMHz: 400, separationM: 0.16 },
      extentWgs84,
      extentSite: [...xy(0, 0), ...xy(20, 15)],
      ...(o.survey ? { survey: o.survey } : {}),
    },
    identity,
    recipe: {},
    log: [],
    lines: [{ id: 'l01', file: 'l01.sgy', traces: 400, samples: 512, dtNs: 0.1, lengthM: 20 }],
  };
  await writeFile(join(dir, 'run.json'), JSON.stringify(run));
  await writeFile(join(dir, 'anomalies.geojson'), JSON.stringify({ type: 'FeatureCollection', features }));
  // Survey lines west-east every 5 m, 20 m long; a fence along the north edge (the plan).
  const lineFeature = (id: string, y: number) => ({ type: 'Feature', id, properties: { id, file: `lines/${id}.sgy`, traces: 400, lengthM: 20 }, geometry: { type: 'LineString', coordinates: [ll(0, y), ll(10, y), ll(20, y)] } });
  await writeFile(join(dir, 'lines.geojson'), JSON.stringify({ type: 'FeatureCollection', features: [lineFeature('l01', 2.5), lineFeature('l02', 7.5), lineFeature('l03', 12.5)] }));
  await writeFile(join(dir, 'plan.geojson'), JSON.stringify({ type: 'FeatureCollection', features: [{ type: 'Feature', id: 'fence-1', properties: { id: 'fence-1', kind: 'fence', heightM: 1.8 }, geometry: { type: 'LineString', coordinates: [ll(0, 14.5), ll(20, 14.5)] } }] }));
  await writeFile(
    join(dir, 'velocity.json'),
    JSON.stringify({
      site: { velocityMPerNs: 0.1, permittivity: (C_M_PER_NS / 0.1) ** 2, spreadMPerNs: o.spreadMPerNs ?? 0.005, ...(o.uncertaintyMPerNs !== undefined ? { uncertaintyMPerNs: o.uncertaintyMPerNs } : {}), fitCount: 2 },
      model: { kind: 'constant', layers: [{ topM: 0, bottomM: 2, velocityMPerNs: 0.1, permittivity: 8.99 }] },
      hyperbolas: [
        { line: 'l01', trace: 100, x: 0, y: 0, t0Ns: 20, velocityMPerNs: 0.102, permittivity: 8.64, depthM: 1.0, uncertaintyMPerNs: 0.002, origin: 'subsurface' },
        { line: 'l01', trace: 300, x: 0, y: 0, t0Ns: 12, velocityMPerNs: 0.3, permittivity: 1.0, depthM: 1.8, uncertaintyMPerNs: 0.004, origin: 'above-ground' },
      ],
    }),
  );
  // Two bands 40 x 30: band 1 a west-east ramp 0..39, band 2 constant 5 with a nodata block in the north-west.
  const [ox, oy] = xy(0, 15);
  py(
    `
import sys, numpy as np
from osgeo import gdal, osr
gdal.UseExceptions()
d = gdal.GetDriverByName('GTiff').Create(sys.argv[1], 40, 30, 2, gdal.GDT_Float32)
d.SetGeoTransform([float(sys.argv[2]), float(sys.argv[4]), 0, float(sys.argv[3]), 0, -float(sys.argv[4])])
s = osr.SpatialReference(); s.ImportFromProj4(sys.argv[5]); d.SetProjection(s.ExportToWkt())
ramp = np.tile(np.arange(40, dtype=np.float32), (30, 1))
b2 = np.full((30, 40), 5, dtype=np.float32); b2[:10, :10] = -9999
for i, a in enumerate([ramp, b2]):
    b = d.GetRasterBand(i + 1); b.SetNoDataValue(-9999); b.WriteArray(a)
d = None
`,
    [join(dir, 'slices.tif'), String(ox), String(oy), String(0.5 / mpu), crs.proj4],
  );
  await writeFile(
    join(dir, 'slices.json'),
    JSON.stringify({
      version: 1, file: 'slices.tif', crs: o.crs, epsg: null, metresPerUnit: mpu, isGeographic: false, originX: ox, originY: oy, cellSize: 0.5 / mpu, width: 40, height: 30, nodata: -9999,
      slices: [
        { index: 0, band: 1, topM: 0.4, bottomM: 0.6, stats: { min: 0, max: 39, mean: 19.5, std: 11.5, p2: 0, p98: 39, validCount: 1200 } },
        { index: 1, band: 2, topM: 0.9, bottomM: 1.1, stats: { min: 5, max: 5, mean: 5, std: 0, p2: 5, p98: 5, validCount: 1100 } },
      ],
    }),
  );
  if (o.review !== false) {
    const anchor = (f: (typeof features)[number]) => {
      const c = (f.geometry as { coordinates: number[][][] }).coordinates[0]![0]!;
      return { lon: c[0]!, lat: c[1]!, depthTopM: f.properties.depthTopM, depthBottomM: f.properties.depthBottomM };
    };
    const ids = Object.fromEntries(features.map((f) => [f.id, f.id]));
    const partial = o.decisions?.(ids) ?? [];
    const decisions = partial.map((d) => {
      const f = features.find((x) => x.id === d.anomalyId)!;
      return { anchor: anchor(f), decision: 'undecided', updatedAt: '2026-12-01T10:00:00.000Z', ...d };
    });
    await writeFile(join(dir, 'review.json'), JSON.stringify({ version: 1, site: identity, decisions }));
  }
  return { dir, crs, identity };
}

/** The decisions most tests use: R rejected, U relabelled subsurface (sewer), D relabelled above-ground, W water, E electric. */
export const standardDecisions = (): Partial<Decision>[] => [
  { anomalyId: 'R', decision: 'reject', note: 'a rock' },
  { anomalyId: 'U', decision: 'accept', origin: 'subsurface', utilityType: 'sewer', note: 'manhole, "seen" on site, with a comma' },
  { anomalyId: 'D', decision: 'accept', origin: 'above-ground' },
  { anomalyId: 'W', decision: 'accept', utilityType: 'water', label: 'main' },
  { anomalyId: 'E', decision: 'accept', utilityType: 'electric' },
];
