import { PYTHON } from '@lamina/test-utils';
import { spawnSync } from 'node:child_process';
import { readFile, readdir, stat, writeFile } from 'node:fs/promises';
import { join } from 'node:path';
import { beforeAll, describe, expect, it } from 'vitest';
import { FOLDER_FILES, checkFolder, targetFieldsSchema } from '@lamina/contracts';
import { lookupEpsg } from '@lamina/site';
import { CAUTIONS } from '@lamina/constants';
import { APWA_COLOURS, CSV_COLUMNS, TARGET_FIELDS, exportTargets, readAnomalies, type ExportResult } from '../src';
import { makeFolder, py, standardDecisions, type Fixture } from './fixture';

const NOW = new Date('2026-12-01T12:00:00.000Z');
const run = (cmd: string, args: string[]) => {
  const r = spawnSync(cmd, args, { encoding: 'utf8' });
  return { code: r.status, out: r.stdout + r.stderr };
};

/** One GDAL/OGR dump of every export, so each test reads what the reference library sees. */
function ogrDump(dir: string) {
  return JSON.parse(
    py(
      `
import sys, json
from osgeo import ogr, osr
ogr.UseExceptions()
d = sys.argv[1]
out = {}
g = ogr.Open(d + '/targets.gpkg')
out['gpkg'] = {}
for i in range(g.GetLayerCount()):
    l = g.GetLayer(i)
    s = l.GetSpatialRef()
    feats = []
    if l.GetGeomType() == ogr.wkbNone:
        # an attributes table (layer_styles): its rows as they are
        out['gpkg'][l.GetName()] = {'count': l.GetFeatureCount(), 'rows': [json.loads(f.ExportToJson())['properties'] for f in l]}
        continue
    for f in l:
        geom = f.GetGeometryRef()
        feats.append({'props': json.loads(f.ExportToJson())['properties'], 'type': geom.GetGeometryName(), 'first': list(geom.GetPoint_2D(0)) if geom.GetGeometryName() in ('POINT','LINESTRING') else list(geom.GetGeometryRef(0).GetPoint_2D(0)) if geom.GetGeometryName()=='POLYGON' else None})
    out['gpkg'][l.GetName()] = {'count': l.GetFeatureCount(), 'auth': s.GetAuthorityCode(None) if s else None, 'unit': s.GetLinearUnitsName() if s and s.IsProjected() else None,
        'toMeter': s.GetLinearUnits() if s and s.IsProjected() else None, 'geographic': bool(s and s.IsGeographic()),
        'fields': [l.GetLayerDefn().GetFieldDefn(j).GetName() for j in range(l.GetLayerDefn().GetFieldCount())], 'features': feats}
x = ogr.Open(d + '/targets.dxf')
l = x.GetLayer(0)
out['dxf'] = []
for f in l:
    geom = f.GetGeometryRef()
    out['dxf'].append({'layer': f.GetField('Layer'), 'type': geom.GetGeometryName(), 'z': geom.GetZ(0), 'zs': [geom.GetZ(i) for i in range(geom.GetPointCount())], 'n': geom.GetPointCount(), 'x': geom.GetX(0), 'y': geom.GetY(0), 'text': f.GetField('Text')})
j = ogr.Open(d + '/targets.geojson')
l = j.GetLayer(0)
out['geojson'] = {'count': l.GetFeatureCount(), 'auth': l.GetSpatialRef().GetAuthorityCode(None)}
print(json.dumps(out))
`,
      [dir],
    ),
  );
}

describe('exportTargets on an EPSG:32617 (metre) folder', () => {
  let fx: Fixture;
  let result: ExportResult;
  let dump: ReturnType<typeof ogrDump>;
  beforeAll(async () => {
    fx = await makeFolder({ crs: 'EPSG:32617', origin: [431250, 4429800], name: 'yard-test', decisions: standardDecisions });
    result = await exportTargets(fx.dir, { now: NOW });
    dump = ogrDump(fx.dir);
  });

  it('counts targets: subsurface not rejected, relabels applied', () => {
    // W, E, C subsurface; R rejected; G above-ground; U relabelled subsurface; D relabelled above-ground.
    expect(result.targets).toBe(4);
    expect(result.rejected).toBe(1);
    expect(result.aboveGround).toBe(2);
    expect(result.files.sort()).toEqual(['report.html', 'targets.csv', 'targets.dxf', 'targets.geojson', 'targets.gpkg']);
  });

  it('targets.geojson: RFC 7946 FeatureCollection with the fixed properties, read by GDAL as EPSG:4326', async () => {
    const fc = JSON.parse(await readFile(join(fx.dir, 'targets.geojson'), 'utf8'));
    expect(fc.type).toBe('FeatureCollection');
    expect(fc.crs).toBeUndefined(); // RFC 7946 section 4: no crs member, WGS84 lon/lat
    expect(dump.geojson).toEqual({ count: 4, auth: '4326' });
    const ids = fc.features.map((f: { properties: { id: string } }) => f.properties.id).sort();
    expect(ids).toEqual(['C', 'E', 'U', 'W']);
    for (const f of fc.features) {
      for (const [name] of TARGET_FIELDS) expect(f.properties).toHaveProperty(name);
      // CI/ASCE 38-22 quality level B only for what a person accepted in review (issue 14)
      expect(f.properties.qualityLevel).toBe(f.properties.decision === 'accepted' ? 'B' : null);
      expect(f.properties.origin).toBe('subsurface');
      expect(f.properties.method).toBe('GPR, 400 MHz, depth slices');
      expect(f.properties.exportDate).toBe(NOW.toISOString());
      // International foot, 0.3048 m exactly (NIST SP 811, appendix B).
      expect(f.properties.depthTopFt).toBeCloseTo(f.properties.depthTopM / 0.3048, 4);
      expect(f.properties.depthBottomFt).toBeCloseTo(f.properties.depthBottomM / 0.3048, 4);
      // Three parts in quadrature: dz/z = dv/v for z = v t / 2 at a fixed two-way time (0.005 / 0.1 = 5 %);
      // half the slice thickness (0.2 m slices: 0.1 m); a quarter wavelength, v / (4 f) = 0.1 m/ns / (4 x
      // 400 MHz) = 0.0625 m (the vertical-resolution rule: common practice, no source).
      const dz = (z: number) => Math.sqrt((z * 0.05) ** 2 + 0.1 ** 2 + 0.0625 ** 2);
      expect(f.properties.depthUncertaintyM).toBeCloseTo(dz(f.properties.depthTopM), 4);
      expect(f.properties.depthBottomUncertaintyM).toBeCloseTo(dz(f.properties.depthBottomM), 4);
      // never "+- 0.00": the floor holds at the surface
      expect(f.properties.depthUncertaintyM).toBeGreaterThanOrEqual(Math.hypot(0.1, 0.0625) - 1e-4);
      // P(above-ground) is the screening's probability, not a confidence in the target (issue 14)
      expect(f.properties).not.toHaveProperty('confidence');
      expect(f.properties.pAboveGround).toBeCloseTo(f.properties.screenedOrigin === 'above-ground' ? 0.8 : 0.2, 6);
    }
    const byId = Object.fromEntries(fc.features.map((f: { properties: { id: string } }) => [f.properties.id, f]));
    expect(byId.W.geometry.type).toBe('LineString'); // centreline for linear targets
    expect(byId.W.properties.lengthM).toBeCloseTo(18, 2); // 1 m to 19 m along x (UTM scale 0.9996.. is in the grid, not here: plan length in grid metres)
    expect(byId.C.geometry.type).toBe('Polygon');
    expect(byId.W.properties.apwaColour).toBe(APWA_COLOURS.water.hex);
    expect(byId.U.properties.utilityType).toBe('sewer');
    expect(byId.U.properties.screenedOrigin).toBe('above-ground');
    expect(byId.C.properties.utilityType).toBeNull();
  });

  // The fixture folder and what export wrote into it keep the contracts of @lamina/contracts; the
  // GeoPackage's fields are the contract's target fields in order.
  it('the folder parses with @lamina/contracts and the target fields are the contract\'s', async () => {
    const names = FOLDER_FILES.map(([n]) => n);
    expect(await checkFolder(fx.dir)).toEqual(names.filter((n) => ['run.json', 'lines.geojson', 'plan.geojson', 'velocity.json', 'slices.json', 'anomalies.geojson', 'review.json', 'targets.geojson'].includes(n)));
    expect(TARGET_FIELDS.map(([n]) => n)).toEqual(Object.keys(targetFieldsSchema.shape));
  });

  it('targets.gpkg passes GDAL validate_gpkg and opens with both layers, counts, CRS and fields', async () => {
    const v = run(PYTHON, ['-m', 'osgeo_utils.samples.validate_gpkg', join(fx.dir, 'targets.gpkg')]);
    expect(v.out.trim()).toBe('');
    expect(v.code).toBe(0);
    const so = run('ogrinfo', ['-al', '-so', join(fx.dir, 'targets.gpkg')]).out;
    expect(so).toMatch(/Layer name: targets\n/);
    expect(so).toMatch(/Layer name: targets_wgs84\n/);
    expect(so.match(/Feature Count: 4/g)).toHaveLength(2);
    expect(dump.gpkg.targets.auth).toBe('32617');
    expect(dump.gpkg.targets_wgs84.auth).toBe('4326');
    expect(dump.gpkg.targets.fields).toEqual(TARGET_FIELDS.map(([n]) => n));
    // issue 14 part 4: the default style of both layers in layer_styles, listed by ogrinfo (it is in
    // gpkg_contents as an attributes table), the SLD well-formed XML (Python's xml.etree) whose rules give
    // accepted targets their APWA colour solid and candidates dashed
    expect(so).toMatch(/Layer name: layer_styles\n/);
    const styles = dump.gpkg.layer_styles.rows as { f_table_name: string; styleSLD: string; styleQML: string; useAsDefault: number }[];
    expect(styles.map((r) => r.f_table_name).sort()).toEqual(['targets', 'targets_wgs84']);
    expect(styles.every((r) => r.useAsDefault === 1)).toBe(true);
    const sld = JSON.parse(
      py(
        `
import sys, json, xml.etree.ElementTree as ET
ns = {'se': 'http://www.opengis.net/se', 'ogc': 'http://www.opengis.net/ogc'}
root = ET.fromstring(sys.argv[1].encode())
ET.fromstring(sys.argv[2].encode())  # the QML parses too
rules = []
for r in root.iter('{http://www.opengis.net/se}Rule'):
    lits = [l.text for l in r.iter('{http://www.opengis.net/ogc}Literal')]
    stroke = r.find('se:LineSymbolizer/se:Stroke', ns)
    params = {p.get('name'): p.text for p in stroke.findall('se:SvgParameter', ns)}
    rules.append({'literals': lits, 'stroke': params.get('stroke'), 'dash': params.get('stroke-dasharray')})
print(json.dumps(rules))
`,
        [styles[0]!.styleSLD, styles[0]!.styleQML],
      ),
    ) as { literals: string[]; stroke: string; dash: string | null }[];
    const water = sld.find((r) => r.literals.join() === 'accepted,water')!;
    expect(water.stroke).toBe(APWA_COLOURS.water.hex);
    expect(water.dash).toBeNull();
    expect(sld.find((r) => r.literals.join() === 'candidate,water')!.dash).toBeTruthy();
    expect(sld.filter((r) => r.literals[0] === 'accepted')).toHaveLength(sld.length / 2);
    // The header's first bytes per OGC 12-128r18 section 1.1.1: application_id "GPKG", user_version 10300.
    const bytes = await readFile(join(fx.dir, 'targets.gpkg'));
    expect(bytes.readUInt32BE(68)).toBe(0x47504b47);
    expect(bytes.readUInt32BE(60)).toBe(10300);
  });

  it('gpkg geometries agree with the GeoJSON through the site CRS (site layer within 1 mm of the fixture)', () => {
    const w = dump.gpkg.targets.features.find((f: { props: { id: string } }) => f.props.id === 'W');
    expect(w.type).toBe('LINESTRING');
    expect(w.first[0]).toBeCloseTo(431251, 3);
    expect(w.first[1]).toBeCloseTo(4429805, 3);
    const ww = dump.gpkg.targets_wgs84.features.find((f: { props: { id: string } }) => f.props.id === 'W');
    expect(ww.first[0]).toBeLessThan(-81);
    expect(ww.first[1]).toBeGreaterThan(40);
    expect(w.props.utilityType).toBe('water');
    expect(w.props.depthTopFt).toBeCloseTo(1.0 / 0.3048, 4);
  });

  it('targets.dxf: GDAL reads one geometry and one label per target, layers by review state and utility type, Z = -depth', () => {
    expect(dump.dxf).toHaveLength(8);
    const layers = new Set(dump.dxf.map((e: { layer: string }) => e.layer));
    // accepted targets on LAMINA_<type>, candidates nobody reviewed apart on LAMINA_CANDIDATE_<type> (issue 14)
    expect([...layers].sort()).toEqual(['LAMINA_CANDIDATE_UNKNOWN', 'LAMINA_ELECTRIC', 'LAMINA_SEWER', 'LAMINA_WATER']);
    const line = dump.dxf.find((e: { layer: string; type: string }) => e.layer === 'LAMINA_WATER' && e.type === 'LINESTRING');
    expect(line.n).toBe(3);
    expect(line.z).toBeCloseTo(-1.0, 6);
    expect(line.zs[1]).toBeCloseTo(-1.0, 6); // in both members: the shallower
    expect(line.zs[2]).toBeCloseTo(-1.1, 6); // east half seen from 1.1 m only
    expect(line.x).toBeCloseTo(431251, 3);
    const pt = dump.dxf.find((e: { layer: string; type: string }) => e.layer === 'LAMINA_CANDIDATE_UNKNOWN' && e.type === 'POINT');
    expect(pt.z).toBeCloseTo(-0.8, 6);
    const texts = dump.dxf.filter((e: { text: string | null }) => e.text).map((e: { text: string }) => e.text);
    expect(texts).toHaveLength(4);
    expect(texts.find((t: string) => t.startsWith('W '))).toMatch(/top 1\.00 m \(3\.28 ft\)/);
  });

  it('targets.csv parses back with Python csv; ft, coordinates and WKT agree', () => {
    const rows = JSON.parse(
      py(
        `
import csv, json, sys
from osgeo import ogr
rows = list(csv.DictReader(open(sys.argv[1], newline='')))
for r in rows:
    g = ogr.CreateGeometryFromWkt(r['wkt'])
    r['wktType'] = g.GetGeometryName()
    r['wktLength'] = g.Length()
print(json.dumps(rows))
`,
        [join(fx.dir, 'targets.csv')],
      ),
    );
    expect(rows).toHaveLength(4);
    expect(Object.keys(rows[0]).slice(0, CSV_COLUMNS.length)).toEqual([...CSV_COLUMNS]);
    const u = rows.find((r: Record<string, string>) => r.id === 'U');
    expect(u.note).toBe('manhole, "seen" on site, with a comma');
    expect(u.utility_type).toBe('sewer');
    expect(u.apwa_colour).toBe(APWA_COLOURS.sewer.hex);
    const w = rows.find((r: Record<string, string>) => r.id === 'W');
    expect(Number(w.depth_top_ft)).toBeCloseTo(1 / 0.3048, 4);
    expect(w.wktType).toBe('LINESTRING');
    expect(w.wktLength).toBeCloseTo(18, 3);
    expect(Number(w.length_m)).toBeCloseTo(18, 2);
    expect(Number(w.x)).toBeCloseTo(431260, 2); // mid-point of the centreline
    expect(Number(w.y)).toBeCloseTo(4429805, 2);
    const c = rows.find((r: Record<string, string>) => r.id === 'C');
    expect(Number(c.x)).toBeCloseTo(431254.5, 2);
    expect(c.length_m).toBe('');
    const so = run('ogrinfo', ['-al', '-so', '-oo', 'GEOM_POSSIBLE_NAMES=wkt', join(fx.dir, 'targets.csv')]).out;
    expect(so).toMatch(/Feature Count: 4/);
  });

  it('a rejected anomaly is gone from every export; a relabelled above-ground one too', async () => {
    for (const name of ['targets.geojson', 'targets.csv']) {
      const text = await readFile(join(fx.dir, name), 'utf8');
      for (const id of ['R', 'D', 'G']) expect(text).not.toMatch(new RegExp(`"id": ?"${id}"|^${id},`, 'm'));
    }
    const gpkgIds = [...dump.gpkg.targets.features, ...dump.gpkg.targets_wgs84.features].map((f: { props: { id: string } }) => f.props.id);
    for (const id of ['R', 'D', 'G']) expect(gpkgIds).not.toContain(id);
    const dxfText = dump.dxf.map((e: { text: string | null }) => e.text ?? '').join('\n');
    for (const id of ['R', 'D', 'G']) expect(dxfText).not.toMatch(new RegExp(`^${id} `, 'm'));
    const html = await readFile(join(fx.dir, 'report.html'), 'utf8');
    const table = html.slice(html.indexOf('<h2>Targets'), html.indexOf('<h2>Flagged'));
    expect(table).toMatch(/<td>W<\/td>/);
    for (const id of ['R', 'D', 'G']) expect(table).not.toMatch(new RegExp(`<td>${id}</td>`));
  });

  it('report.html: self-contained and printable, with cautions, velocity, thumbnails and flagged reasons', async () => {
    const html = await readFile(join(fx.dir, 'report.html'), 'utf8');
    for (const c of CAUTIONS) expect(html).toContain(c.replace(/'/g, '&#39;').replace(/"/g, '&quot;'));
    expect(html).toMatch(/@media print/);
    expect(html).not.toMatch(/<script|<link|src="http/); // nothing fetched
    expect(html.match(/src="data:image\/png;base64,/g)).toHaveLength(2);
    expect(html).toContain('0.1000 m/ns');
    expect(html).toMatch(/Flagged as above-ground \(2\)/);
    expect(html).toContain('relabelled above-ground in review');
    expect(html).toContain('move-out');
    expect(html).toContain('Rejected in review (1)');
  });
});

describe('exportTargets on US-survey-foot sites', () => {
  it('EPSG:2264: site layer in US survey feet, DXF Z in feet, lengths in metres', async () => {
    const fx = await makeFolder({ crs: 'EPSG:2264', origin: [2100000, 740000], decisions: standardDecisions });
    await exportTargets(fx.dir, { now: NOW });
    const d = ogrDump(fx.dir);
    expect(run(PYTHON, ['-m', 'osgeo_utils.samples.validate_gpkg', join(fx.dir, 'targets.gpkg')]).code).toBe(0);
    expect(d.gpkg.targets.auth).toBe('2264');
    // US survey foot = 1200/3937 m (NIST SP 811; EPSG unit 9003).
    expect(d.gpkg.targets.toMeter).toBeCloseTo(1200 / 3937, 12);
    const line = d.dxf.find((e: { layer: string; type: string }) => e.layer === 'LAMINA_WATER' && e.type === 'LINESTRING');
    expect(line.z).toBeCloseTo(-1.0 / (1200 / 3937), 6);
    expect(line.zs[2]).toBeCloseTo(-1.1 / (1200 / 3937), 6);
    expect(line.x).toBeCloseTo(2100000 + 1 / (1200 / 3937), 3);
    const fc = JSON.parse(await readFile(join(fx.dir, 'targets.geojson'), 'utf8'));
    const w = fc.features.find((f: { properties: { id: string } }) => f.properties.id === 'W');
    expect(w.properties.lengthM).toBeCloseTo(18, 2);
  });

  it('a proj4 string without EPSG code: srs_id 100000 with a WKT GDAL reads as the same CRS', async () => {
    const def = lookupEpsg(2264)!;
    const fx = await makeFolder({ crs: def, origin: [2100000, 740000], decisions: standardDecisions });
    await exportTargets(fx.dir, { now: NOW });
    expect(run(PYTHON, ['-m', 'osgeo_utils.samples.validate_gpkg', join(fx.dir, 'targets.gpkg')]).code).toBe(0);
    const same = py(
      `
import sys
from osgeo import ogr, osr
g = ogr.Open(sys.argv[1]); s = g.GetLayerByName('targets').GetSpatialRef()
r = osr.SpatialReference(); r.ImportFromProj4(sys.argv[2])
print(s.IsSame(r), s.GetLinearUnitsName())
`,
      [join(fx.dir, 'targets.gpkg'), def],
    ).trim();
    expect(same).toBe('1 US survey foot');
  });
});

describe('exportTargets inputs', () => {
  it('a missing review.json means no decisions', async () => {
    const fx = await makeFolder({ crs: 'EPSG:32617', origin: [431250, 4429800], review: false });
    const r = await exportTargets(fx.dir, { now: NOW });
    expect(r.targets).toBe(5); // W, E, C, R, D: every subsurface anomaly
    expect(r.aboveGround).toBe(2);
  });

  it('the site velocity\'s own uncertainty (velocity.json uncertaintyMPerNs) joins the spread in the depth uncertainty', async () => {
    // a site resting on one object: spread 0.005 m/ns among its fits, the site value itself +- 0.02 m/ns
    // (a fifth of v, `ONE_OBJECT_RELATIVE_UNCERTAINTY`): dv = hypot(0.005, 0.02), dz / z = dv / v
    const fx = await makeFolder({ crs: 'EPSG:32617', origin: [431250, 4429800], uncertaintyMPerNs: 0.02 });
    await exportTargets(fx.dir, { now: NOW });
    const fc = JSON.parse(await readFile(join(fx.dir, 'targets.geojson'), 'utf8'));
    const dz = (z: number) => Math.sqrt((z * Math.hypot(0.005, 0.02) / 0.1) ** 2 + 0.1 ** 2 + 0.0625 ** 2);
    expect(fc.features.length).toBeGreaterThan(0);
    for (const f of fc.features) expect(f.properties.depthUncertaintyM).toBeCloseTo(dz(f.properties.depthTopM), 4);
  });

  it('a review.json from another site is an InputError naming the file, and nothing is written', async () => {
    const fx = await makeFolder({ crs: 'EPSG:32617', origin: [431250, 4429800], review: false });
    await writeFile(join(fx.dir, 'review.json'), JSON.stringify({ version: 1, site: { ...fx.identity, name: 'elsewhere' }, decisions: [] }));
    await expect(exportTargets(fx.dir)).rejects.toThrow(/review\.json: site: belongs to another site/);
    expect((await readdir(fx.dir)).filter((f) => f.startsWith('targets') || f === 'report.html')).toEqual([]);
  });

  it('missing anomalies.geojson and a bad depth are InputErrors naming file and field', async () => {
    const fx = await makeFolder({ crs: 'EPSG:32617', origin: [431250, 4429800], review: false });
    const a = JSON.parse(await readFile(join(fx.dir, 'anomalies.geojson'), 'utf8'));
    a.features[2].properties.depthTopM = 'deep';
    await writeFile(join(fx.dir, 'anomalies.geojson'), JSON.stringify(a));
    await expect(exportTargets(fx.dir)).rejects.toThrow(/anomalies\.geojson: features\[2\]\.properties\.depthTopM: expected a depth in metres, found "deep"/);
    await writeFile(join(fx.dir, 'anomalies.geojson'), '');
    await expect(exportTargets(fx.dir)).rejects.toThrow(/anomalies\.geojson: expected JSON/);
  });

  it('reads anomalies.geojson laid out one feature per line (as the pipeline writes it) as it reads it whole', async () => {
    const fx = await makeFolder({ crs: 'EPSG:32617', origin: [431250, 4429800], decisions: standardDecisions });
    const a = JSON.parse(await readFile(join(fx.dir, 'anomalies.geojson'), 'utf8'));
    await writeFile(join(fx.dir, 'anomalies.geojson'), JSON.stringify(a, null, 2));
    const whole = await readAnomalies(fx.dir);
    const { features, ...rest } = a;
    const head = JSON.stringify(rest);
    await writeFile(join(fx.dir, 'anomalies.geojson'), `${head.slice(0, -1)},"features":[\n${features.map((f: unknown) => JSON.stringify(f)).join(',\n')}\n]}\n`);
    expect(await readAnomalies(fx.dir)).toEqual(whole);
    expect(whole.length).toBe(a.features.length);
    // a bad feature on its own line gives the same message as when read whole
    features[1].properties.depthTopM = 'deep';
    await writeFile(join(fx.dir, 'anomalies.geojson'), `${head.slice(0, -1)},"features":[\n${features.map((f: unknown) => JSON.stringify(f)).join(',\n')}\n]}\n`);
    await expect(readAnomalies(fx.dir)).rejects.toThrow(/anomalies\.geojson: features\[1\]\.properties\.depthTopM: expected a depth in metres, found "deep"/);
  });

  it('reruns replace the files (a later rejection removes the target)', async () => {
    const fx = await makeFolder({ crs: 'EPSG:32617', origin: [431250, 4429800], decisions: standardDecisions });
    await exportTargets(fx.dir, { now: NOW });
    const review = JSON.parse(await readFile(join(fx.dir, 'review.json'), 'utf8'));
    review.decisions.find((d: { anomalyId: string }) => d.anomalyId === 'W').decision = 'reject';
    await writeFile(join(fx.dir, 'review.json'), JSON.stringify(review));
    const r = await exportTargets(fx.dir, { now: NOW });
    expect(r.targets).toBe(3);
    const fc = JSON.parse(await readFile(join(fx.dir, 'targets.geojson'), 'utf8'));
    expect(fc.features.map((f: { properties: { id: string } }) => f.properties.id)).not.toContain('W');
    expect((await stat(join(fx.dir, 'targets.gpkg'))).size).toBeGreaterThan(0);
    expect((await readdir(fx.dir)).filter((f) => f.endsWith('.tmp'))).toEqual([]);
  });
});

describe('quality level follows review (issue 14)', () => {
  it('a folder nobody reviewed exports no QL-B row in any format; one accepted target is QL-B in all five', async () => {
    const fresh = await makeFolder({ crs: 'EPSG:32617', origin: [431250, 4429800], name: 'fresh', review: false });
    await exportTargets(fresh.dir, { now: NOW });
    const reviewed = await makeFolder({ crs: 'EPSG:32617', origin: [431250, 4429800], name: 'one-accepted', decisions: () => [{ anomalyId: 'W', decision: 'accept', utilityType: 'water' }] });
    await exportTargets(reviewed.dir, { now: NOW });
    for (const [fx, acceptedIds] of [[fresh, []], [reviewed, ['W']]] as const) {
      const fc = JSON.parse(await readFile(join(fx.dir, 'targets.geojson'), 'utf8'));
      expect(fc.features.length).toBeGreaterThan(0);
      for (const f of fc.features) {
        const accepted = (acceptedIds as readonly string[]).includes(f.properties.id);
        expect(f.properties.decision).toBe(accepted ? 'accepted' : 'candidate');
        expect(f.properties.qualityLevel).toBe(accepted ? 'B' : null);
      }
      const csv = (await readFile(join(fx.dir, 'targets.csv'), 'utf8')).trim().split('\r\n');
      const col = CSV_COLUMNS.indexOf('quality_level');
      const idCol = CSV_COLUMNS.indexOf('id');
      for (const row of csv.slice(1)) {
        const cells = row.split(',');
        expect(cells[col]).toBe((acceptedIds as readonly string[]).includes(cells[idCol]!) ? 'B' : '');
      }
      // GDAL reads the GeoPackage and the DXF (candidates on their own layers)
      const d = ogrDump(fx.dir);
      for (const f of d.gpkg.targets.features) expect(f.props.qualityLevel).toBe((acceptedIds as readonly string[]).includes(f.props.id) ? 'B' : null);
      for (const e of d.dxf) expect(e.layer.startsWith('LAMINA_CANDIDATE_')).toBe(acceptedIds.length === 0 || !e.layer.endsWith('WATER'));
      const report = await readFile(join(fx.dir, 'report.html'), 'utf8');
      expect(report).toContain(`the ${acceptedIds.length} accepted in review carry quality level B`);
      expect(report).toContain('to be confirmed by the responsible professional');
    }
  });
});
