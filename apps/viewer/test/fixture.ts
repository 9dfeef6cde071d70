/**
 * A small synthetic output folder of `lamina process` (the file contracts of DEVELOPERS.md), written
 * by code so tests do not depend on the pipeline. Invented site: a 30 m x 25 m yard in UTM 17N.
 * Slices are written by @lamina/slices' own writer (tiled DEFLATE COG), so the viewer reads what the
 * pipeline writes.
 */
import { mkdir, writeFile } from 'node:fs/promises';
import { join } from 'node:path';
import proj4 from 'proj4';
import { writeSlices } from '@lamina/slices';
import { mulberry32 } from '@lamina/random';
import { C_M_PER_NS } from '@lamina/constants';

export const FIXTURE_PROJ4 = '+proj=utm +zone=17 +datum=WGS84 +units=m +no_defs';
export const FIXTURE = {
  crs: 'EPSG:32617',
  originX: 631000,
  originY: 3985025,
  cellSize: 0.25,
  width: 120,
  height: 100,
  nodata: -9999,
  slices: 6,
  sliceThicknessM: 0.2,
  /** Cells west of this column are nodata (a strip no trace reached). */
  nodataCols: 4,
  /** Hot block of slice k: rows 20..39, columns 20 + 12k .. 39 + 12k, value 1. */
  hot: (k: number) => ({ row0: 20, row1: 39, col0: 20 + 12 * k, col1: 39 + 12 * k }),
  velocity: 0.1,
};

/** Centre of cell (col, row), site CRS. */
export function cellXY(col: number, row: number): [number, number] {
  return [FIXTURE.originX + (col + 0.5) * FIXTURE.cellSize, FIXTURE.originY - (row + 0.5) * FIXTURE.cellSize];
}


export interface FixtureOptions {
  seed?: number;
  /** Override grid size (benchmarks). */
  width?: number;
  height?: number;
  slices?: number;
}

export async function writeFixture(dir: string, options: FixtureOptions = {}): Promise<void> {
  const rnd = mulberry32(options.seed ?? 7);
  const W = options.width ?? FIXTURE.width;
  const H = options.height ?? FIXTURE.height;
  const N = options.slices ?? FIXTURE.slices;
  const cs = (FIXTURE.cellSize * FIXTURE.width) / W;
  const toWgs = proj4(FIXTURE_PROJ4, 'EPSG:4326');
  const ll = (x: number, y: number) => toWgs.forward([x, y]) as [number, number];
  await mkdir(join(dir, 'radargrams'), { recursive: true });

  // slices
  const slices = [];
  for (let k = 0; k < N; k++) {
    const v = new Float32Array(W * H);
    const hb = FIXTURE.hot(k % FIXTURE.slices);
    const sx = W / FIXTURE.width;
    for (let r = 0; r < H; r++)
      for (let c = 0; c < W; c++) {
        const i = r * W + c;
        const fc = c / sx;
        const fr = r / sx;
        if (fc < FIXTURE.nodataCols) v[i] = FIXTURE.nodata;
        else if (fr >= hb.row0 && fr <= hb.row1 + 0.999 && fc >= hb.col0 && fc <= hb.col1 + 0.999) v[i] = 1;
        else v[i] = 0.05 + 0.1 * rnd();
      }
    slices.push({ index: k, topM: k * FIXTURE.sliceThicknessM, bottomM: (k + 1) * FIXTURE.sliceThicknessM, values: v });
  }
  await writeSlices(
    { grid: { crs: FIXTURE.crs, originX: FIXTURE.originX, originY: FIXTURE.originY, cellSize: cs, width: W, height: H, nodata: FIXTURE.nodata, metresPerUnit: 1, isGeographic: false }, slices },
    dir,
  );

  const x0 = FIXTURE.originX;
  const y0 = FIXTURE.originY;
  const extentSite: [number, number, number, number] = [x0, y0 - FIXTURE.height * FIXTURE.cellSize, x0 + FIXTURE.width * FIXTURE.cellSize, y0];
  const corners = [ll(extentSite[0], extentSite[1]), ll(extentSite[2], extentSite[3]), ll(extentSite[0], extentSite[3]), ll(extentSite[2], extentSite[1])];
  const extentWgs84: [number, number, number, number] = [
    Math.min(...corners.map((c) => c[0])),
    Math.min(...corners.map((c) => c[1])),
    Math.max(...corners.map((c) => c[0])),
    Math.max(...corners.map((c) => c[1])),
  ];
  const identity = { name: 'fixture-yard', crs: FIXTURE.crs, extent: extentWgs84 };

  // survey lines west to east, 2.5 m apart; radargrams with one diffraction on L3
  const lineIds = ['L1', 'L2', 'L3', 'L4', 'L5'];
  const nSamples = 100;
  const dtNs = 0.25;
  const timeZeroNs = 2;
  const traceStep = 2;
  const rgLines = [];
  const lineFeatures = [];
  const hyperbolas = [];
  for (let li = 0; li < lineIds.length; li++) {
    const id = lineIds[li]!;
    const y = y0 - 2.5 - 5 * li;
    const nT = 60;
    const xs = Array.from({ length: nT }, (_, t) => x0 + 1 + t * 0.5);
    const data = new Float32Array(nT * nSamples);
    const apexT = 14;
    const t0 = 10; // ns after time-zero
    for (let t = 0; t < nT; t++) {
      for (let s = 0; s < nSamples; s++) data[t * nSamples + s] = 0.02 * (rnd() - 0.5);
      if (id === 'L2') {
        const off = (t - apexT) * 0.5;
        const d = (FIXTURE.velocity * t0) / 2;
        const tt = (2 * Math.hypot(d, off)) / FIXTURE.velocity + timeZeroNs;
        for (let s = 0; s < nSamples; s++) {
          const u = (s * dtNs - tt) / 0.6;
          data[t * nSamples + s] = data[t * nSamples + s]! + (1 - 2 * u * u) * Math.exp(-u * u);
        }
      }
    }
    await writeFile(join(dir, 'radargrams', `${id}.f32`), new Uint8Array(data.buffer));
    const lonlat = xs.map((x) => ll(x, y));
    rgLines.push({ id, file: `radargrams/${id}.f32`, nTraces: nT, nSamples, dtNs, timeZeroNs, traceStep, x: xs, y: xs.map(() => y), lon: lonlat.map((p) => p[0]), lat: lonlat.map((p) => p[1]) });
    lineFeatures.push({ type: 'Feature', id, properties: { id, traces: nT * traceStep, lengthM: (nT - 1) * 0.5, file: `lines/${id}.sgy` }, geometry: { type: 'LineString', coordinates: lonlat } });
    if (id === 'L2') {
      hyperbolas.push({ line: id, trace: apexT * traceStep, x: xs[apexT]!, y, t0Ns: t0, velocityMPerNs: FIXTURE.velocity, permittivity: (C_M_PER_NS / FIXTURE.velocity) ** 2, depthM: (FIXTURE.velocity * t0) / 2, uncertaintyMPerNs: 0.004, origin: 'subsurface' });
    }
  }
  await writeFile(join(dir, 'radargrams', 'index.json'), JSON.stringify({ lines: rgLines }));
  await writeFile(join(dir, 'lines.geojson'), JSON.stringify({ type: 'FeatureCollection', features: lineFeatures }));

  await writeFile(
    join(dir, 'run.json'),
    JSON.stringify({
      tool: { name: 'lamina', version: '0.0.0-fixture' },
      createdAt: '2026-01-01T00:00:00.000Z',
      site: { name: 'fixture-yard', dir: dir, crs: { input: FIXTURE.crs, code: FIXTURE.crs, proj4: FIXTURE_PROJ4, units: 'm', metresPerUnit: 1 }, antenna: { frequencyMHz: 500, separationM: 0.1 }, extentWgs84, extentSite },
      identity,
      recipe: {},
      log: [],
      lines: rgLines.map((l) => ({ id: l.id, file: `lines/${l.id}.sgy`, traces: l.nTraces * traceStep, samples: nSamples, dtNs })),
    }),
  );

  const ring = (pts: [number, number][]) => [...pts, pts[0]!].map(([x, y]) => ll(x, y));
  await writeFile(
    join(dir, 'plan.geojson'),
    JSON.stringify({
      type: 'FeatureCollection',
      features: [
        { type: 'Feature', id: 'house', properties: { id: 'house', kind: 'building', heightM: 6 }, geometry: { type: 'Polygon', coordinates: [ring([[x0 + 31, y0 - 2], [x0 + 40, y0 - 2], [x0 + 40, y0 - 12], [x0 + 31, y0 - 12]])] } },
        { type: 'Feature', id: 'wall-1', properties: { id: 'wall-1', kind: 'wall', heightM: 2 }, geometry: { type: 'LineString', coordinates: [ll(x0, y0 + 1), ll(x0 + 30, y0 + 1)] } },
        { type: 'Feature', id: 'fence-1', properties: { id: 'fence-1', kind: 'fence', heightM: 1.2, postSpacingM: 2.5 }, geometry: { type: 'LineString', coordinates: [ll(x0, y0 - 26), ll(x0 + 30, y0 - 26)] } },
        { type: 'Feature', id: 'post-1', properties: { id: 'post-1', kind: 'post', heightM: 1.5 }, geometry: { type: 'Point', coordinates: ll(x0 + 5, y0 - 24) } },
        { type: 'Feature', id: 'tree-1', properties: { id: 'tree-1', kind: 'tree', heightM: 8 }, geometry: { type: 'Point', coordinates: ll(x0 + 25, y0 - 22) } },
      ],
    }),
  );

  // anomalies: a1 over the hot block of slice 0, a2 above-ground along the wall, a3 a point
  const hb0 = FIXTURE.hot(0);
  const [ax0, ay1] = [x0 + hb0.col0 * FIXTURE.cellSize, y0 - hb0.row0 * FIXTURE.cellSize];
  const [ax1, ay0] = [x0 + (hb0.col1 + 1) * FIXTURE.cellSize, y0 - (hb0.row1 + 1) * FIXTURE.cellSize];
  const ev = (test: string, passed: boolean, measured: number, expected: number, detail: string) => ({ test, featureId: 'wall-1', measured, expected, tolerance: 0.3, units: 'm', passed, detail, weight: passed ? 2 : -1 });
  await writeFile(
    join(dir, 'anomalies.geojson'),
    JSON.stringify({
      type: 'FeatureCollection',
      features: [
        {
          type: 'Feature',
          properties: { id: 'a1', depthTopM: 0, depthBottomM: 0.4, origin: 'subsurface', confidence: 0.82, evidence: [ev('move-out', false, 0.1, 1.4, 'no move-out with depth'), ev('soil-hyperbola', true, 0.1, 0.1, 'soil-velocity diffraction on L3')] },
          geometry: { type: 'Polygon', coordinates: [ring([[ax0, ay0], [ax1, ay0], [ax1, ay1], [ax0, ay1]])] },
        },
        {
          type: 'Feature',
          properties: { id: 'a2', depthTopM: 0.4, depthBottomM: 0.8, origin: 'above-ground', confidence: 0.9, evidence: [ev('move-out', true, 1.5, 1.4, 'moves away from wall-1 at the air rate'), ev('edge-alignment', true, 3, 0, 'parallel to wall-1')] },
          geometry: { type: 'LineString', coordinates: [ll(x0 + 2, y0 - 1.5), ll(x0 + 28, y0 - 1.5)] },
        },
        { type: 'Feature', properties: { id: 'a3', depthTopM: 0.6, depthBottomM: 1.0, origin: 'subsurface', confidence: 0.6, evidence: [] }, geometry: { type: 'Point', coordinates: ll(x0 + 15, y0 - 20) } },
      ],
    }),
  );
  await writeFile(
    join(dir, 'forecast.geojson'),
    JSON.stringify({
      type: 'FeatureCollection',
      features: Array.from({ length: FIXTURE.slices }, (_, k) => ({ type: 'Feature', properties: { featureId: 'wall-1', slice: k, topM: k * 0.2, bottomM: (k + 1) * 0.2 }, geometry: { type: 'LineString', coordinates: [ll(x0, y0 - 1 - 0.3 * k), ll(x0 + 30, y0 - 1 - 0.3 * k)] } })),
    }),
  );
  await writeFile(
    join(dir, 'velocity.json'),
    JSON.stringify({
      site: { velocityMPerNs: FIXTURE.velocity, permittivity: (C_M_PER_NS / FIXTURE.velocity) ** 2, spreadMPerNs: 0.004, fitCount: 1 },
      model: { kind: 'constant', layers: [{ topM: 0, bottomM: 1e9, velocityMPerNs: FIXTURE.velocity, permittivity: (C_M_PER_NS / FIXTURE.velocity) ** 2 }] },
      hyperbolas,
    }),
  );
  await writeFile(join(dir, 'targets.geojson'), JSON.stringify({ type: 'FeatureCollection', features: [{ type: 'Feature', properties: {
    id: 't1', depthTopM: 0, depthBottomM: 0.4, origin: 'subsurface', class: 'structure', pAboveGround: 0.18, strengthDb: 14.2, depthTopFt: 0, depthBottomFt: 1.3123, depthUncertaintyM: null, depthUncertaintyFt: null,
    depthBottomUncertaintyM: null, depthBottomUncertaintyFt: null, kind: 'compact', utilityType: 'water', apwaColour: '#1f78b4', apwaColourName: 'blue', label: null, lengthM: null,
    qualityLevel: 'B', method: 'GPR, 500 MHz, depth slices', surveyDate: null, operator: null, equipment: null, positioning: null, positioningAccuracyM: null, exportDate: '2026-01-01T00:00:00.000Z', decision: 'accepted', note: null,
    reviewedAt: '2026-01-01T00:00:00.000Z', screenedOrigin: 'subsurface', site: 'fixture-yard', anomalyId: 'a1',
  }, geometry: { type: 'Point', coordinates: ll((ax0 + ax1) / 2, (ay0 + ay1) / 2) } }] }));
}
