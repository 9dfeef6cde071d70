import { chmod, mkdir, readFile, writeFile } from 'node:fs/promises';
import { dirname, join, resolve } from 'node:path';
import { InputError } from '@lamina/errors';
import { stageFolder } from '@lamina/atomic';
import { writeSegy, type SampleFormat } from '@lamina/radar-data';
import { resolveCrs, pointToWgs84, type Crs } from '@lamina/site';
import { parseScenario, type Scenario } from './scenario';
import { buildModel, type Model } from './model';
import { simulateLine, newStats, mergeStats, type LineResult } from './forward';
import { buildTruth, type Truth } from './truth';
import { rng } from './prng';

export interface SimulateOptions {
  /** Called after each line with (lines done, lines in all). */
  onProgress?: (done: number, total: number) => void;
  /** File name used in error messages. @default 'scenario.json' */
  file?: string;
}

export interface SimulatedSite {
  dir: string;
  lines: number;
  traces: number;
  samples: number;
  bytes: number;
  truth: Truth;
}

/** Amplitude scale for integer sample formats: the direct air wave (amplitude 1) becomes this many counts. */
export const INTEGER_SCALE = { int16: 8000, int32: 8_000_000 } as const;

const FORMAT_CODE: Record<'float32' | 'int16' | 'int32', SampleFormat> = { float32: 5, int16: 3, int32: 2 };

/** Resolve the scenario's CRS (projected only). */
export function scenarioCrs(s: Scenario, file = 'scenario.json'): Crs {
  const crs = resolveCrs(s.crs, { file, field: 'crs' });
  if (crs.isGeographic) throw new InputError(file, `expected a projected CRS (metres or feet), found the geographic CRS ${crs.code ?? crs.proj4}`, { field: 'crs' });
  return crs;
}

/** Build the forward model of a validated scenario (CRS resolved, clutter drawn from the seed). */
export function scenarioModel(s: Scenario, crs: Crs): Model {
  const r = rng(s.seed, 'clutter');
  return buildModel(s, crs.metresPerUnit, () => r.next());
}

function round(v: number, digits: number): number {
  const f = 10 ** digits;
  return Math.round(v * f) / f;
}

function toSamples(res: LineResult, format: 'float32' | 'int16' | 'int32'): Float32Array {
  if (format === 'float32') return res.data;
  const scale = INTEGER_SCALE[format];
  const lim = format === 'int16' ? 32767 : 2147483647;
  const out = new Float32Array(res.data.length);
  for (let i = 0; i < out.length; i++) out[i] = Math.max(-lim, Math.min(lim, Math.round(res.data[i]! * scale)));
  return out;
}

function textHeader(s: Scenario, m: Model, lineId: string, source: string): string[] {
  return [
    `LAMINA SIMULATED GPR LINE ${lineId} - INVENTED SCENARIO "${s.name}" - NOT FIELD DATA`,
    `CRS ${s.crs}  ANTENNA ${m.frequencyMHz} MHZ  SEPARATION ${m.separationM} M`,
    `SAMPLE INTERVAL ${m.dtNs} NS (REV 2 EXTENDED INTERVAL)  SAMPLES ${m.nSamples}`,
    `PRE-TRIGGER TIME-ZERO ABOUT ${m.timeZeroNs} NS  POSITIONS: ${source.toUpperCase()}`,
    `SEED ${s.seed}`,
    'COMMON-OFFSET SURVEY; COORDINATES ARE THE ANTENNA MIDPOINT',
  ];
}

/** Simulate a scenario into a site folder, written atomically: nothing appears in `outDir` until every file is complete. */
export async function simulateSite(scenario: Scenario, outDir: string, options: SimulateOptions = {}): Promise<SimulatedSite> {
  const file = options.file ?? 'scenario.json';
  const crs = scenarioCrs(scenario, file);
  const m = scenarioModel(scenario, crs);
  const mpu = crs.metresPerUnit;
  const [ox, oy] = m.origin;
  const format = scenario.recording.format ?? 'float32';
  const noise = scenario.survey.positionNoiseM ?? 0;
  const stage = await stageFolder(outDir);
  try {
    await mkdir(join(stage.path, 'lines'), { recursive: true });
    const stats = newStats(m.scatterers.length);
    const siteLines: Record<string, unknown>[] = [];
    let bytes = 0;
    let traces = 0;
    for (let li = 0; li < m.lines.length; li++) {
      const line = m.lines[li]!;
      const res = simulateLine(m, line);
      mergeStats(stats, res.stats);
      const n = line.mx.length;
      const x = new Float64Array(n);
      const y = new Float64Array(n);
      for (let j = 0; j < n; j++) {
        x[j] = ox + line.mx[j]! / mpu;
        y[j] = oy + line.my[j]! / mpu;
      }
      const rel = `lines/${line.id}.sgy`;
      const traceSpec = { data: toSamples(res, format) } as { data: Float32Array; x?: Float64Array; y?: Float64Array };
      if (line.positionSource === 'headers') {
        const pr = rng(scenario.seed, `positions:${line.id}`);
        const hx = new Float64Array(n);
        const hy = new Float64Array(n);
        for (let j = 0; j < n; j++) {
          hx[j] = x[j]! + (noise > 0 ? (pr.gauss() * noise) / mpu : 0);
          hy[j] = y[j]! + (noise > 0 ? (pr.gauss() * noise) / mpu : 0);
        }
        traceSpec.x = hx;
        traceSpec.y = hy;
        siteLines.push({ file: rel });
      } else if (line.positionSource === 'startEnd') {
        siteLines.push({ file: rel, start: [round(x[0]!, 4), round(y[0]!, 4)], end: [round(x[n - 1]!, 4), round(y[n - 1]!, 4)] });
      } else {
        // A GPS logging a fix every 10 traces, interpolated by the reader.
        const rows = ['trace,x,y'];
        for (let j = 0; j < n; j++) if (j % 10 === 0 || j === n - 1) rows.push(`${j + 1},${x[j]!.toFixed(4)},${y[j]!.toFixed(4)}`);
        const csv = `lines/${line.id}.csv`;
        await writeFile(join(stage.path, csv), rows.join('\n') + '\n');
        siteLines.push({ file: rel, positions: csv });
      }
      const w = await writeSegy(join(stage.path, rel), {
        nSamples: m.nSamples,
        dtNs: m.dtNs,
        format: FORMAT_CODE[format],
        revision: 2,
        ...(scenario.recording.byteOrder === 'little' ? { littleEndian: true } : {}),
        textHeader: textHeader(scenario, m, line.id, line.positionSource),
        measurementSystem: crs.units === 'm' ? 1 : 2,
        traces: traceSpec,
      });
      bytes += w.bytes;
      traces += n;
      options.onProgress?.(li + 1, m.lines.length);
    }

    const site = {
      name: scenario.name,
      ...(scenario.description ? { description: scenario.description } : {}),
      crs: scenario.crs,
      antenna: { frequencyMHz: m.frequencyMHz, separationM: m.separationM },
      plan: 'plan.geojson',
      lines: siteLines,
    };
    await writeFile(join(stage.path, 'site.json'), JSON.stringify(site, null, 2) + '\n');
    await writeFile(join(stage.path, 'plan.geojson'), JSON.stringify(planGeoJson(scenario, crs)) + '\n');
    const truth = buildTruth(m, crs, stats);
    await writeFile(join(stage.path, 'truth.json'), JSON.stringify(truth, null, 1) + '\n');
    await chmod(stage.path, 0o755);
    await stage.commit();
    return { dir: resolve(outDir), lines: m.lines.length, traces, samples: m.nSamples, bytes, truth };
  } catch (e) {
    await stage.abort();
    throw e;
  }
}

/** The plan as RFC 7946 GeoJSON in WGS84 (coordinates to 1e-9 degree, about 0.1 mm). */
export function planGeoJson(s: Scenario, crs: Crs): { type: 'FeatureCollection'; features: unknown[] } {
  const ll = (p: readonly [number, number]): [number, number] => {
    const q = pointToWgs84(crs, p[0], p[1]);
    return [round(q[0], 9), round(q[1], 9)];
  };
  const features = s.plan.map((f) => {
    const properties: Record<string, unknown> = { id: f.id, kind: f.kind };
    if (f.heightM !== undefined) properties.heightM = f.heightM;
    if (f.material !== undefined) properties.material = f.material;
    let geometry: unknown;
    if (f.kind === 'building') {
      const ring = f.footprint.map(ll);
      const first = ring[0]!, last = ring[ring.length - 1]!;
      if (first[0] !== last[0] || first[1] !== last[1]) ring.push([first[0], first[1]]);
      // RFC 7946: exterior rings counter-clockwise.
      let a = 0;
      for (let i = 0; i + 1 < ring.length; i++) a += ring[i]![0] * ring[i + 1]![1] - ring[i + 1]![0] * ring[i]![1];
      if (a < 0) ring.reverse();
      geometry = { type: 'Polygon', coordinates: [ring] };
    } else if (f.kind === 'wall' || f.kind === 'fence') {
      if (f.kind === 'fence') properties.postSpacingM = f.postSpacingM;
      geometry = { type: 'LineString', coordinates: f.path.map(ll) };
    } else if (f.kind === 'overhead') {
      if (f.radiusM !== undefined) properties.radiusM = f.radiusM;
      geometry = f.path ? { type: 'LineString', coordinates: f.path.map(ll) } : { type: 'Point', coordinates: ll(f.at!) };
    } else {
      if (f.radiusM !== undefined) properties.radiusM = f.radiusM;
      geometry = { type: 'Point', coordinates: ll(f.at) };
    }
    return { type: 'Feature', id: f.id, properties, geometry };
  });
  return { type: 'FeatureCollection', features };
}

/** Read, validate and simulate a scenario file. Default output: `site/` beside the scenario. */
export async function simulateScenarioFile(path: string, outDir?: string, options: SimulateOptions = {}): Promise<SimulatedSite> {
  const text = await readFile(path, 'utf8').catch(() => {
    throw new InputError(path, 'expected a readable scenario JSON file, found none');
  });
  let json: unknown;
  try {
    json = JSON.parse(text);
  } catch (e) {
    throw new InputError(path, `expected JSON, found a syntax error: ${e instanceof Error ? e.message : String(e)}`);
  }
  const s = parseScenario(json, path);
  return simulateSite(s, outDir ?? join(dirname(path), 'site'), { ...options, file: path });
}
