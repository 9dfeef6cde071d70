/**
 * Split a site into independent tile sites on a square grid in the site CRS. A tile holds the lines, or
 * line pieces, whose traces fall in its square grown by the overlap; each trace's own square ("core")
 * decides which tile owns results there. Whole lines are referenced in place; a line that leaves the
 * tile is cut into pieces, each referencing the same file with a `traces` range (site.json), so no
 * samples are copied. The plan keeps every feature near enough to echo into the tile's record.
 */
import { copyFile, mkdir, writeFile } from 'node:fs/promises';
import { basename, join, relative, resolve } from 'node:path';
import { C_M_PER_NS } from '@lamina/constants';
import { InputError } from '@lamina/errors';
import { stageFolder } from '@lamina/atomic';
import { openSegy, type SegyReader } from '@lamina/radar-data';
import { linePositions, loadSite, shownPath, type LineSource, type PlanFeature, type Site } from '@lamina/site';
import { geometryBox, near, tileId, tileOf, tracesInBox, type Box } from './grid';
import type { TileEntry, TileLine, TilesManifest } from './manifest';

export interface TileOptions {
  /** Side of a tile square, m. */
  sizeM: number;
  /**
   * Margin around each tile, m, so anomalies at a tile edge are seen whole by a neighbour (migration
   * aperture, gridding radius and the width of a target; common practice, no source). @default 5
   */
  overlapM?: number;
  /**
   * Plan features within this distance of a tile (grown by the overlap) are kept, m.
   * @default the overlap plus c * record / 2 of the longest record (the farthest above-ground object
   * whose echo arrives within the record)
   */
  planMarginM?: number;
  /** Write absolute paths to the original files in the tile site.json. @default false (relative) */
  absolutePaths?: boolean;
  /**
   * velocity.json of the whole survey (`lamina velocity`), copied beside tiles.json; every tile's command
   * then processes with that one model (`--velocity`), so slices of neighbouring tiles are cut at the same
   * depths. @default none: each tile fits its own
   */
  velocityFile?: string;
  /**
   * Metres of line processed with a piece beyond each of its ends (site.json `context`), m. By default a
   * piece is processed with its whole line, so its time-zero, mean background and migration are those of
   * the untiled run (exact, at the cost of processing a line once per tile it crosses), unless the line
   * is too large for `lineMemoryMiB`. A finite value bounds the time for lines of kilometres, and makes
   * those steps see only the context (line-wide statistics then differ from the untiled run's).
   * @default the whole line, within `lineMemoryMiB`
   */
  lineContextM?: number;
  /**
   * Memory for the line a worker thread processes, MiB: a line whose processing needs more
   * (`LINE_BYTES_PER_SAMPLE`) is processed, for each piece, in the stretch of that size centred on the
   * piece (approximate, like `lineContextM`). `lamina tiles` gives the band budget over the threads: a
   * run's line passes and its band screening come one after the other, so a tile's lines then need no
   * more than its bands. @default 192 (the default 384 MiB band budget over 2 threads)
   */
  lineMemoryMiB?: number;
  /** The survey's windows.json (beside its velocity.json), copied beside tiles.json. @default none */
  windowsFile?: string;
  onLine?: (done: number, total: number) => void;
}

/**
 * Peak memory of processing a line, bytes per sample (traces x samples): measured with
 * bench/tile-memory.bench.ts (peak RSS rose by about 62 bytes a sample of the line processed: the
 * migration's f-k of the line, padded in time and distance, in complex doubles).
 */
export const LINE_BYTES_PER_SAMPLE = 64;

/** File name of the survey's velocity model beside tiles.json (`TileOptions.velocityFile`). */
export const SURVEY_VELOCITY = 'velocity.json';

interface TileAcc {
  col: number;
  row: number;
  coreTraces: number;
  runs: { line: number; first: number; last: number; context: [number, number] }[];
}

async function openLine(site: Site, src: LineSource): Promise<SegyReader> {
  return openSegy(src.file, { name: shownPath(src.file), ...(site.sampleIntervalNs !== undefined ? { sampleIntervalNs: site.sampleIntervalNs } : {}) });
}

function planJson(features: PlanFeature[]): string {
  return JSON.stringify(
    {
      type: 'FeatureCollection',
      features: features.map((f) => ({
        type: 'Feature',
        properties: { ...f.properties, id: f.id, kind: f.kind, ...(f.heightM !== undefined ? { heightM: f.heightM } : {}), ...(f.postSpacingM !== undefined ? { postSpacingM: f.postSpacingM } : {}) },
        geometry: f.wgs84,
      })),
    },
    null,
    1,
  );
}

function checkOptions(options: TileOptions): { sizeM: number; overlapM: number; contextM: number; lineMemoryMiB: number } {
  const where = 'tiles options';
  const { sizeM } = options;
  const overlapM = options.overlapM ?? 5;
  if (!Number.isFinite(sizeM) || sizeM <= 0) throw new InputError(where, `expected a tile size in m > 0, found ${sizeM}`, { field: 'size' });
  if (!Number.isFinite(overlapM) || overlapM < 0 || overlapM >= sizeM / 2) throw new InputError(where, `expected an overlap in m >= 0 and below half the tile size (${sizeM / 2}), found ${overlapM}`, { field: 'overlap' });
  if (options.planMarginM !== undefined && !(options.planMarginM >= 0)) throw new InputError(where, `expected a plan margin in m >= 0, found ${options.planMarginM}`, { field: 'planMargin' });
  const contextM = options.lineContextM ?? Infinity;
  if (!(contextM >= 0)) throw new InputError(where, `expected a line context in m >= 0, found ${contextM}`, { field: 'lineContext' });
  const lineMemoryMiB = options.lineMemoryMiB ?? 192;
  if (!(lineMemoryMiB > 0)) throw new InputError(where, `expected a line memory in MiB > 0, found ${lineMemoryMiB}`, { field: 'lineMemory' });
  return { sizeM, overlapM, contextM, lineMemoryMiB };
}

/** Cumulative distance along a line, m. */
function alongTrack(x: Float64Array, y: Float64Array, mpu: number): Float64Array {
  const d = new Float64Array(x.length);
  for (let i = 1; i < x.length; i++) d[i] = d[i - 1]! + Math.hypot(x[i]! - x[i - 1]!, y[i]! - y[i - 1]!) * mpu;
  return d;
}

/**
 * The traces processed with the run [first, last] of a line of `n` traces: those within `contextM` of
 * it along the line (`along`); else the whole line when it has at most `maxTraces`, else the
 * `maxTraces` centred on the run (never fewer than the run).
 */
function contextOf(along: Float64Array | undefined, first: number, last: number, contextM: number, n: number, maxTraces: number): [number, number] {
  if (!along) {
    if (n <= maxTraces) return [0, n - 1];
    const len = Math.max(last - first + 1, maxTraces);
    const a = Math.max(0, Math.min(first - Math.floor((len - (last - first + 1)) / 2), n - len));
    return [a, a + len - 1];
  }
  let a = first;
  while (a > 0 && along[first]! - along[a - 1]! <= contextM) a--;
  let b = last;
  while (b < along.length - 1 && along[b + 1]! - along[last]! <= contextM) b++;
  return [a, b];
}

/**
 * `lamina tiles`: writes `outDir/tiles.json` and one site folder per tile (`outDir/<tile id>/site.json`,
 * `plan.geojson`). Staged and renamed into place, so an error writes nothing. Reads only headers to
 * place traces; copies no samples (tiles reference the original SEG-Y files).
 */
export async function writeTiles(siteDir: string, outDir: string, options: TileOptions): Promise<TilesManifest> {
  const { sizeM, overlapM, contextM, lineMemoryMiB } = checkOptions(options);
  const site = await loadSite(siteDir);
  const mpu = site.crs.metresPerUnit;
  const size = sizeM / mpu;
  const ov = overlapM / mpu;
  const accs = new Map<string, TileAcc>();
  const acc = (col: number, row: number): TileAcc => {
    const k = tileId(col, row);
    let a = accs.get(k);
    if (!a) accs.set(k, (a = { col, row, coreTraces: 0, runs: [] }));
    return a;
  };
  const nTraces: number[] = [];
  let maxRecordNs = 0;

  // Pass 1: positions only (headers), the runs of every line in every tile it reaches.
  for (let li = 0; li < site.lines.length; li++) {
    const src = site.lines[li]!;
    const reader = await openLine(site, src);
    try {
      const { x, y } = await linePositions(site, src, reader);
      const along = Number.isFinite(contextM) ? alongTrack(x, y, mpu) : undefined;
      const maxTraces = Math.max(2, Math.floor((lineMemoryMiB * 2 ** 20) / (LINE_BYTES_PER_SAMPLE * reader.nSamples)));
      nTraces.push(reader.nTraces);
      maxRecordNs = Math.max(maxRecordNs, reader.nSamples * reader.dtNs);
      const reach = new Set<string>();
      for (let i = 0; i < x.length; i++) {
        const [c, r] = tileOf(x[i]!, y[i]!, size);
        acc(c, r).coreTraces++;
        for (let cc = Math.floor((x[i]! - ov) / size); cc <= Math.floor((x[i]! + ov) / size); cc++) {
          for (let rr = Math.floor((y[i]! - ov) / size); rr <= Math.floor((y[i]! + ov) / size); rr++) reach.add(`${cc},${rr}`);
        }
      }
      for (const key of reach) {
        const [cc, rr] = key.split(',').map(Number) as [number, number];
        const box: Box = [cc * size - ov, rr * size - ov, (cc + 1) * size + ov, (rr + 1) * size + ov];
        for (const [first, last] of tracesInBox(x, y, box)) acc(cc, rr).runs.push({ line: li, first, last, context: contextOf(along, first, last, contextM, x.length, maxTraces) });
      }
    } finally {
      await reader.close();
    }
    options.onLine?.(li + 1, site.lines.length * 2);
  }

  const windows = options.velocityFile ? options.windowsFile : undefined;
  const planMarginM = options.planMarginM ?? overlapM + (C_M_PER_NS * maxRecordNs) / 2;
  const live = [...accs.values()].filter((a) => a.coreTraces > 0).sort((a, b) => a.row - b.row || a.col - b.col);
  const byLine = new Map<number, { tile: TileAcc; first: number; last: number; context: [number, number]; k: number }[]>();
  for (const t of live) {
    const count = new Map<number, number>();
    for (const r of t.runs) {
      const k = (count.get(r.line) ?? 0) + 1;
      count.set(r.line, k);
      const list = byLine.get(r.line) ?? [];
      list.push({ tile: t, first: r.first, last: r.last, context: r.context, k });
      byLine.set(r.line, list);
    }
  }

  const stage = await stageFolder(outDir);
  const finalOut = resolve(outDir);
  try {
    const tileLines = new Map<TileAcc, (TileLine & { position: Record<string, unknown> })[]>();
    for (const t of live) {
      tileLines.set(t, []);
      await mkdir(join(stage.path, tileId(t.col, t.row)), { recursive: true });
    }
    // Pass 2: every tile references the original files: a whole line as it is, a piece of a line with
    // a `traces` range of its file (positions from start/end or a CSV still refer to the whole file).
    for (let li = 0; li < site.lines.length; li++) {
      const src = site.lines[li]!;
      const pieces = byLine.get(li) ?? [];
      const n = nTraces[li]!;
      const offset = src.traces?.[0] ?? 0;
      for (const p of pieces) {
        const finalDir = join(finalOut, tileId(p.tile.col, p.tile.row));
        const ref = (abs: string): string => (options.absolutePaths ? abs : relative(finalDir, abs));
        const whole = p.first === 0 && p.last === n - 1;
        const position: Record<string, unknown> =
          src.position.kind === 'startEnd' ? { start: src.position.start, end: src.position.end } : src.position.kind === 'csv' ? { positions: ref(src.position.file) } : {};
        const traces: [number, number] | undefined = whole ? src.traces : [offset + p.first, offset + p.last];
        // a piece is processed with its line's traces around it (`context`), and kept alone
        const context: [number, number] | undefined = whole ? undefined : [offset + p.context[0], offset + Math.min(n - 1, p.context[1])];
        tileLines.get(p.tile)!.push({
          source: src.id,
          first: p.first,
          last: p.last,
          id: whole ? src.id : `${src.id}.p${p.k}`,
          file: ref(src.file),
          ...(traces ? { traces } : {}),
          ...(context ? { context } : {}),
          position,
        });
      }
      options.onLine?.(site.lines.length + li + 1, site.lines.length * 2);
    }

    const tiles: TileEntry[] = [];
    const planBoxes = site.plan.map((f) => geometryBox(f.geometry));
    for (const t of live) {
      const tid = tileId(t.col, t.row);
      const core: Box = [t.col * size, t.row * size, (t.col + 1) * size, (t.row + 1) * size];
      const bounds: Box = [core[0] - ov, core[1] - ov, core[2] + ov, core[3] + ov];
      const lines = tileLines.get(t)!;
      const plan = site.plan.filter((_, i) => near(planBoxes[i]!, bounds, planMarginM / mpu));
      const json: Record<string, unknown> = {
        name: `${site.name}-${tid}`,
        description: `Tile ${tid} of site "${site.name}" (${sizeM} m squares, ${overlapM} m overlap), written by lamina tiles.`,
        crs: site.crs.input,
        antenna: site.antenna,
        ...(site.sampleIntervalNs !== undefined ? { sampleIntervalNs: site.sampleIntervalNs } : {}),
        ...(plan.length ? { plan: 'plan.geojson' } : {}),
        ...(site.recipe !== undefined ? { recipe: site.recipe } : {}),
        lines: lines.map((l) => ({ id: l.id, file: l.file, ...(l.traces ? { traces: l.traces } : {}), ...(l.context ? { context: l.context } : {}), ...l.position })),
      };
      const dir = join(stage.path, tid);
      await writeFile(join(dir, 'site.json'), JSON.stringify(json, null, 2) + '\n');
      if (plan.length) await writeFile(join(dir, 'plan.geojson'), planJson(plan) + '\n');
      tiles.push({
        id: tid,
        dir: tid,
        col: t.col,
        row: t.row,
        core,
        bounds,
        traces: lines.reduce((s, l) => s + l.last - l.first + 1, 0),
        lines: lines.map(({ position: _p, ...l }) => l),
        planFeatures: plan.length,
        command: `lamina process ${tid} --out ${tid}-out${options.velocityFile ? ` --velocity ${SURVEY_VELOCITY}` : ''}`,
      });
    }
    const manifest: TilesManifest = {
      version: 1,
      site: { name: site.name, dir: site.dir, crs: site.crs.input, units: site.crs.units, metresPerUnit: mpu },
      sizeM,
      overlapM,
      planMarginM,
      sizeUnits: size,
      traces: nTraces.reduce((a, b) => a + b, 0),
      ...(options.velocityFile ? { velocity: SURVEY_VELOCITY } : {}),
      ...(windows ? { windows: basename(windows) } : {}),
      ...(Number.isFinite(contextM) ? { lineContextM: contextM } : { lineMemoryMiB }),
      tiles,
    };
    if (options.velocityFile) await copyFile(options.velocityFile, join(stage.path, SURVEY_VELOCITY));
    // beside the copied velocity.json, where `process --velocity` looks for it
    if (windows) await copyFile(windows, join(stage.path, basename(windows)));
    await writeFile(join(stage.path, 'tiles.json'), JSON.stringify(manifest, null, 1) + '\n');
    await stage.commit();
    return manifest;
  } catch (e) {
    await stage.abort().catch(() => {});
    throw e;
  }
}
