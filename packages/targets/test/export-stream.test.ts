// The streamed export (one anomaly at a time, files appended in staged temp files) against the
// whole-collection builders, on a few hundred invented anomalies. The reference here is our own
// whole-collection code path (and, for GeoJSON, its definition: JSON.stringify(collection, null, 1));
// GDAL's checks of the same formats are in export.test.ts.
import { readFile, readdir, writeFile } from 'node:fs/promises';
import { join } from 'node:path';
import { beforeAll, describe, expect, it } from 'vitest';
import { pointToWgs84 } from '@lamina/site';
import {
  EXPORT_FILES,
  buildTargets,
  exportTargets,
  readAnomalies,
  readReview,
  readRun,
  readSlicesInfo,
  readVelocity,
  reportHtml,
  sliceThumbnails,
  streamAnomalies,
  targetProperties,
  targetsCsv,
  targetsDxf,
  targetsGeoJson,
  targetsGpkg,
  type ExportContext,
} from '../src';
import { makeFolder, type Fixture } from './fixture';
import { readMapBackground } from '../src/report-map';
import { folderDepthError } from '../src/depth-error';

const NOW = new Date('2026-12-01T12:00:00.000Z');
const N = 300;

/** Park-Miller LCG (seeded, so every run writes the same folder). */
function lcg(seed: number) {
  let s = seed;
  return () => (s = (s * 48271) % 2147483647) / 2147483647;
}

/** Replace the fixture's seven anomalies with N invented ones laid out a feature per line, and decisions for some. */
async function syntheticFolder(): Promise<Fixture & { features: Record<string, unknown>[] }> {
  const fx = await makeFolder({ crs: 'EPSG:32617', origin: [431250, 4429800], name: 'stream-test', review: false });
  const rnd = lcg(20261201);
  const ll = (ex: number, ny: number) => pointToWgs84(fx.crs, 431250 + ex, 4429800 + ny);
  const box = (x: number, y: number, w: number, h: number) => [[ll(x, y), ll(x + w, y), ll(x + w, y + h), ll(x, y + h), ll(x, y)]];
  const ev = (i: number, passed: boolean) =>
    Array.from({ length: i % 9 }, (_, k) => ({ test: ['move-out', 'edge', 'post-spacing'][k % 3], featureId: k % 2 ? `fence-${k}` : null, measured: k % 4 ? 1.2 + k : 'n/a', expected: 1.25, tolerance: 0.3, units: 'm', passed: passed && k % 2 === 0, detail: `check <${k}> & "more"` }));
  const features: Record<string, unknown>[] = [];
  for (let i = 0; i < N; i++) {
    const id = `T${((i * 7919) % 1000).toString(36)}-${i}`; // not in id order, so the report's sort matters
    const x = rnd() * 18, y = rnd() * 13, top = Math.round(rnd() * 200) / 100, bottom = top + 0.1 + Math.round(rnd() * 30) / 100;
    const origin = i % 5 === 3 ? 'above-ground' : 'subsurface';
    const kind = i % 3 === 0 ? 'linear' : 'compact';
    const p: Record<string, unknown> = { id, depthTopM: top, depthBottomM: bottom, origin, confidence: Math.round(rnd() * 1e6) / 1e6, evidence: ev(i, origin === 'above-ground'), kind };
    let geometry: unknown = { type: 'Polygon', coordinates: box(x, y, 0.5 + rnd(), 0.5 + rnd()) };
    if (kind === 'linear') {
      const line = [ll(x, y), ll(x + 2 + rnd() * 5, y + rnd()), ll(x + 8, y + rnd() * 3)];
      p.centreline = { type: 'LineString', coordinates: line };
      p.members = [
        { slice: 1, topM: top, bottomM: top + 0.1, outline: { type: 'Polygon', coordinates: box(x - 0.5, y - 0.5, 4, 2) } },
        { slice: 2, topM: top + 0.1, bottomM: bottom, outline: { type: 'Polygon', coordinates: box(x + 3, y - 0.5, 6, 4) } },
      ];
      if (i % 4 === 0) geometry = null; // linear without an outline
    } else if (i % 7 === 1) geometry = { type: 'MultiPolygon', coordinates: [box(x, y, 0.4, 0.4), box(x + 1, y, 0.4, 0.4)] };
    else if (i % 11 === 2) geometry = null; // a point from the centroid
    else if (i % 13 === 4) geometry = { type: 'Polygon', coordinates: box(x, y, 1, 1).map((r) => [...r].reverse()) }; // clockwise: turned by the right-hand rule
    if (kind === 'compact' && i % 2 === 0) p.centroid = ll(x + 0.25, y + 0.25);
    if (i === 17 || i === 18) {
      geometry = null; // no plan position at all: left out of every file
      delete p.centroid;
    }
    features.push({ type: 'Feature', id, geometry, properties: p });
  }
  const head = JSON.stringify({ type: 'FeatureCollection', caution: 'invented' });
  await writeFile(join(fx.dir, 'anomalies.geojson'), `${head.slice(0, -1)},"features":[\n${features.map((f) => JSON.stringify(f)).join(',\n')}\n]}\n`);
  const types = ['electric', 'water', 'gas', 'sewer', 'communication', 'unknown', 'temporary-survey'] as const;
  const decisions = features.flatMap((f, i): Record<string, unknown>[] => {
    const p = f.properties as { id: string; depthTopM: number; depthBottomM: number };
    const base = { anomalyId: p.id, anchor: { lon: -81, lat: 40, depthTopM: p.depthTopM, depthBottomM: p.depthBottomM }, updatedAt: '2026-12-01T10:00:00.000Z' };
    if (i % 10 === 1) return [{ ...base, decision: 'reject', note: 'a rock, "probably"' }];
    if (i % 10 === 3) return [{ ...base, decision: 'accept', origin: 'subsurface', utilityType: 'sewer', label: 'mh <1> & co', note: 'line one\nline two, "quoted"' }];
    if (i % 10 === 4) return [{ ...base, decision: 'accept', origin: 'above-ground' }];
    if (i % 10 === 6) return [{ ...base, decision: 'accept', utilityType: types[i % types.length], by: 'reviewer' }];
    if (i % 10 === 8) return [{ ...base, decision: 'undecided', note: 'é — ünïcode' }];
    return [];
  });
  decisions.push({ anomalyId: 'gone', anchor: { lon: -81, lat: 40, depthTopM: 0, depthBottomM: 1 }, updatedAt: '2026-12-01T10:00:00.000Z', decision: 'reject' });
  await writeFile(join(fx.dir, 'review.json'), JSON.stringify({ version: 1, site: fx.identity, decisions }));
  return { ...fx, features };
}

/** The five files as the whole-collection builders make them from the same folder. */
async function wholeFiles(dir: string): Promise<Record<string, Buffer>> {
  const run = await readRun(dir);
  const anomalies = await readAnomalies(dir);
  const velocity = await readVelocity(dir);
  const review = await readReview(join(dir, 'review.json'), run.identity);
  const slices = await readSlicesInfo(dir);
  const { targets, dropped } = buildTargets(anomalies, review.decisions, velocity, run.site.crs, folderDepthError(velocity, slices, run.site.antenna?.frequencyMHz));
  const ids = new Set(anomalies.map((a) => a.properties.id));
  const ctx: ExportContext = { siteName: run.site.name, crs: run.site.crs, method: 'GPR, 400 MHz, depth slices', surveyDate: null, exportDate: NOW.toISOString() };
  const thumbnails = slices ? await sliceThumbnails(dir, slices, { maxSize: 240 }) : [];
  const unmatchedDecisions = review.decisions.filter((d) => !ids.has(d.anomalyId)).length;
  return {
    'targets.geojson': Buffer.from(targetsGeoJson(targets, ctx)),
    'targets.gpkg': Buffer.from(await targetsGpkg(targets, ctx)),
    'targets.csv': Buffer.from(targetsCsv(targets, ctx)),
    'targets.dxf': Buffer.from(targetsDxf(targets, ctx)),
    'report.html': Buffer.from(reportHtml({ run, velocity, targets, dropped, anomalies, thumbnails, ctx, unmatchedDecisions, ...(slices ? { slices } : {}), background: await readMapBackground(dir, run.site.crs) })),
  };
}

describe('streamed export', () => {
  let fx: Awaited<ReturnType<typeof syntheticFolder>>;
  let reference: Record<string, Buffer>;
  beforeAll(async () => {
    fx = await syntheticFolder();
    reference = await wholeFiles(fx.dir);
  });

  it('writes the same bytes as the whole-collection builders, for all five files', async () => {
    const r = await exportTargets(fx.dir, { now: NOW });
    const run = await readRun(fx.dir);
    const { targets, dropped } = buildTargets(await readAnomalies(fx.dir), (await readReview(join(fx.dir, 'review.json'), run.identity)).decisions, await readVelocity(fx.dir), run.site.crs);
    // The mix the test is meant to hold (counts from the generator's own rules).
    expect(r.targets).toBe(targets.length);
    expect(targets.filter((t) => t.kind === 'linear').length).toBeGreaterThan(50);
    expect(targets.filter((t) => t.screenedOrigin === 'above-ground').length).toBeGreaterThan(5);
    expect(targets.filter((t) => t.wgs84.type === 'Point').length).toBeGreaterThan(2);
    expect(targets.filter((t) => t.wgs84.type === 'MultiPolygon').length).toBeGreaterThan(5);
    expect(dropped.filter((d) => d.reason === 'relabelled above-ground').length).toBeGreaterThan(5);
    expect(r.rejected).toBe(dropped.filter((d) => d.reason === 'rejected').length);
    expect(r.rejected).toBeGreaterThan(20);
    expect(r.aboveGround).toBe(dropped.filter((d) => d.reason !== 'rejected').length);
    expect(r.targets + r.rejected + r.aboveGround).toBe(targets.length + dropped.length);
    expect(targets.length + dropped.length).toBeLessThan(N); // some have no plan position: in no file
    expect(r.unmatchedDecisions).toBe(1);
    for (const name of EXPORT_FILES) {
      const got = await readFile(join(fx.dir, name));
      expect(got.length, name).toBe(reference[name]!.length);
      expect(got.equals(reference[name]!), name).toBe(true);
    }
    expect((await readdir(fx.dir)).filter((f) => f.startsWith('.'))).toEqual([]); // no temp or spill left
  });

  it('targets.geojson is JSON.stringify(collection, null, 1), as the builder was defined before it was split', async () => {
    const run = await readRun(fx.dir);
    const ctx: ExportContext = { siteName: run.site.name, crs: run.site.crs, method: 'm', surveyDate: null, exportDate: NOW.toISOString() };
    const { targets } = buildTargets(await readAnomalies(fx.dir), [], await readVelocity(fx.dir), run.site.crs);
    for (const ts of [targets, targets.slice(0, 1), []]) {
      const fc = {
        type: 'FeatureCollection',
        features: ts.map((t) => ({
          type: 'Feature',
          id: t.id,
          geometry: t.wgs84,
          properties: { ...targetProperties(t, ctx), centroid: t.centroidLonLat, ...(t.outlineWgs84 ? { outline: t.outlineWgs84 } : {}), ...(t.vertexDepthsM ? { vertexDepthsM: t.vertexDepthsM } : {}) },
        })),
      };
      expect(targetsGeoJson(ts, ctx)).toBe(JSON.stringify(fc, null, 1) + '\n');
    }
  });

  it('the same bytes when anomalies.geojson is laid out otherwise (the whole-file fallback)', async () => {
    const text = await readFile(join(fx.dir, 'anomalies.geojson'), 'utf8');
    await writeFile(join(fx.dir, 'anomalies.geojson'), JSON.stringify(JSON.parse(text), null, 2));
    try {
      await exportTargets(fx.dir, { now: NOW });
      for (const name of EXPORT_FILES) expect((await readFile(join(fx.dir, name))).equals(reference[name]!), name).toBe(true);
    } finally {
      await writeFile(join(fx.dir, 'anomalies.geojson'), text);
    }
  });

  it('the same bytes with ownFiles (the files not checked against their schemas again)', async () => {
    await exportTargets(fx.dir, { now: NOW, ownFiles: true });
    for (const name of EXPORT_FILES) expect((await readFile(join(fx.dir, name))).equals(reference[name]!), name).toBe(true);
    // what is read is the object checkContract would have returned: the same values, checked or not
    expect(await readRun(fx.dir, { trusted: true })).toEqual(await readRun(fx.dir));
    expect(await readVelocity(fx.dir, { trusted: true })).toEqual(await readVelocity(fx.dir));
    const trusted = [];
    for await (const a of streamAnomalies(fx.dir, { trusted: true })) trusted.push(a);
    expect(trusted).toEqual(await readAnomalies(fx.dir));
  });

  it('streamAnomalies yields what readAnomalies returns, one at a time', async () => {
    const all = await readAnomalies(fx.dir);
    const streamed = [];
    for await (const a of streamAnomalies(fx.dir)) streamed.push(a);
    expect(streamed).toEqual(all);
    expect(all).toHaveLength(N);
  });

  it('a bad feature late in the file: the InputError comes before anything is staged, and the old files stay', async () => {
    const before = await readFile(join(fx.dir, 'targets.csv'));
    const text = await readFile(join(fx.dir, 'anomalies.geojson'), 'utf8');
    const lines = text.split('\n');
    lines[N - 1] = lines[N - 1]!.replace(/"depthTopM":[^,]+/, '"depthTopM":"deep"');
    await writeFile(join(fx.dir, 'anomalies.geojson'), lines.join('\n'));
    try {
      await expect(exportTargets(fx.dir, { now: NOW })).rejects.toThrow(new RegExp(`anomalies\\.geojson: features\\[${N - 2}\\]\\.properties\\.depthTopM: expected a depth in metres, found "deep"`));
      expect((await readFile(join(fx.dir, 'targets.csv'))).equals(before)).toBe(true);
      expect((await readdir(fx.dir)).filter((f) => f.startsWith('.'))).toEqual([]);
    } finally {
      await writeFile(join(fx.dir, 'anomalies.geojson'), text);
    }
  });
});
