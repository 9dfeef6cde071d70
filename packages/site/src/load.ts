import { readFile, stat } from 'node:fs/promises';
import { basename, dirname, extname, isAbsolute, join, relative, resolve } from 'node:path';
import { InputError, isInputError } from '@lamina/errors';
import type { RadarLine } from '@lamina/radar-data';
import { resolveCrs } from './crs';
import { lineGeometry, type LineGeometry } from './geometry';
import { checkSiteJson, LINE_ID, sortProblems } from './manifest';
import { readPlan } from './plan';
import { HEADER_FIELDS, applyGpsOffset, checkPositions, parsePositionsCsv, positionsFromFixes, positionsFromHeaders, positionsFromStartEnd, type TracePositions } from './positions';
import { InputProblems, parseJson, type Problem } from './problems';
import { defaultOpenSegy, type OpenSegy, type SegyReaderLike } from './segy';
import type { Crs, LineSource, Site } from './types';

/** A path as the user will recognise it in a message: relative to the working folder when inside it. */
export function shownPath(abs: string): string {
  const r = relative(process.cwd(), abs);
  return r && !r.startsWith('..') && !isAbsolute(r) ? r : abs;
}

async function isFile(p: string): Promise<boolean> {
  try {
    return (await stat(p)).isFile();
  } catch {
    return false;
  }
}

/**
 * Read and validate a site folder: site.json (every problem with its JSON path, thrown together), the CRS
 * (projected, known), that every line file and positions CSV exists, and the plan. `dir` may also be the
 * path of a site.json file.
 */
export async function loadSite(dir: string): Promise<Site> {
  let siteDir = resolve(dir);
  let manifest = join(siteDir, 'site.json');
  try {
    const s = await stat(siteDir);
    if (s.isFile()) {
      manifest = siteDir;
      siteDir = dirname(siteDir);
    }
  } catch {
    throw new InputError(dir, 'expected a site folder containing site.json, found no such file or folder');
  }
  const shown = shownPath(manifest);
  let text: string;
  try {
    text = await readFile(manifest, 'utf8');
  } catch {
    throw new InputError(shown, `expected a site manifest, found no readable site.json in ${shownPath(siteDir)}`);
  }
  const raw = parseJson(text, shown);
  const checked = checkSiteJson(raw);
  const problems: Problem[] = [...checked.problems];
  const json = checked.value;
  const crsText = json?.crs ?? (raw as { crs?: unknown } | null)?.crs;

  let crs: Crs | undefined;
  if (typeof crsText === 'string' && crsText !== '') {
    try {
      crs = resolveCrs(crsText, { file: shown, field: 'crs' });
      if (crs.isGeographic) {
        problems.push({ path: 'crs', message: `expected a projected CRS (trace positions are gridded in metres or feet), found the geographic CRS ${crs.code ?? crs.proj4}; use e.g. the UTM zone of the site` });
      }
    } catch (e) {
      if (!isInputError(e)) throw e;
      problems.push({ path: 'crs', message: e.detail });
    }
  }
  if (!json) throw new InputProblems(shown, sortProblems(problems, raw));

  const lines: LineSource[] = [];
  const ids = new Map<string, number>();
  for (let i = 0; i < json.lines.length; i++) {
    const l = json.lines[i];
    if (!l) continue;
    const file = resolve(siteDir, l.file);
    if (!(await isFile(file))) problems.push({ path: `lines[${i}].file`, message: `expected a SEG-Y file, found no file at ${shownPath(file)}` });
    let id = l.id;
    if (id === undefined) {
      id = basename(l.file, extname(l.file)).replace(/[^A-Za-z0-9._-]/g, '_');
      if (!LINE_ID.test(id)) id = `line-${i + 1}`;
    }
    const prev = ids.get(id);
    if (prev !== undefined) {
      problems.push({ path: `lines[${i}]${l.id !== undefined ? '.id' : '.file'}`, message: `expected a unique line id, found "${id}" again (as lines[${prev}]); set "id"` });
    } else ids.set(id, i);
    let position: LineSource['position'] = { kind: 'headers' };
    if (l.positions !== undefined) {
      const csv = resolve(siteDir, l.positions);
      if (!(await isFile(csv))) problems.push({ path: `lines[${i}].positions`, message: `expected a positions CSV, found no file at ${shownPath(csv)}` });
      position = { kind: 'csv', file: csv, relFile: l.positions };
    } else if (l.start && l.end) {
      position = { kind: 'startEnd', start: l.start, end: l.end };
    }
    lines.push({ id, file, relFile: l.file, position, ...(l.traces ? { traces: [l.traces[0], l.traces[1]] as [number, number] } : {}), ...(l.context ? { context: [l.context[0], l.context[1]] as [number, number] } : {}), index: i });
  }
  let planFile: string | undefined;
  if (json.plan !== undefined) {
    planFile = resolve(siteDir, json.plan);
    if (!(await isFile(planFile))) problems.push({ path: 'plan', message: `expected a plan GeoJSON, found no file at ${shownPath(planFile)}` });
  }
  if (problems.length || !crs) throw new InputProblems(shown, sortProblems(problems, raw));

  const plan = planFile ? await readPlan(planFile, shownPath(planFile), { crs }) : [];
  const antenna: Site['antenna'] = { frequencyMHz: json.antenna.frequencyMHz, separationM: json.antenna.separationM };
  if (json.antenna.gpsOffset) antenna.gpsOffset = { alongM: json.antenna.gpsOffset.alongM, acrossM: json.antenna.gpsOffset.acrossM };
  return {
    dir: siteDir,
    name: json.name,
    ...(json.description !== undefined ? { description: json.description } : {}),
    crs,
    antenna,
    ...(json.sampleIntervalNs !== undefined ? { sampleIntervalNs: json.sampleIntervalNs } : {}),
    plan,
    ...(planFile ? { planFile } : {}),
    lines,
    ...(json.recipe !== undefined ? { recipe: json.recipe } : {}),
    ...(json.survey !== undefined ? { survey: json.survey } : {}),
  };
}

export interface ReadLineOptions {
  /** Overrides `site.sampleIntervalNs` for files that do not carry an interval. */
  sampleIntervalNs?: number;
  /** SEG-Y opener. @default openSegy from @lamina/radar-data */
  open?: OpenSegy;
}

async function openReader(site: Site, src: LineSource, options: ReadLineOptions): Promise<SegyReaderLike> {
  const open = options.open ?? defaultOpenSegy();
  const dt = options.sampleIntervalNs ?? site.sampleIntervalNs;
  return await open(src.file, { name: shownPath(src.file), ...(dt !== undefined ? { sampleIntervalNs: dt } : {}) });
}

/**
 * The traces of its file a line uses: all of them, or site.json `traces` [first, last], checked against
 * the file's trace count.
 */
export function lineTraces(site: Site, src: LineSource, fileTraces: number): { first: number; count: number } {
  if (!src.traces) return { first: 0, count: fileTraces };
  const [a, b] = src.traces;
  if (b >= fileTraces) {
    throw new InputError(shownPath(join(site.dir, 'site.json')), `expected trace indices within 0..${fileTraces - 1} (${shownPath(src.file)} has ${fileTraces} traces), found [${a}, ${b}]`, {
      field: `lines[${src.index ?? site.lines.indexOf(src)}].traces`,
    });
  }
  return { first: a, count: b - a + 1 };
}

/**
 * Trace positions of a line (site CRS units, antenna midpoints) from its source, checked. With a
 * `traces` range they are worked out for the whole file (start/end and CSV trace numbers refer to it)
 * and then cut to the range.
 */
export async function linePositions(site: Site, src: LineSource, reader: Pick<SegyReaderLike, 'nTraces' | 'readTraceHeaders'>): Promise<TracePositions> {
  const whole = await fileLinePositions(site, src, reader);
  if (!src.traces) return whole;
  const { first, count } = lineTraces(site, src, reader.nTraces);
  return { x: whole.x.slice(first, first + count), y: whole.y.slice(first, first + count) };
}

async function fileLinePositions(site: Site, src: LineSource, reader: Pick<SegyReaderLike, 'nTraces' | 'readTraceHeaders'>): Promise<TracePositions> {
  const n = reader.nTraces;
  const segyName = shownPath(src.file);
  const field = `lines[${src.index ?? site.lines.indexOf(src)}]`;
  if (n < 2) throw new InputError(segyName, `expected a line of at least 2 traces, found ${n}`);
  const off = site.antenna.gpsOffset;
  const m = site.crs.metresPerUnit;
  const pos = src.position;
  if (pos.kind === 'startEnd') {
    const p = positionsFromStartEnd(pos.start, pos.end, n);
    checkPositions(p, site.crs, shownPath(join(site.dir, 'site.json')), { what: 'start/end positions', field });
    return p;
  }
  if (pos.kind === 'csv') {
    const csvName = shownPath(pos.file);
    let text: string;
    try {
      text = await readFile(pos.file, 'utf8');
    } catch {
      throw new InputError(csvName, 'expected a positions CSV, found no readable file');
    }
    const p = positionsFromFixes(parsePositionsCsv(text, csvName), n, csvName);
    if (off) applyGpsOffset(p, off.alongM, off.acrossM, m);
    checkPositions(p, site.crs, csvName, { what: 'CSV positions' });
    return p;
  }
  const h = await reader.readTraceHeaders(0, n);
  const p = positionsFromHeaders(h, segyName);
  const label = { cdp: 'CDP X/Y', source: 'source X/Y', group: 'group X/Y' }[p.from];
  checkPositions(p, site.crs, segyName, { what: `trace header ${label} coordinates`, field: HEADER_FIELDS[p.from] });
  if (off) applyGpsOffset(p, off.alongM, off.acrossM, m);
  return { x: p.x, y: p.y };
}

/** A line's samples and checked positions, whole in memory. `timeZeroNs` is 0 (not yet picked). */
export async function readLine(site: Site, src: LineSource, options: ReadLineOptions = {}): Promise<RadarLine> {
  const reader = await openReader(site, src, options);
  try {
    const { x, y } = await linePositions(site, src, reader);
    const { first, count } = lineTraces(site, src, reader.nTraces);
    const data = await reader.readTraces(first, count);
    return { id: src.id, nSamples: reader.nSamples, nTraces: count, dtNs: reader.dtNs, data, x, y, timeZeroNs: 0 };
  } finally {
    await reader.close();
  }
}

/** A block of consecutive traces of a line, as `lineChunks` yields them. */
export interface LineChunk {
  id: string;
  /** Index of the first trace of the block in the line (0-based). */
  first: number;
  count: number;
  nTraces: number;
  nSamples: number;
  dtNs: number;
  /** `count * nSamples` samples, trace-major. */
  data: Float32Array;
  /** Positions of the block's traces (views into the whole line's positions). */
  x: Float64Array;
  y: Float64Array;
}

export interface LineChunksOptions extends ReadLineOptions {
  /** Traces per block. @default 4096 */
  tracesPerChunk?: number;
}

/** Stream a line in blocks of traces; positions (16 bytes a trace) are worked out whole first. */
export async function* lineChunks(site: Site, src: LineSource, options: LineChunksOptions = {}): AsyncGenerator<LineChunk> {
  const step = Math.max(1, Math.floor(options.tracesPerChunk ?? 4096));
  const reader = await openReader(site, src, options);
  try {
    const { x, y } = await linePositions(site, src, reader);
    const range = lineTraces(site, src, reader.nTraces);
    const n = range.count;
    for (let first = 0; first < n; first += step) {
      const count = Math.min(step, n - first);
      const data = await reader.readTraces(range.first + first, count);
      yield { id: src.id, first, count, nTraces: n, nSamples: reader.nSamples, dtNs: reader.dtNs, data, x: x.subarray(first, first + count), y: y.subarray(first, first + count) };
    }
  } finally {
    await reader.close();
  }
}

/** What `lamina info` shows about a line, read from headers only (no samples). */
export interface LineSummary {
  id: string;
  file: string;
  nTraces: number;
  nSamples: number;
  dtNs: number;
  positionSource: LineSource['position']['kind'];
  geometry: LineGeometry;
  x: Float64Array;
  y: Float64Array;
}

export async function summarizeLine(site: Site, src: LineSource, options: ReadLineOptions = {}): Promise<LineSummary> {
  const reader = await openReader(site, src, options);
  try {
    const { x, y } = await linePositions(site, src, reader);
    return {
      id: src.id,
      file: src.relFile,
      nTraces: x.length,
      nSamples: reader.nSamples,
      dtNs: reader.dtNs,
      positionSource: src.position.kind,
      geometry: lineGeometry({ x, y }, site.crs.metresPerUnit),
      x,
      y,
    };
  } finally {
    await reader.close();
  }
}
