/** The tiles' output folders a merge reads, checked to share one grid, one set of depth windows and one model. */
import { readFile } from 'node:fs/promises';
import { join } from 'node:path';
import { checkContract, parseJsonText, runSchema, velocitySchema, type RunJson, type SlicesJson, type TileEntry, type TilesManifest, type VelocityJson } from '@lamina/contracts';
import { InputError } from '@lamina/errors';
import { resolveCrs, shownPath, type Crs } from '@lamina/site';
import { readSlicesJson } from '@lamina/slices';
import { manifestDir, readTilesManifest } from '../manifest';

export interface MergeTile {
  entry: TileEntry;
  /** The tile's output folder (`<tile>-out` beside tiles.json). */
  outDir: string;
  run: RunJson;
  slices: SlicesJson;
  /** The site figures and the model of its velocity.json (its fits are read again when written: they grow with the tile). */
  velocity: Pick<VelocityJson, 'site' | 'model'>;
}

export interface MergeInputs {
  manifest: TilesManifest;
  /** The folder of tiles.json. */
  dir: string;
  tiles: MergeTile[];
  crs: Crs;
}

/** Relative agreement of two grid numbers: the tiles compute them alike, so only rounding may differ. */
const same = (a: number, b: number): boolean => Math.abs(a - b) <= 1e-9 * Math.max(1, Math.abs(a), Math.abs(b));

async function readJson(file: string): Promise<unknown> {
  let text: string;
  try {
    text = await readFile(file, 'utf8');
  } catch {
    throw new InputError(shownPath(file), 'expected this file of a finished tile output, found none');
  }
  return parseJsonText(text, shownPath(file));
}

/**
 * Reads tiles.json and every tile's output folder. Refuses (an InputError naming the tile's file) a tile
 * not processed yet, or one whose CRS, cell size or grid alignment, nodata, depth windows (their number,
 * or an edge more than one sample's depth away) or velocity model differ from the first tile's: the
 * mosaic and the joins across tile edges need all of them the same.
 */
export async function readMergeInputs(tilesPath: string): Promise<MergeInputs> {
  const manifest = await readTilesManifest(tilesPath);
  const dir = manifestDir(tilesPath);
  if (manifest.tiles.length === 0) throw new InputError(shownPath(join(dir, 'tiles.json')), 'expected at least one tile, found none');
  const tiles: MergeTile[] = [];
  for (const [i, entry] of manifest.tiles.entries()) {
    const outDir = join(dir, `${entry.dir}-out`);
    const runFile = join(outDir, 'run.json');
    const run = checkContract(runSchema, await readJson(runFile).catch(() => {
      throw new InputError(shownPath(runFile), `expected the finished output of tile ${entry.id} (lamina process-tile ${shownPath(join(dir, 'tiles.json'))} --index ${i}), found none`);
    }), shownPath(runFile));
    const name = `${manifest.site.name}-${entry.id}`;
    if (run.site.name !== name) throw new InputError(shownPath(runFile), `expected the output of tile site "${name}", found "${run.site.name}"`, { field: 'site.name' });
    const velocityFile = join(outDir, 'velocity.json');
    const { site, model } = checkContract(velocitySchema, await readJson(velocityFile), shownPath(velocityFile));
    tiles.push({ entry, outDir, run, slices: await readSlicesJson(outDir), velocity: { site, model } });
  }
  const first = tiles[0]!;
  const cell = first.slices.cellSize;
  // A tile's windows reach down to its own shallowest record (its lines' time-zero picks), and the default
  // thickness follows the velocity at mid-depth: so tiles of one model can place the window edges a
  // fraction of a sample apart. Edges within one sample's depth (v dt / 2, the fastest layer, the finest
  // sampling) are the same windows as far as the records can tell; the mosaic takes the first tile's.
  const dts = tiles.flatMap((t) => (t.run.lines ?? []).map((l) => l.dtNs).filter((v): v is number => v !== undefined && v > 0));
  const vMax = Math.max(first.velocity.site.velocityMPerNs, ...(first.velocity.model?.layers ?? []).map((l) => l.velocityMPerNs));
  const sampleDepthM = dts.length > 0 && vMax > 0 ? (vMax * Math.min(...dts)) / 2 : 0;
  const sameDepth = (a: number, b: number): boolean => same(a, b) || Math.abs(a - b) <= sampleDepthM;
  for (const t of tiles) {
    const file = shownPath(join(t.outDir, 'slices.json'));
    const s = t.slices;
    const f = first.slices;
    const differ = (field: string, expected: unknown, found: unknown): never => {
      throw new InputError(file, `expected the ${field} of tile ${first.entry.id} (${JSON.stringify(expected)}) in tile ${t.entry.id}, found ${JSON.stringify(found)}: every tile must share one grid and one velocity model (lamina tiles --velocity)`, { field });
    };
    if (s.crs !== f.crs) differ('crs', f.crs, s.crs);
    if (!same(s.cellSize, cell)) differ('cellSize', cell, s.cellSize);
    if (s.nodata !== f.nodata) differ('nodata', f.nodata, s.nodata);
    for (const [field, v] of [['originX', s.originX], ['originY', s.originY]] as const) {
      const k = v / cell;
      if (Math.abs(k - Math.round(k)) > 1e-6) differ(field, `a multiple of the cell size ${cell}`, v);
    }
    if (s.slices.length !== f.slices.length) differ('slices', `${f.slices.length} depth windows`, `${s.slices.length}`);
    for (const [k, w] of s.slices.entries()) {
      const g = f.slices[k]!;
      if (!sameDepth(w.topM, g.topM) || !sameDepth(w.bottomM, g.bottomM)) differ(`slices[${k}]`, [g.topM, g.bottomM], [w.topM, w.bottomM]);
    }
    if (JSON.stringify(t.velocity.model) !== JSON.stringify(first.velocity.model)) {
      throw new InputError(shownPath(join(t.outDir, 'velocity.json')), `expected the velocity model of tile ${first.entry.id} in tile ${t.entry.id}, found another: process the tiles with the survey's model (lamina tiles --velocity)`, { field: 'model' });
    }
  }
  const c = first.run.site.crs;
  const crs = resolveCrs(c.proj4 ?? c.input!, { file: shownPath(join(first.outDir, 'run.json')), field: 'site.crs.proj4' });
  return { manifest, dir, tiles, crs };
}
