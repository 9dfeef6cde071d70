// `lamina merge` on tiles that cut the objects (issue 17): the tiny invented site (6 x 4 m, a pipe and a
// post on x = 431253, which is a tile edge) in 3 m tiles with 1 m of overlap, so that objects cross core
// edges. Checked: the folder's contract, the mosaic against the tiles' cores (GDAL), the survey screened
// again as one run (its equality with the untiled run: test/batch-engines.test.ts); with --tile-anomalies
// each object once (OGR measures the joined outlines against the pieces cut to their cores); review
// decisions carried over, and the refusals (a tile not processed, a tile on another grid) naming the tile.
import { existsSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { mkdtemp } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { beforeAll, describe, expect, it } from 'vitest';
import { FOLDER_FILES, checkFolder } from '@lamina/contracts';
import { runPython, validateCog } from '@lamina/test-utils';
import { expectMosaicOfCores } from './merge-compare';
import { root, lamina, buildCli } from './built-cli';

/** Exit status and stderr of a command expected to fail. */
const fails = (...args: string[]) =>
  lamina(...args).then(
    () => ({ code: 0, stderr: '' }),
    (e: { code: number; stderr: string }) => ({ code: e.code, stderr: e.stderr }),
  );

type Feature = { geometry: unknown; properties: Record<string, unknown> & { id: string; depthTopM: number; depthBottomM: number } };
const json = <T>(file: string): T => JSON.parse(readFileSync(file, 'utf8')) as T;

let work: string;
let tiles: string;
let manifest: { tiles: { id: string; dir: string; core: [number, number, number, number] }[] };

beforeAll(async () => {
  work = await mkdtemp(join(tmpdir(), 'lamina-merge-'));
  buildCli();
  await lamina('simulate', join(root, 'test/fixtures/tiny-scenario.json'), '--out', join(work, 'site'));
  await lamina('velocity', join(work, 'site'), '--out', join(work, 'survey'));
  tiles = join(work, 'tiles');
  await lamina('tiles', join(work, 'site'), '--size', '3', '--overlap', '1', '--velocity', join(work, 'survey', 'velocity.json'), '--out', tiles);
  manifest = json(join(tiles, 'tiles.json'));
  // two tiles at a time (one thread each), as `run-parallel.sh` would on two cores
  let next = 0;
  const worker = async () => {
    for (let i = next++; i < manifest.tiles.length; i = next++) await lamina('process-tile', join(tiles, 'tiles.json'), '--index', String(i), '-q');
  };
  await Promise.all([worker(), worker()]);
}, 600_000);

describe('lamina merge', () => {
  it('refuses a tile that is not processed, naming it, and writes nothing', async () => {
    const t = manifest.tiles[1]!;
    const runFile = join(tiles, `${t.dir}-out`, 'run.json');
    const saved = readFileSync(runFile);
    rmSync(runFile);
    try {
      const r = await fails('merge', tiles, '--out', join(work, 'refused'));
      expect(r.code).toBe(2);
      expect(r.stderr).toContain(t.id);
      expect(r.stderr).toMatch(/process-tile .* --index 1/);
      expect(existsSync(join(work, 'refused'))).toBe(false);
    } finally {
      writeFileSync(runFile, saved);
    }
  });

  it('refuses tiles on different grids or depth windows, naming the tile and the field', async () => {
    const t = manifest.tiles[2]!;
    const file = join(tiles, `${t.dir}-out`, 'slices.json');
    const saved = readFileSync(file, 'utf8');
    try {
      for (const [field, change] of [
        ['cellSize', (s: Record<string, unknown>) => (s.cellSize = (s.cellSize as number) * 1.5)],
        ['slices[3]', (s: Record<string, unknown>) => ((s.slices as { topM: number }[])[3]!.topM += 0.05)],
      ] as const) {
        const s = JSON.parse(saved) as Record<string, unknown>;
        change(s);
        writeFileSync(file, JSON.stringify(s));
        const r = await fails('merge', tiles, '--out', join(work, 'refused'));
        expect(r.code).toBe(2);
        expect(r.stderr).toContain(t.id);
        expect(r.stderr).toContain(field);
        expect(existsSync(join(work, 'refused'))).toBe(false);
      }
    } finally {
      writeFileSync(file, saved);
    }
  });

  it('writes one folder of the output contract; the mosaic is the tiles\' cores; the survey screened again as one run', async () => {
    const out = join(work, 'merged');
    const r = await lamina('merge', tiles, '--out', out, '-q');
    expect(r.stdout).toMatch(/screened as one run/);
    expect(await checkFolder(out)).toEqual(FOLDER_FILES.map(([f]) => f));
    for (const f of ['targets.gpkg', 'targets.csv', 'targets.dxf', 'report.html', 'slices.tif']) expect(existsSync(join(out, f)), f).toBe(true);
    expectMosaicOfCores(tiles, out);
    const cog = validateCog(join(out, 'slices.tif')); // GDAL's COG validator (osgeo_utils), --full-check=yes
    expect(cog.ok, cog.output).toBe(true);
    // numbered as one run numbers them (shallowest first); nothing joined; the scratch mosaics are gone
    const anomalies = json<{ features: Feature[] }>(join(out, 'anomalies.geojson')).features;
    expect(anomalies.map((f) => f.properties.id)).toEqual(anomalies.map((_, i) => `A${String(i + 1).padStart(4, '0')}`));
    expect(anomalies.some((f) => f.properties.mergedFrom)).toBe(false);
    for (const f of ['mosaic.f32', 'mosaic-before.f32', 'slices-before.f32']) expect(existsSync(join(out, f)), f).toBe(false);
    const known = new Set(anomalies.map((f) => f.properties.id));
    for (const f of json<{ features: Feature[] }>(join(out, 'interfaces.geojson')).features) expect(known.has(String(f.properties.anomalyId))).toBe(true);
    const run = json<{ log: { step: string; params?: Record<string, unknown> }[] }>(join(out, 'run.json'));
    expect(run.log.find((e) => e.step === 'merge')?.params?.ids).toBe('screened again as one run');
  });

  it("with --tile-anomalies keeps the tiles' anomalies: each object once, pieces joined at core edges", async () => {
    const out = join(work, 'merged-pieces');
    await lamina('merge', tiles, '--out', out, '--tile-anomalies', '-q');
    expect(await checkFolder(out)).toEqual(FOLDER_FILES.map(([f]) => f));
    expectMosaicOfCores(tiles, out);

    const run = json<{ site: { name: string }; merge: { tiles: number } }>(join(out, 'run.json'));
    expect(run.site.name).toBe('tiny');
    expect(run.merge.tiles).toBe(manifest.tiles.length);
    const anomalies = json<{ features: Feature[] }>(join(out, 'anomalies.geojson')).features;
    const ids = anomalies.map((f) => f.properties.id);
    expect(new Set(ids).size).toBe(ids.length);
    const core = new Map(manifest.tiles.map((t) => [t.id, t.core]));
    for (const id of ids) expect(core.has(id.split('/')[0]!), id).toBe(true);

    // Ownership: the anchor (centroid) of every anomaly kept whole lies in its tile's core (pyproj, Debian's
    // python3-pyproj, projects the anchors to the site CRS).
    const whole = anomalies.filter((f) => !f.properties.mergedFrom);
    const xy = JSON.parse(runPython(`import sys, json\nfrom pyproj import Transformer\nt=Transformer.from_crs('EPSG:4326','EPSG:32617',always_xy=True)\nprint(json.dumps([t.transform(*p) for p in json.load(sys.stdin)]))`, [], { input: JSON.stringify(whole.map((f) => f.properties.centroid)) })) as [number, number][];
    for (const [i, f] of whole.entries()) {
      const c = core.get(f.properties.id.split('/')[0]!)!;
      const [x, y] = xy[i]!;
      expect(x >= c[0] - 1e-6 && x < c[2] + 1e-6 && y >= c[1] - 1e-6 && y < c[3] + 1e-6, `${f.properties.id} at ${x}, ${y}`).toBe(true);
    }

    // Joined objects: pieces of neighbouring tiles; the outline is the pieces' outlines cut to their cores,
    // so its area is the sum of those cuts as OGR computes them (Intersection, in the site CRS).
    const joined = anomalies.filter((f) => Array.isArray(f.properties.mergedFrom));
    expect(joined.length).toBeGreaterThan(0);
    const jobs = joined.map((f) => ({
      merged: f.geometry,
      pieces: (f.properties.mergedFrom as string[]).map((key) => {
        const [tile, id] = key.split('/') as [string, string];
        const t = manifest.tiles.find((x) => x.id === tile)!;
        const g = json<{ features: Feature[] }>(join(tiles, `${t.dir}-out`, 'anomalies.geojson')).features.find((a) => a.properties.id === id)!.geometry;
        return { geometry: g, core: t.core };
      }),
    }));
    const py = [
      'import sys, json',
      'from osgeo import ogr, osr',
      'w=osr.SpatialReference(); w.ImportFromEPSG(4326); w.SetAxisMappingStrategy(osr.OAMS_TRADITIONAL_GIS_ORDER)',
      'u=osr.SpatialReference(); u.ImportFromEPSG(32617)',
      'ct=osr.CoordinateTransformation(w,u)',
      'def utm(g):',
      '  g=ogr.CreateGeometryFromJson(json.dumps(g)); g.Transform(ct); return g',
      'out=[]',
      'for j in json.load(sys.stdin):',
      '  m=utm(j["merged"]).GetArea()',
      '  s=0',
      '  for p in j["pieces"]:',
      '    c=p["core"]; box=ogr.CreateGeometryFromWkt("POLYGON ((%r %r, %r %r, %r %r, %r %r, %r %r))" % (c[0],c[1],c[2],c[1],c[2],c[3],c[0],c[3],c[0],c[1]))',
      '    s+=utm(p["geometry"]).Buffer(0).Intersection(box).GetArea()',
      '  out.append([m, s])',
      'print(json.dumps(out))',
    ].join('\n');
    for (const [m, s] of JSON.parse(runPython(py, [], { input: JSON.stringify(jobs) })) as [number, number][]) {
      // lon/lat rounded to 1e-8 degrees (about 1 mm) moves the vertices: 1 % of a few square metres
      expect(Math.abs(m - s) / s).toBeLessThan(0.01);
    }
    for (const f of joined) {
      const tilesOf = (f.properties.mergedFrom as string[]).map((k) => manifest.tiles.find((t) => t.id === k.split('/')[0])!);
      expect(new Set(tilesOf.map((t) => t.id)).size).toBeGreaterThan(1);
    }
    // interfaces name merged anomalies only
    const known = new Set(ids);
    for (const f of json<{ features: Feature[] }>(join(out, 'interfaces.geojson')).features) expect(known.has(String(f.properties.anomalyId))).toBe(true);
  });

  it("carries the tiles' review decisions over to the merged anomalies (by place and depth), and keeps the merged folder's own on a second merge", async () => {
    const out = join(work, 'merged-review');
    await lamina('merge', tiles, '--out', out, '-q');
    const targets = json<{ features: { properties: Record<string, unknown> }[] }>(join(out, 'targets.geojson')).features;
    expect(targets.length).toBeGreaterThan(0);
    const target = String(targets[0]!.properties.anomalyId ?? targets[0]!.properties.id);
    const mine = json<{ features: Feature[] }>(join(out, 'anomalies.geojson')).features.find((f) => f.properties.id === target)!.properties;
    // the tile anomaly nearest the merged target at its depth: a decision a surveyor made on that tile
    const at = mine.centroid as [number, number];
    const near = manifest.tiles.flatMap((t) => json<{ features: Feature[] }>(join(tiles, `${t.dir}-out`, 'anomalies.geojson')).features.map((f) => ({ t, f })));
    const gap = (f: Feature) => Math.hypot((f.properties.centroid as number[])[0]! - at[0], (f.properties.centroid as number[])[1]! - at[1]) + Math.abs(f.properties.depthTopM - mine.depthTopM);
    const { t, f: a } = near.reduce((b, x) => (gap(x.f) < gap(b.f) ? x : b));
    const local = a.properties.id;
    const tileOut = join(tiles, `${t.dir}-out`);
    const c = a.properties.centroid as [number, number];
    const review = json<{ decisions: unknown[] }>(join(tileOut, 'review.json'));
    const saved = JSON.stringify(review);
    review.decisions = [{ anomalyId: local, anchor: { lon: c[0], lat: c[1], depthTopM: a.properties.depthTopM, depthBottomM: a.properties.depthBottomM }, decision: 'reject', note: 'a kerb drain, seen on site', updatedAt: '2026-12-03T10:00:00.000Z' }];
    writeFileSync(join(tileOut, 'review.json'), JSON.stringify(review));
    try {
      await lamina('merge', tiles, '--out', out, '-q');
      const merged = json<{ decisions: { anomalyId: string; decision: string; note?: string }[] }>(join(out, 'review.json'));
      expect(merged.decisions).toEqual([expect.objectContaining({ anomalyId: target, decision: 'reject', note: 'a kerb drain, seen on site' })]);
      const after = json<{ features: { properties: Record<string, unknown> }[] }>(join(out, 'targets.geojson')).features;
      expect(after.map((f) => f.properties.anomalyId ?? f.properties.id)).not.toContain(target);
      // a later decision made in the merged folder (as the viewer saves it) wins on the next merge
      const m = json<{ decisions: Record<string, unknown>[] }>(join(out, 'review.json'));
      m.decisions[0] = { ...m.decisions[0], decision: 'accept', note: 'potholed: a water main', updatedAt: '2026-12-03T11:00:00.000Z' };
      writeFileSync(join(out, 'review.json'), JSON.stringify(m));
      await lamina('merge', tiles, '--out', out, '-q');
      expect(json<{ decisions: { anomalyId: string; decision: string }[] }>(join(out, 'review.json')).decisions).toEqual([expect.objectContaining({ anomalyId: target, decision: 'accept' })]);
    } finally {
      writeFileSync(join(tileOut, 'review.json'), saved);
    }
  });
});
