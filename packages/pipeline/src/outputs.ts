import { mkdirSync, writeFileSync } from 'node:fs';
import { mkdir, open, readFile, rm } from 'node:fs/promises';
import { join } from 'node:path';
import type { LineProperties, RadargramLine } from '@lamina/contracts';
import type { RadarLine } from '@lamina/radar-data';
import { pointToWgs84, type Crs, type Geometry, type PlanFeature, type Site } from '@lamina/site';

export type ToWgs84 = (x: number, y: number) => [number, number];

/** Plain summary of a line after positioning, kept for run.json and lines.geojson. */
export interface LineSummary {
  id: string;
  file: string;
  traces: number;
  samples: number;
  dtNs: number;
  lengthM: number;
  /** Decimated positions (site CRS) for the map: first, every k-th, last. */
  x: number[];
  y: number[];
}

export function summariseLine(line: RadarLine, file: string, metresPerUnit: number, maxVertices = 200): LineSummary {
  let len = 0;
  for (let i = 1; i < line.nTraces; i++) len += Math.hypot(line.x[i]! - line.x[i - 1]!, line.y[i]! - line.y[i - 1]!);
  const step = Math.max(1, Math.ceil(line.nTraces / maxVertices));
  const x: number[] = [];
  const y: number[] = [];
  for (let i = 0; i < line.nTraces; i += step) {
    x.push(line.x[i]!);
    y.push(line.y[i]!);
  }
  if ((line.nTraces - 1) % step !== 0) {
    x.push(line.x[line.nTraces - 1]!);
    y.push(line.y[line.nTraces - 1]!);
  }
  return { id: line.id, file, traces: line.nTraces, samples: line.nSamples, dtNs: line.dtNs, lengthM: len * metresPerUnit, x, y };
}

/**
 * lines.geojson as a FeatureCollection whose features are made one at a time (for
 * `writeFeatureCollection`: a feature per line of the file, so readers can stream it and no text of the
 * whole survey's positions is ever built).
 */
export function linesGeoJson(lines: LineSummary[], toWgs84: ToWgs84): { type: 'FeatureCollection'; features: Iterable<object> } {
  function* features(): Generator<object> {
    for (const l of lines) {
      yield {
        type: 'Feature',
        id: l.id,
        properties: { id: l.id, file: l.file, traces: l.traces, lengthM: round(l.lengthM, 3) } satisfies LineProperties,
        geometry: { type: 'LineString', coordinates: Array.from(l.x, (x, i) => toWgs84(x, l.y[i]!).map((v) => round(v, 8))) },
      };
    }
  }
  return { type: 'FeatureCollection', features: features() };
}

export function planGeoJson(plan: PlanFeature[]): object {
  return {
    type: 'FeatureCollection',
    features: plan.map((f) => ({
      type: 'Feature',
      id: f.id,
      properties: { ...f.properties, id: f.id, kind: f.kind, ...(f.heightM !== undefined ? { heightM: f.heightM } : {}), ...(f.postSpacingM !== undefined ? { postSpacingM: f.postSpacingM } : {}) },
      geometry: f.wgs84 as Geometry,
    })),
  };
}

/** Extent of all trace positions: site CRS [minX, minY, maxX, maxY] and WGS84 [west, south, east, north]. */
export function extents(lines: LineSummary[], toWgs84: ToWgs84): { site: [number, number, number, number]; wgs84: [number, number, number, number] } {
  let minX = Infinity, minY = Infinity, maxX = -Infinity, maxY = -Infinity;
  for (const l of lines)
    for (let i = 0; i < l.x.length; i++) {
      minX = Math.min(minX, l.x[i]!);
      maxX = Math.max(maxX, l.x[i]!);
      minY = Math.min(minY, l.y[i]!);
      maxY = Math.max(maxY, l.y[i]!);
    }
  const corners = [toWgs84(minX, minY), toWgs84(minX, maxY), toWgs84(maxX, minY), toWgs84(maxX, maxY)];
  const lons = corners.map((c) => c[0]);
  const lats = corners.map((c) => c[1]);
  return { site: [minX, minY, maxX, maxY], wgs84: [Math.min(...lons), Math.min(...lats), Math.max(...lons), Math.max(...lats)] };
}

/** A line of radargrams/index.json (its contract: radargramLineSchema in @lamina/contracts). */
export type RadargramEntry = RadargramLine;

/**
 * Write a display radargram: little-endian Float32, trace-major, every `traceStep`-th trace, and its
 * index entry as JSON beside it, without the kept traces' WGS84 positions (`lon`, `lat`), which
 * `writeRadargramIndex` adds; returns the entry's file, relative to `dir`. Entries go to disk so that no
 * per-trace data waits in memory.
 */
export async function writeRadargram(dir: string, line: RadarLine, maxTraces = 1500): Promise<string> {
  // Synchronous writes: this runs on a line worker, which has nothing else to do meanwhile, and each step
  // of an asynchronous write waits for a turn of the process-wide file thread pool (measured: most of
  // the part's time when the cores are busy).
  mkdirSync(join(dir, 'radargrams'), { recursive: true });
  const step = Math.max(1, Math.ceil(line.nTraces / maxTraces));
  const n = Math.ceil(line.nTraces / step);
  // every trace kept: the line's own samples, not a copy
  const out = step === 1 ? line.data.subarray(0, n * line.nSamples) : new Float32Array(n * line.nSamples);
  const x: number[] = [], y: number[] = [];
  for (let k = 0; k < n; k++) {
    const t = k * step;
    if (step > 1) out.set(line.data.subarray(t * line.nSamples, (t + 1) * line.nSamples), k * line.nSamples);
    x.push(line.x[t]!);
    y.push(line.y[t]!);
  }
  const bytes = new Uint8Array(out.buffer, out.byteOffset, out.byteLength);
  if (!littleEndianHost()) throw new Error('big-endian hosts are not supported for radargram output');
  const file = `radargrams/${safeName(line.id)}.f32`;
  writeFileSync(join(dir, file), bytes);
  const entry: Omit<RadargramEntry, 'lon' | 'lat'> = { id: line.id, file, nTraces: n, nSamples: line.nSamples, dtNs: line.dtNs, timeZeroNs: line.timeZeroNs, traceStep: step, x, y };
  const entryFile = `radargrams/${safeName(line.id)}.entry.json`;
  writeFileSync(join(dir, entryFile), JSON.stringify(entry));
  return entryFile;
}

/**
 * `radargrams/index.json` (`{ lines: RadargramEntry[] }`) from the entry files of `writeRadargram`, in
 * order, streamed, each with its traces' WGS84 positions added (its numbers read back as written: JSON
 * gives the same doubles); the entry files are deleted.
 */
export async function writeRadargramIndex(dir: string, entryFiles: string[], toWgs84: ToWgs84): Promise<void> {
  await mkdir(join(dir, 'radargrams'), { recursive: true });
  const out = await textFile(join(dir, 'radargrams', 'index.json'));
  try {
    await out.write('{"lines":[');
    for (let i = 0; i < entryFiles.length; i++) {
      const e = JSON.parse(await readFile(join(dir, entryFiles[i]!), 'utf8')) as Omit<RadargramEntry, 'lon' | 'lat'>;
      const lon: number[] = [], lat: number[] = [];
      for (let k = 0; k < e.x.length; k++) {
        const [lo, la] = toWgs84(e.x[k]!, e.y[k]!);
        lon.push(round(lo, 8));
        lat.push(round(la, 8));
      }
      const entry: RadargramEntry = { ...e, lon, lat };
      await out.write((i > 0 ? ',\n' : '\n') + JSON.stringify(entry));
    }
    await out.write('\n]}\n');
  } finally {
    await out.close();
  }
  await Promise.all(entryFiles.map((f) => rm(join(dir, f), { force: true })));
}

/**
 * The radargrams' index made on a worker (`writeRadargramIndex` in the site's CRS): `lamina process` hands
 * it to an idle one while its own thread grids and screens.
 */
export interface RadargramIndexTask {
  kind: 'radargramIndex';
  stageDir: string;
  entryFiles: string[];
  crs: Crs;
}

export async function radargramIndex(task: RadargramIndexTask): Promise<void> {
  await writeRadargramIndex(task.stageDir, task.entryFiles, (x, y) => pointToWgs84(task.crs, x, y));
}

/** Writes text given in pieces (joined in 1 MiB writes), without joining all of it first. */
export async function writeChunks(path: string, chunks: Iterable<string>): Promise<void> {
  const out = await textFile(path);
  try {
    for (const c of chunks) await out.write(c);
  } finally {
    await out.close();
  }
}

/** A text file written in pieces, buffered to about 1 MB per write. */
async function textFile(path: string): Promise<{ write(text: string): Promise<void>; close(): Promise<void> }> {
  const handle = await open(path, 'w');
  let pending: string[] = [];
  let size = 0;
  const flush = async () => {
    if (pending.length > 0) await handle.write(pending.join(''));
    pending = [];
    size = 0;
  };
  return {
    write: async (text) => {
      pending.push(text);
      size += text.length;
      if (size >= 1 << 20) await flush();
    },
    close: async () => {
      try {
        await flush();
      } finally {
        await handle.close();
      }
    },
  };
}

export function safeName(id: string): string {
  return id.replace(/[^A-Za-z0-9._-]/g, '_');
}

function littleEndianHost(): boolean {
  return new Uint8Array(new Uint16Array([1]).buffer)[0] === 1;
}

export function round(v: number, digits: number): number {
  const k = 10 ** digits;
  return Math.round(v * k) / k;
}

export function siteSummary(site: Site) {
  return {
    name: site.name,
    dir: site.dir,
    crs: { input: site.crs.input, ...(site.crs.code ? { code: site.crs.code } : {}), proj4: site.crs.proj4, units: site.crs.units, metresPerUnit: site.crs.metresPerUnit },
    antenna: site.antenna,
    ...(site.survey ? { survey: site.survey } : {}),
  };
}

/**
 * A GeoJSON FeatureCollection written feature by feature (one per line), so that no string of the whole
 * collection is ever built: its other members first, then `features` (any iterable: a generator keeps
 * only one feature in memory). `onFeature` sees each feature as it is written.
 */
export async function writeFeatureCollection<F>(
  path: string,
  fc: { features: Iterable<F> } & Record<string, unknown>,
  onFeature: (f: F) => void = () => {},
): Promise<void> {
  const { features, ...rest } = fc;
  const head = JSON.stringify(rest);
  const out = await textFile(path);
  try {
    await out.write(`${head.slice(0, -1)}${head.length > 2 ? ',' : ''}"features":[`);
    let i = 0;
    for (const f of features) {
      await out.write((i++ > 0 ? ',\n' : '\n') + JSON.stringify(f));
      onFeature(f);
    }
    await out.write('\n]}\n');
  } finally {
    await out.close();
  }
}
