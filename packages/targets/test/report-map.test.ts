// The plan maps, method statement and limitations of report.html (issue 14, part 3).
import { readFile } from 'node:fs/promises';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { resolveCrs, pointFromWgs84 } from '@lamina/site';
import { exportTargets } from '../src';
import { niceStep, planMapSvg } from '../src/plan-map';
import { mapDepthRanges, trueNorthDeg } from '../src/report-map';
import { lineDirections } from '../src/report-method';
import { makeFolder, py, standardDecisions } from './fixture';

const NOW = new Date('2026-12-01T12:00:00.000Z');

/** The SVG maps of a report, in order. */
const mapsOf = (html: string) => [...html.matchAll(/<svg xmlns="http:\/\/www.w3.org\/2000\/svg" class="plan-map"[\s\S]*?<\/svg>/g)].map((m) => m[0]);
const attr = (el: string, name: string) => Number(new RegExp(`${name}="([^"]+)"`).exec(el)![1]);

describe('report.html plan maps', () => {
  for (const [crs, origin] of [
    ['EPSG:32617', [431250, 4429800]],
    ['EPSG:2264', [2100000, 740000]],
  ] as const) {
    it(`${crs}: one symbol per target, and a scale bar that matches the CRS distance`, async () => {
      const fx = await makeFolder({ crs, origin: [...origin], decisions: standardDecisions });
      await exportTargets(fx.dir, { now: NOW });
      const html = await readFile(join(fx.dir, 'report.html'), 'utf8');
      const targets = JSON.parse(await readFile(join(fx.dir, 'targets.geojson'), 'utf8')).features as { properties: { id: string; decision: string } }[];
      const maps = mapsOf(html);
      // all depths + three depth ranges of the slices (0.4-1.1 m)
      expect(maps.length).toBe(4);
      const all = maps[0]!;
      const symbols = [...all.matchAll(/class="target" data-id="([^"]+)" data-decision="([^"]+)"/g)].map((m) => [m[1], m[2]]);
      expect(symbols.map((s) => s[0]).sort()).toEqual(targets.map((t) => t.properties.id).sort());
      for (const t of targets) expect(symbols.find((s) => s[0] === t.properties.id)![1]).toBe(t.properties.decision);
      // flagged anomalies are drawn apart (G: the fence reflection; U relabelled above-ground in review)
      expect(all.match(/class="flagged"/g)?.length).toBeGreaterThanOrEqual(1);

      // The scale bar: its drawn length over the map scale is the length it claims, in CRS units, and
      // metres = CRS units x metres per unit (US survey foot 1200/3937 m: NIST SP 811).
      const mmPerUnit = attr(all, 'data-mm-per-unit');
      const bar = /<g class="scale-bar" data-length="([^"]+)" data-length-m="([^"]+)">[\s\S]*?<line x1="([^"]+)" y1="[^"]+" x2="([^"]+)"/.exec(all)!;
      const [lengthUnits, lengthM, x1, x2] = [Number(bar[1]), Number(bar[2]), Number(bar[3]), Number(bar[4])];
      expect((x2 - x1) / mmPerUnit).toBeCloseTo(lengthUnits, 1);
      expect(lengthM).toBeCloseTo(lengthUnits * fx.crs.metresPerUnit, 9);
      // ...and the same scale measured on a drawn survey line whose length the fixture fixed (20 m):
      // drawn mm / (mm per metre from the bar) = 20 m.
      const line = /<g class="survey-lines"[^>]*><polyline points="([^"]+)"/.exec(all)![1]!.split(' ').map((p) => p.split(',').map(Number));
      const drawnMm = Math.hypot(line[line.length - 1]![0]! - line[0]![0]!, line[line.length - 1]![1]! - line[0]![1]!);
      expect(drawnMm / ((x2 - x1) / lengthM)).toBeCloseTo(20, 1);
      // The method statement and the limitations come from the run's own records.
      expect(html).toContain('<h2>Method</h2>');
      expect(html).toMatch(/Line direction: 90° from grid north \(3 lines\)/);
      expect(html).toMatch(/The lines run in one direction/);
      expect(html).toContain('The slices reach 1.1 m');
      expect(html).toContain('Appendix: hyperbola fits');
      expect(html).toMatch(/<tr class="marked">[\s\S]*?not used \(above-ground\)/);
      // the header no longer claims quality level B for the whole report
      expect(html).not.toContain('Quality level B (CI/ASCE 38-22).</p>');
    });
  }
});

describe('map pieces', () => {
  it('niceStep: 1, 2 or 5 x 10^n, not above the input', () => {
    expect([0.7, 1, 1.9, 2, 4.9, 5, 9.99, 12, 260].map(niceStep)).toEqual([0.5, 1, 1, 2, 2, 5, 5, 10, 200]);
  });

  it('true north: transverse Mercator convergence gamma = atan(tan(lon - lon0) sin(lat)) (Snyder 1987, Map Projections: A Working Manual, USGS PP 1395, from memory)', () => {
    const crs = resolveCrs('EPSG:32617'); // UTM 17N, central meridian -81
    for (const [lon, lat] of [
      [-78, 40],
      [-84, 50],
      [-81, 30],
    ]) {
      const [x, y] = pointFromWgs84(crs, lon!, lat!);
      const gamma = (Math.atan(Math.tan(((lon! + 81) * Math.PI) / 180) * Math.sin((lat! * Math.PI) / 180)) * 180) / Math.PI;
      // grid north is rotated east of true north east of the central meridian: true north bears -gamma
      expect(trueNorthDeg(crs, x, y)).toBeCloseTo(-gamma, 2);
    }
  });

  it('depth ranges split the sliced span in three, bounds to 0.1 m; none for a thin span', () => {
    expect(mapDepthRanges([{ topM: 0, bottomM: 0.5 }, { topM: 0.5, bottomM: 2.9 }])).toEqual([
      [0, 1],
      [1, 1.9],
      [1.9, 2.9],
    ]);
    expect(mapDepthRanges([{ topM: 0.4, bottomM: 0.6 }])).toEqual([]);
  });

  it('line directions group within 10 degrees, on the half circle', () => {
    const d = lineDirections([
      [[0, 0], [10, 0]],
      [[10, 1], [0, 1.05]],
      [[0, 0], [0, 10]],
      [[0, 0], [0.1, -10]],
    ]);
    expect(d.map((g) => g.lines)).toEqual([2, 2]);
    expect(d[0]!.bearingDeg).toBeCloseTo(90, 0);
    expect(Math.min(d[1]!.bearingDeg, 180 - d[1]!.bearingDeg)).toBeLessThan(1);
  });

  it('a map of nothing but a frame still draws its furniture', () => {
    const svg = planMapSvg({ bbox: [0, 0, 100, 50], metresPerUnit: 1, unitName: 'm', northDeg: 0 }, { lines: [], plan: [], targets: [], flagged: [] }, null);
    expect(svg).toContain('class="scale-bar" data-length="20"');
    expect(svg).toContain('class="north-arrow"');
  });
});

describe('survey metadata in every export (issue 14, part 2)', () => {
  it('site.json survey block: GeoJSON, GeoPackage and CSV columns, DXF comments GDAL skips, report rows', async () => {
    const survey = { date: '2026-11-30', operator: 'A. Crew', client: 'Invented Works Ltd', equipment: 'cart radar', antennaSerial: 'SN-0042', positioning: { method: 'RTK GNSS', accuracyM: 0.03 }, groundConditions: 'dry gravel' };
    const fx = await makeFolder({ crs: 'EPSG:32617', origin: [431250, 4429800], decisions: standardDecisions, survey });
    await exportTargets(fx.dir, { now: NOW });
    const fc = JSON.parse(await readFile(join(fx.dir, 'targets.geojson'), 'utf8'));
    for (const f of fc.features) {
      expect(f.properties).toMatchObject({ surveyDate: '2026-11-30', operator: 'A. Crew', equipment: 'cart radar, antenna s/n SN-0042', positioning: 'RTK GNSS', positioningAccuracyM: 0.03 });
    }
    // read back through GDAL (Debian gdal-bin / python3-gdal): the GeoPackage columns and the DXF, whose
    // 999 comment groups a DXF reader skips (DXF reference: group code 999 = comment)
    const out = py(
      `
import sys, json
from osgeo import ogr, gdal
gdal.UseExceptions()
g = ogr.Open(sys.argv[1] + '/targets.gpkg')
l = g.GetLayerByName('targets')
f = l.GetNextFeature()
d = ogr.Open(sys.argv[1] + '/targets.dxf')
print(json.dumps({'operator': f.GetField('operator'), 'acc': f.GetField('positioningAccuracyM'), 'date': f.GetField('surveyDate'), 'dxf': d.GetLayer(0).GetFeatureCount()}))
`,
      [fx.dir],
    );
    const r = JSON.parse(out);
    expect(r).toMatchObject({ operator: 'A. Crew', acc: 0.03, date: '2026-11-30' });
    expect(r.dxf).toBe(2 * fc.features.length); // a geometry and a label per target, as without comments
    const dxf = await readFile(join(fx.dir, 'targets.dxf'), 'utf8');
    expect(dxf).toMatch(/^999\r?\nLamina targets of site fixture/);
    expect(dxf).toContain('positioning: RTK GNSS, stated accuracy 0.03 m');
    const csv = (await readFile(join(fx.dir, 'targets.csv'), 'utf8')).split('\r\n');
    const head = csv[0]!.split(',');
    const row = csv[1]!.split(',');
    expect(row[head.indexOf('survey_date')]).toBe('2026-11-30');
    expect(row[head.indexOf('operator')]).toBe('A. Crew');
    const html = await readFile(join(fx.dir, 'report.html'), 'utf8');
    expect(html).toContain('<tr><th>Operator / crew</th><td>A. Crew</td></tr>');
    expect(html).toContain('RTK GNSS, stated horizontal accuracy 0.03 m');
  });
});

describe('report.html velocity summary', () => {
  it("shows velocity.json's site note and marks flagged subsurface fits with their flags", async () => {
    const { velocitySummary } = await import('../src/report-method');
    const fit = (flags?: string[]) => ({ line: 'L1', trace: 5, t0Ns: 9, depthM: 0.5, velocityMPerNs: 0.13, uncertaintyMPerNs: 0.01, permittivity: 5.3, origin: 'subsurface', ...(flags ? { flags } : {}) });
    const note = 'no fit below the direct-wave zone: the site rests on fits whose apexes lie inside it';
    const raw = { site: { velocityMPerNs: 0.13, permittivity: 5.3, spreadMPerNs: 0.01, fitCount: 2, note }, model: { kind: 'constant', layers: [] }, hyperbolas: [fit(['apex in the direct-wave zone']), fit()] };
    const { summary, appendix } = velocitySummary({ velocityMPerNs: 0.13, permittivity: 5.3, spreadMPerNs: 0.01, fitCount: 2, raw } as never);
    expect(summary).toContain(note);
    expect(appendix).toContain('flagged: apex in the direct-wave zone');
    expect(appendix.match(/class="marked"/g)?.length).toBe(1);
  });

  it("states the site velocity's own uncertainty and what it rests on: fitted objects, or the assumed velocity", async () => {
    const { velocitySummary } = await import('../src/report-method');
    const site = { velocityMPerNs: 0.1, permittivity: 8.99, spreadMPerNs: 0.004, uncertaintyMPerNs: 0.02, fitCount: 3, objectCount: 1 };
    const fitted = velocitySummary({ ...site, raw: { site, model: { kind: 'constant', layers: [] }, hyperbolas: [] } } as never).summary;
    expect(fitted).toContain('± 0.0200 m/ns (20 %)');
    expect(fitted).toContain('from 3 fits on 1 object:');
    const none = { velocityMPerNs: 0.1, permittivity: 8.99, spreadMPerNs: 0, uncertaintyMPerNs: 0.0291, fitCount: 0 };
    const assumed = velocitySummary({ ...none, raw: { site: none, model: { kind: 'constant', layers: [] }, hyperbolas: [] } } as never).summary;
    expect(assumed).toContain('assumed, so the range of common soils');
    // a file written before the field: no row
    const old = { velocityMPerNs: 0.1, permittivity: 8.99, spreadMPerNs: 0.004, fitCount: 3 };
    expect(velocitySummary({ ...old, raw: { site: old, model: { kind: 'constant', layers: [] }, hyperbolas: [] } } as never).summary).not.toContain('Site velocity uncertainty');
  });
});
