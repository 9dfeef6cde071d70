/**
 * anomalies.geojson, interfaces.geojson and forecast.geojson of a merge, made as `lamina process` makes
 * them for the whole survey: the mosaics of the tiles' stacks (after and before background removal) are
 * screened again in the row bands the untiled run would use (`sliceAndScreen` of @lamina/pipeline), so
 * every per-slice statistic (the Gamma noise law, the robust scores before background removal, the line
 * spacing and directions) is the survey's, not a tile's, and objects on core edges come out once, whole.
 */
import { access, readFile } from 'node:fs/promises';
import { join, resolve } from 'node:path';
import type { RawBands } from '@lamina/cog';
import type { SlicesJson } from '@lamina/contracts';
import { InputError } from '@lamina/errors';
import { sliceAndScreen, SCREEN_INPUTS, type ScreenLinesJson, type Screening, type ScreenSource } from '@lamina/pipeline';
import { loadSite, shownPath } from '@lamina/site';
import type { GriddingInfo, SliceGrid, SliceStack } from '@lamina/slices';
import type { MergeInputs } from './inputs';

type VelocityReport = Parameters<typeof sliceAndScreen>[5];
type Recipe = Parameters<typeof sliceAndScreen>[6];

export interface RescreenOptions {
  /** Memory for one screened band, as `lamina process --band-memory`: the untiled run's bands are the same when it is the same. @default 384 MiB */
  screenBandBytes?: number;
  /** How far a band reaches past its core, m, as `lamina process --band-overlap`. @default as `process` */
  bandOverlapM?: number;
  onProgress?: (stage: string, done: number, total: number) => void;
}

/** Whether every tile wrote what a merge screens again from (`lamina process-tile`; `SCREEN_INPUTS`). */
export async function canRescreen(inputs: MergeInputs): Promise<boolean> {
  for (const t of inputs.tiles) {
    const ok = await Promise.all(Object.values(SCREEN_INPUTS).map((f) => access(join(t.outDir, f)).then(() => true, () => false)));
    if (ok.includes(false)) return false;
  }
  return true;
}

/**
 * Every line of the survey with its trace positions, in the site's line order: each tile wrote the
 * positions of its pieces (`screen-lines.*`); a piece's traces are placed at their place in the line
 * (tiles.json `traces`), so traces in the overlap of two tiles are taken once.
 */
async function surveyLines(inputs: MergeInputs, order: string[]): Promise<{ ids: string[]; starts: Int32Array; coords: Float64Array }> {
  const byLine = new Map<string, Float64Array>();
  for (const t of inputs.tiles) {
    const file = join(t.outDir, SCREEN_INPUTS.lines);
    const j = JSON.parse(await readFile(file, 'utf8')) as ScreenLinesJson;
    const b = await readFile(join(t.outDir, SCREEN_INPUTS.positions));
    const all = new Float64Array(b.buffer.slice(b.byteOffset, b.byteOffset + b.byteLength));
    let at = 0;
    for (const [i, id] of j.lines.entries()) {
      const n = j.traces[i]!;
      const entry = t.entry.lines.find((l) => l.id === id);
      if (!entry) throw new InputError(shownPath(file), `expected the lines of tile ${t.entry.id} in tiles.json, found "${id}"`, { field: `lines[${i}]` });
      const first = entry.traces?.[0] ?? 0;
      const need = 2 * (first + n);
      let line = byLine.get(entry.source);
      if (!line || line.length < need) {
        const grown = new Float64Array(need).fill(Number.NaN);
        if (line) grown.set(line);
        byLine.set(entry.source, (line = grown));
      }
      line.set(all.subarray(2 * at, 2 * (at + n)), 2 * first);
      at += n;
    }
  }
  const ids = order.filter((id) => byLine.has(id));
  const starts = new Int32Array(ids.length + 1);
  ids.forEach((id, l) => (starts[l + 1] = starts[l]! + byLine.get(id)!.length / 2));
  const coords = new Float64Array(2 * starts[ids.length]!);
  for (const [l, id] of ids.entries()) {
    const line = byLine.get(id)!;
    if (line.some((v) => Number.isNaN(v))) throw new InputError(shownPath(join(inputs.dir, 'tiles.json')), `expected every trace of line ${id} in one of the tiles, found traces no tile holds`);
    coords.set(line, 2 * starts[l]!);
  }
  return { ids, starts, coords };
}

type Fit = NonNullable<VelocityReport['hyperbolas']>[number] & { lineOrder?: number };

/**
 * The merge's fits (velocity.json: on `<tile id>/<piece id>`, traces of the piece) as a run of the whole
 * survey lists them: on the site's line ids and traces, line after line in the site's order, each line's
 * fits in its run's order (`lineOrder`; hand-matched fits, which have none, after them), because
 * screening's hyperbola evidence takes the first of equally near fits.
 */
function asUntiled(inputs: MergeInputs, fits: Fit[], siteLines: { id: string; traces?: [number, number] }[]): Fit[] {
  const pieces = new Map<string, MergeInputs['tiles'][number]['entry']['lines'][number]>(inputs.tiles.flatMap((t) => t.entry.lines.map((l) => [`${t.entry.id}/${l.id}`, l] as const)));
  const lineIndex = new Map(siteLines.map((l, i) => [l.id, i]));
  const siteFirst = new Map(siteLines.map((l) => [l.id, l.traces?.[0] ?? 0]));
  const out = fits.map((f) => {
    const p = pieces.get(f.line);
    return p ? { ...f, line: p.source, trace: f.trace + (p.traces?.[0] ?? siteFirst.get(p.source) ?? 0) - (siteFirst.get(p.source) ?? 0) } : f;
  });
  const key = (f: Fit) => [lineIndex.get(f.line) ?? Infinity, f.lineOrder ?? Infinity] as const;
  return out.sort((a, b) => {
    const [la, oa] = key(a), [lb, ob] = key(b);
    return la - lb || (oa === ob ? 0 : oa < ob ? -1 : 1);
  });
}

/** The rows of the raw mosaics as the gridder gives them (a stack per band of rows, with the survey's gridding). */
function mosaicSource(json: SlicesJson, raw: RescreenRaw, lines: { starts: Int32Array; coords: Float64Array }): ScreenSource {
  const grid: SliceGrid = { crs: json.crs, originX: json.originX, originY: json.originY, cellSize: json.cellSize, width: json.width, height: json.height, nodata: json.nodata, metresPerUnit: json.metresPerUnit, isGeographic: json.isGeographic };
  const gridding = (json.gridding ?? undefined) as GriddingInfo | undefined;
  const stackOf = (raw: RawBands, first: number, last: number): SliceStack => ({
    grid: { ...grid, originY: grid.originY - first * grid.cellSize, height: last - first },
    slices: json.slices.map((s, k) => ({ index: s.index, topM: s.topM, bottomM: s.bottomM, values: raw.readRows(k, first, last) })),
    ...(gridding ? { gridding: { ...gridding } } : {}),
  });
  return {
    grid,
    gridding,
    rows: async (first, last) => [stackOf(raw.slices, first, last), stackOf(raw.before, first, last)],
    ...(raw.directions ? { directions: raw.directions.map((d) => ({ azimuthDeg: d.azimuthDeg, rows: async (first: number, last: number) => stackOf(d.raw, first, last) })) } : {}),
    lineStarts: () => lines.starts,
    readCoords: (a, b) => lines.coords.subarray(2 * a, 2 * b),
  };
}

/** The raw mosaics a merge screens again: slices, slices before background removal, each direction's own (a survey in two directions). */
export interface RescreenRaw {
  slices: RawBands;
  before: RawBands;
  directions?: { azimuthDeg: number; raw: RawBands }[];
}

/**
 * Screens the merged survey into `stageDir` (anomalies.geojson, interfaces.geojson, forecast.geojson).
 * `velocityFile` is the merge's velocity.json (the survey's model and every tile's fits in its core).
 * Memory: one screening band (`screenBandBytes`, as in `lamina process`) and the lines' trace positions
 * (16 bytes a trace).
 */
export async function rescreen(inputs: MergeInputs, stageDir: string, json: SlicesJson, raw: RescreenRaw, velocityFile: string, options: RescreenOptions = {}): Promise<Screening> {
  const site = await loadSite(resolve(inputs.dir, inputs.manifest.site.dir));
  const lines = await surveyLines(inputs, site.lines.map((l) => l.id));
  const velocity = JSON.parse(await readFile(velocityFile, 'utf8')) as VelocityReport;
  velocity.hyperbolas = asUntiled(inputs, velocity.hyperbolas ?? [], site.lines);
  const recipe = inputs.tiles[0]!.run.recipe as unknown as Recipe;
  const windows = json.slices.map((s) => ({ index: s.index, topM: s.topM, bottomM: s.bottomM }));
  return sliceAndScreen(site, stageDir, undefined, lines.ids, windows, velocity, recipe, {
    source: mosaicSource(json, raw, lines),
    onProgress: options.onProgress ?? (() => {}),
    ...(options.screenBandBytes !== undefined ? { screenBandBytes: options.screenBandBytes } : {}),
    ...(options.bandOverlapM !== undefined ? { bandOverlapM: options.bandOverlapM } : {}),
  }, 1);
}
