import { execFileSync } from 'node:child_process';
import { mkdirSync, mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { writeSegy } from '@lamina/radar-data';
import { AREA_OF_USE } from '../src/crs-area';
import { checkSurvey, insideArea, loadSite, pointToWgs84, resolveCrs } from '../src';

// Survey checks before processing (issue 16): a small UTM 17N site of three lines 0.5 m apart walking east
// 0.1 m a trace, one line at a time made wrong the way field data goes wrong.
const root = mkdtempSync(join(tmpdir(), 'lamina-survey-'));
afterAll(() => rmSync(root, { recursive: true, force: true }));
const E0 = 500000;
const N0 = 3900000;
const NT = 121;
const NS = 16;
let n = 0;

interface LineSpec {
  x?: (t: number) => number;
  y?: (t: number) => number;
  scalar?: number;
  /** site.json fields instead of header coordinates */
  json?: Record<string, unknown>;
  csv?: string;
}

async function site(lines: LineSpec[], extra: Record<string, unknown> = {}, plan?: unknown): Promise<string> {
  const dir = join(root, `s${n++}`);
  mkdirSync(dir);
  const entries = [];
  for (const [i, l] of lines.entries()) {
    const x = Float64Array.from({ length: NT }, (_, t) => (l.x ? l.x(t) : E0 + 0.1 * t));
    const y = Float64Array.from({ length: NT }, (_, t) => (l.y ? l.y(t) : N0 + 0.5 * i));
    await writeSegy(join(dir, `l${i}.sgy`), { nSamples: NS, dtNs: 0.1, ...(l.scalar !== undefined ? { coordinateScalar: l.scalar } : {}), traces: { data: new Float32Array(NT * NS), x, y } });
    const e: Record<string, unknown> = { file: `l${i}.sgy`, ...l.json };
    if (l.csv !== undefined) {
      writeFileSync(join(dir, `l${i}.csv`), l.csv);
      e.positions = `l${i}.csv`;
    }
    entries.push(e);
  }
  if (plan) writeFileSync(join(dir, 'plan.geojson'), JSON.stringify(plan));
  writeFileSync(join(dir, 'site.json'), JSON.stringify({ name: 'survey check', crs: 'EPSG:32617', antenna: { frequencyMHz: 400, separationM: 0.16 }, lines: entries, ...(plan ? { plan: 'plan.geojson' } : {}), ...extra }));
  return dir;
}

async function failure(dir: string): Promise<string> {
  try {
    await checkSurvey(await loadSite(dir));
  } catch (e) {
    expect((e as Error).name, String(e)).toBe('InputError');
    return (e as Error).message;
  }
  throw new Error('expected an InputError');
}

const good: LineSpec = {};
const crs = resolveCrs('EPSG:32617');

describe('area of use from PROJ', () => {
  it('matches projinfo for a few codes (PROJ 9.1.1, Debian proj-bin: the BBOX of the WKT2 USAGE)', () => {
    for (const code of [32617, 2264, 27700, 7850, 3857, 25832]) {
      const wkt = execFileSync('projinfo', [`EPSG:${code}`, '-o', 'WKT2_2019', '-q'], { encoding: 'utf8' });
      // BBOX[south, west, north, east]
      const boxes = [...wkt.matchAll(/BBOX\[([-\d.]+),([-\d.]+),([-\d.]+),([-\d.]+)\]/g)].map((m) => m.slice(1).map(Number));
      expect(boxes.length, String(code)).toBeGreaterThan(0);
      const [s, w, nn, e] = boxes[boxes.length - 1] as number[];
      expect(AREA_OF_USE[code], String(code)).toEqual([w, s, e, nn]);
    }
  });
  it('insideArea widens by the margin and wraps across 180', () => {
    expect(insideArea(-84.5, 10, [-84, 0, -78, 84], 1)).toBe(true);
    expect(insideArea(-85.5, 10, [-84, 0, -78, 84], 1)).toBe(false);
    expect(insideArea(179.5, -40, [170, -50, -175, -30], 0)).toBe(true);
    expect(insideArea(-176, -40, [170, -50, -175, -30], 0)).toBe(true);
    expect(insideArea(0, -40, [170, -50, -175, -30], 0)).toBe(false);
  });
});

describe('checkSurvey', () => {
  it('passes a good site, with header facts and thinned positions', async () => {
    const r = await checkSurvey(await loadSite(await site([good, good, good])));
    expect(r.lines.map((l) => l.nTraces)).toEqual([NT, NT, NT]);
    expect(r.lines[0]?.stepM).toBeCloseTo(0.1, 6);
    expect(r.bbox).toEqual([E0, N0, E0 + 12, N0 + 1]);
    expect(r.warnings).toEqual([]);
  });

  it('the issue 16 case: one line in degrees with scalar -10000 in a UTM site names the file and traces', async () => {
    const dir = await site([good, good, { x: (t) => -79.5 + 1e-4 * Math.floor(t / 10), y: () => 35.8, scalar: -10000 }]);
    const m = await failure(dir);
    expect(m).toMatch(/l2\.sgy: .*look like degrees .* at traces 1\.\.121; reproject them$/);
  });

  it('part of a line in degrees: the area of use (from PROJ) names the traces and the cause', async () => {
    // the degrees are where the site is (the GPS's own lon/lat), kept to 1e-5 degrees (1 m)
    const [lon, lat] = pointToWgs84(crs, E0, N0 + 1);
    const rows = Array.from({ length: NT }, (_, t) => (t < 60 ? `${t + 1},${E0 + 0.1 * t},${N0 + 1}` : `${t + 1},${(lon + 1e-6 * t).toFixed(6)},${lat.toFixed(6)}`));
    const dir = await site([good, good, { csv: `trace,x,y\n${rows.join('\n')}\n` }]);
    expect(await failure(dir)).toMatch(
      /l2\.csv: expected positions inside the area of use of EPSG:32617 \(lon -84\.\.-78, lat 0\.\.84, from PROJ, with a 1° margin\), found 61 of 121 traces outside \(traces 61\.\.121; .*looks like degrees \(longitude, latitude\) in a projected CRS/,
    );
  });

  it('coordinate scalar applied twice: a line ten times too small', async () => {
    const dir = await site([good, good, { x: (t) => (E0 + 0.1 * t) / 10, y: () => (N0 + 1) / 10 }]);
    expect(await failure(dir)).toMatch(/l2\.sgy: .*looks like the coordinate scalar applied twice \(the values are 10 times too small\)/);
  });

  it('feet read as metres: a line of the site in feet', async () => {
    const ft = 1 / 0.3048;
    const dir = await site([good, good, good, { x: (t) => (E0 + 0.1 * t) * ft, y: () => (N0 + 1.5) * ft }]);
    // a site in UTM: feet also put the line outside the zone's area of use, which names the traces first
    expect(await failure(dir)).toMatch(/l3\.sgy: .*traces 1\.\.121.*looks like feet read as metres/);
  });

  it('a far part of the survey: every line named is outside the main part, with the distance', async () => {
    const dir = await site([good, good, good, { x: (t) => E0 + 5000 + 0.1 * t }]);
    expect(await failure(dir)).toMatch(/l3\.sgy: trace headers \(X\/Y coordinates\): expected line l3 within 1\.0 km of the rest of the survey \(3 lines\), found traces 1\.\.121 4\.99 km away|l3\.sgy: .*expected line l3 within 1\.0 km of the rest of the survey \(3 lines\), found traces 1\.\.121 5\.0 km away/);
  });

  it('a median trace spacing coarser than one wavelength in air (0.75 m at 400 MHz)', async () => {
    const dir = await site([good, { json: { start: [E0, N0 + 0.5], end: [E0 + 120, N0 + 0.5] } }]);
    expect(await failure(dir)).toMatch(/site\.json: lines\[1\]: expected a median trace spacing of at most one wavelength in air at 400 MHz \(0\.749 m; coarser sampling aliases every hyperbola flank steeper than 15 degrees\), found a median of 1 m over traces 1\.\.121; feet read as metres\?$/);
  });

  it('a jump inside a line (CSV positions)', async () => {
    const csv = `trace,x,y\n1,${E0},${N0 + 0.5}\n60,${E0 + 5.9},${N0 + 0.5}\n61,${E0 + 16},${N0 + 0.5}\n121,${E0 + 22},${N0 + 0.5}\n`;
    const dir = await site([good, { csv }]);
    expect(await failure(dir)).toMatch(/l1\.csv: expected consecutive traces at most 5 m apart, found 10\.1 m between traces 60\.\.61/);
  });

  it('plan: far features are left out with a warning; a plan with none near is refused', async () => {
    const [lon, lat] = pointToWgs84(crs, E0 + 5, N0 + 3);
    const [flon, flat] = pointToWgs84(crs, E0 + 8000, N0);
    const feature = (id: string, c: number[]) => ({ type: 'Feature', id, properties: { kind: 'post', heightM: 1 }, geometry: { type: 'Point', coordinates: c } });
    const r = await checkSurvey(await loadSite(await site([good, good], {}, { type: 'FeatureCollection', features: [feature('near', [lon, lat]), feature('far', [flon, flat])] })));
    expect(r.plan.map((f) => f.id)).toEqual(['near']);
    expect(r.warnings).toEqual([expect.stringMatching(/plan\.geojson: plan feature far lies more than 1\.0 km from the survey lines; left out of the screening$/)]);
    const m = await failure(await site([good, good], {}, { type: 'FeatureCollection', features: [feature('far', [flon, flat])] }));
    expect(m).toMatch(/plan\.geojson: expected plan features near the survey lines \(within 1000 m\), found the nearest 8\.0 km away/);
  });

  it('a proj4 string has no area of use: only the distance and spacing checks run', async () => {
    const dir = await site([good, good], { crs: '+proj=utm +zone=17 +datum=WGS84 +units=m +no_defs' });
    expect((await checkSurvey(await loadSite(dir))).lines).toHaveLength(2);
  });
});
