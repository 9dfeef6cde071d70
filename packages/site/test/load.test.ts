import { mkdtempSync, rmSync, writeFileSync, mkdirSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { writeSegy } from '@lamina/radar-data';
import { checkSurvey, lineChunks, loadSite, pointFromWgs84, readLine, summarizeLine, syncOpenSegy, toWgs84, US_SURVEY_FOOT_M, type Site } from '../src';
import { writeTinySegy } from './tiny-segy';

// A small site in NC state plane (US survey feet, EPSG:2264), one line per position source.
const dir = mkdtempSync(join(tmpdir(), 'lamina-site-'));
const N = 40;
const NS = 32;
const E0 = 1450000;
const N0 = 520000;
const sample = (t: number, s: number) => Math.fround(Math.sin(0.4 * s) * (1 + t / 100));
let site: Site;

beforeAll(async () => {
  mkdirSync(join(dir, 'lines'));
  const data = new Float32Array(N * NS);
  for (let t = 0; t < N; t++) for (let s = 0; s < NS; s++) data[t * NS + s] = sample(t, s);
  // l01: headers from radar-data's writer (CDP = source = x/y), walking north 0.5 ft a trace
  await writeSegy(join(dir, 'lines/l01.sgy'), {
    nSamples: NS,
    dtNs: 0.1,
    measurementSystem: 2,
    traces: { data, x: new Float64Array(N).fill(E0), y: Float64Array.from({ length: N }, (_, t) => N0 + 0.5 * t) },
  });
  // l02: start/end, no coordinates in headers (this package's own writer)
  writeTinySegy(join(dir, 'lines/l02.sgy'), { nSamples: NS, dtNs: 0.1, sourceX: new Array(N).fill(0), sourceY: new Array(N).fill(0), sample });
  writeTinySegy(join(dir, 'lines/l03.sgy'), { nSamples: NS, dtNs: 0.1, sourceX: new Array(N).fill(0), sourceY: new Array(N).fill(0), sample });
  writeFileSync(join(dir, 'lines/l03.csv'), `trace,x,y\n1,${E0 + 10},${N0}\n${N},${E0 + 10},${N0 + 39}\n`);
  const [lon, lat] = [-79.9, 35.3];
  writeFileSync(
    join(dir, 'plan.geojson'),
    JSON.stringify({ type: 'FeatureCollection', features: [{ type: 'Feature', properties: { kind: 'fence', postSpacingM: 2.5 }, geometry: { type: 'LineString', coordinates: [[lon, lat], [lon, lat + 1e-4]] } }] }),
  );
  writeFileSync(
    join(dir, 'site.json'),
    JSON.stringify({
      name: 'test yard',
      crs: 'EPSG:2264',
      antenna: { frequencyMHz: 400, separationM: 0.16, gpsOffset: { alongM: 0.3048006096012192 } },
      plan: 'plan.geojson',
      lines: [{ file: 'lines/l01.sgy' }, { file: 'lines/l02.sgy', id: 'east', start: [E0 + 5, N0], end: [E0 + 5, N0 + 19.5] }, { file: 'lines/l03.sgy', positions: 'lines/l03.csv' }],
      recipe: { steps: [] },
    }),
  );
  site = await loadSite(dir);
});
afterAll(() => rmSync(dir, { recursive: true, force: true }));

describe('loadSite and readLine', () => {
  it('loads the manifest, CRS and plan', () => {
    expect(site.name).toBe('test yard');
    expect(site.crs).toMatchObject({ code: 'EPSG:2264', units: 'us-ft', metresPerUnit: US_SURVEY_FOOT_M });
    expect(site.lines.map((l) => [l.id, l.position.kind])).toEqual([['l01', 'headers'], ['east', 'startEnd'], ['l03', 'csv']]);
    expect(site.recipe).toEqual({ steps: [] });
    expect(site.antenna.gpsOffset).toEqual({ alongM: US_SURVEY_FOOT_M, acrossM: 0 });
    expect(site.plan[0]?.id).toBe('fence-1');
    const [x, y] = pointFromWgs84(site.crs, -79.9, 35.3);
    expect(site.plan[0]?.geometry.coordinates[0]).toEqual([x, y]);
  });

  it('accepts the path of site.json as well as the folder', async () => {
    const again = await loadSite(join(dir, 'site.json'));
    expect(again.dir).toBe(site.dir);
    expect(again.lines.map((l) => l.file)).toEqual(site.lines.map((l) => l.file));
  });

  it('reads samples and header positions, moving the GPS fix back by its offset', async () => {
    const l = await readLine(site, site.lines[0]!);
    expect([l.id, l.nTraces, l.nSamples, l.timeZeroNs]).toEqual(['l01', N, NS, 0]);
    expect(l.dtNs).toBeCloseTo(0.1, 12);
    for (let t = 0; t < N; t += 7) for (let s = 0; s < NS; s += 5) expect(l.data[t * NS + s]).toBe(sample(t, s));
    // gpsOffset alongM = 1 US ft ahead of the midpoint, line walks north: midpoint is 1 ft south of the fix
    for (let t = 0; t < N; t++) {
      expect(l.x[t]).toBeCloseTo(E0, 6);
      expect(l.y[t]).toBeCloseTo(N0 + 0.5 * t - 1, 6);
    }
  });

  it('start/end positions are taken as midpoints (no offset)', async () => {
    const l = await readLine(site, site.lines[1]!);
    expect(l.id).toBe('east');
    expect(l.y[0]).toBe(N0);
    expect(l.y[N - 1]).toBe(N0 + 19.5);
    expect(l.x[3]).toBe(E0 + 5);
  });

  it('CSV fixes are interpolated, then offset', async () => {
    const l = await readLine(site, site.lines[2]!);
    expect(l.y[10]).toBeCloseTo(N0 + 10 - 1, 9);
  });

  it('reads the same lines and survey facts with synchronous reads (syncOpenSegy)', async () => {
    const open = syncOpenSegy();
    for (const src of site.lines) expect(await readLine(site, src, { open })).toEqual(await readLine(site, src));
    // (this site's plan lies far from its lines: the same error either way)
    const settled = (p: Promise<unknown>) => p.then((value) => ({ value }), (e: unknown) => ({ error: String(e) }));
    expect(await settled(checkSurvey(site, { open }))).toEqual(await settled(checkSurvey(site)));
  });

  it('lineChunks streams the same samples and positions', async () => {
    const whole = await readLine(site, site.lines[0]!);
    const got = new Float32Array(N * NS);
    const y = new Float64Array(N);
    let seen = 0;
    for await (const c of lineChunks(site, site.lines[0]!, { tracesPerChunk: 16 })) {
      expect(c.count).toBeLessThanOrEqual(16);
      got.set(c.data, c.first * NS);
      y.set(c.y, c.first);
      seen += c.count;
    }
    expect(seen).toBe(N);
    expect(got).toEqual(whole.data);
    expect(y).toEqual(whole.y);
  });

  it('summarizeLine gives length in metres without reading samples', async () => {
    const s = await summarizeLine(site, site.lines[1]!);
    expect(s.geometry.lengthM).toBeCloseTo(19.5 * US_SURVEY_FOOT_M, 9);
    expect(s.geometry.azimuthDeg).toBe(0);
    const { lat } = toWgs84(site.crs, s.x, s.y);
    expect(lat[N - 1]! > lat[0]!).toBe(true);
  });
});

describe('a piece of a line: site.json "traces"', () => {
  it('reads only traces [first, last] of the file, with the positions of the whole file cut to them', async () => {
    // every position source: headers (with the GPS offset), start/end and CSV refer to the whole file
    for (const [k, src] of site.lines.entries()) {
      const whole = await readLine(site, src);
      const piece = { ...src, traces: [3, 12] as [number, number] };
      const part = await readLine(site, piece);
      expect(part.nTraces, `line ${k}`).toBe(10);
      expect(part.data).toEqual(whole.data.subarray(3 * NS, 13 * NS));
      expect(Array.from(part.x)).toEqual(Array.from(whole.x.subarray(3, 13)));
      expect(Array.from(part.y)).toEqual(Array.from(whole.y.subarray(3, 13)));
      const chunks: number[] = [];
      for await (const c of lineChunks(site, piece, { tracesPerChunk: 4 })) chunks.push(c.first, c.count, c.data[0]!);
      expect(chunks).toEqual([0, 4, part.data[0], 4, 4, part.data[4 * NS], 8, 2, part.data[8 * NS]]);
      expect((await summarizeLine(site, piece)).nTraces).toBe(10);
    }
  });
});
