import { open, writeFile } from 'node:fs/promises';
import { join } from 'node:path';
import type { Site } from '@lamina/site';
import { pointToWgs84 } from '@lamina/site';
import { nearSurfaceDepthM, type VelocityReport } from '@lamina/velocity';
import { axialDeg, directionGroups, DiskStack, SpillGridder, type GriddingInfo, type PointSpill, type SliceGrid, type SliceStack, type SliceWindow } from '@lamina/slices';
import type { Recipe } from '@lamina/processing';
import { CAUTION } from '@lamina/constants';
import type { InterfaceProperties } from '@lamina/contracts';
import { airRadiusM, BandJoin, linesInRows, lineSpacingOfM, screenBands, screenSite, surveyedMask, type DirectionStack, type GeoJsonFeature, type Line } from '@lamina/screening';
import { FeatureSpill } from './feature-spill';
import { gridForecast, sideOutputs, type SideOutputsResult, type SideOutputsTask } from './side-outputs';
import { THUMBNAIL_SIZE, type Thumbnail } from '@lamina/targets';
import { writeFeatureCollection } from './outputs';
import { StageTimer } from './timings';

export interface SliceAndScreenOptions {
  level?: boolean;
  cellSizeM?: number;
  /**
   * Memory for one band of the grid while it is screened (its two stacks, the screening's work arrays
   * and its anomalies, about 70 bytes per cell per slice): a grid larger than this is gridded and screened in
   * overlapping row bands. @default 384 MiB
   */
  screenBandBytes?: number;
  /** Rows a band reaches past its core on each side, metres. @default max(20 m, 2.5 x the deepest slice's air-wave radius) */
  bandOverlapM?: number;
  onProgress: (stage: string, done: number, total: number) => void;
  /** The run's stage timers (gridding, screening, writing are timed apart). @default a timer of its own */
  timer?: StageTimer;
  /**
   * Also write what a merge needs to screen the whole survey again (a tile's run, `lamina process-tile`):
   * the stack before background removal (`slices-before.f32`) and the lines' trace positions
   * (`screen-lines.f64`, `screen-lines.json`; see `SCREEN_INPUTS`). @default false
   */
  keepScreenInputs?: boolean;
  /**
   * Screen these rows instead of gridding `spill` (a merge of tiles: the mosaics of their stacks); the
   * caller has written slices.tif, so it is not written here. @default grid the spill
   */
  source?: ScreenSource;
  /**
   * Runs `sideOutputs` (slices.tif, the thumbnails, the forecast) elsewhere, e.g. on an idle worker: a grid
   * screened in one band has them made there while this thread screens. @default made here, in turn
   */
  side?: (task: SideOutputsTask) => Promise<SideOutputsResult>;
}

/** The stage of the timers that writes slices.tif and makes the thumbnails and the forecast (`sideOutputs`). */
const SIDE_STAGE = 'slices.tif, thumbnails, forecast';

/** Files of `keepScreenInputs` in the output folder. */
export const SCREEN_INPUTS = { before: 'slices-before.f32', positions: 'screen-lines.f64', lines: 'screen-lines.json' } as const;

/** screen-lines.json: the lines of `screen-lines.f64` (x, y Float64 LE per trace, line after line). */
export interface ScreenLinesJson {
  /** Line ids, in the run's order. */
  lines: string[];
  /** Trace count of each line. */
  traces: number[];
  /**
   * A survey in two directions: each direction's slices gridded from its own lines alone, a raw
   * band-sequential Float32 file of the run's grid (`directionStackFile`), and the azimuth of its lines
   * (degrees clockwise from north).
   */
  directions?: { azimuthDeg: number; file: string }[];
}

/** File of direction k's stack in a run that keeps its screening inputs (`ScreenLinesJson.directions`). */
export const directionStackFile = (k: number) => `slices-direction-${k}.f32`;

/** Rows of one direction's own stack (`ScreenLinesJson.directions`), with the azimuth of its lines. */
export interface DirectionRows {
  azimuthDeg: number;
  rows(first: number, last: number): Promise<SliceStack>;
}

/** Rows of a survey's two stacks (after and before background removal) and its lines' trace positions: what screening reads. */
export interface ScreenSource {
  grid: SliceGrid;
  gridding: GriddingInfo | undefined;
  /** Rows [first, last) of the stack and of the stack before background removal. */
  rows(first: number, last: number): Promise<[SliceStack, SliceStack]>;
  /** First trace of each line and the end (as `PointSpill.lineStarts`). */
  lineStarts(): Int32Array;
  /** x, y of traces [a, b), interleaved. */
  readCoords(a: number, b: number): Float64Array;
  /** A survey in two directions: each direction's own stack (none: the one-line strip rule without them). */
  directions?: DirectionRows[];
}

export type Anchored = { id: string; lon: number; lat: number; depthTopM: number; depthBottomM: number };

export interface Screening {
  anchored: Anchored[];
  anomalies: number;
  aboveGround: number;
  /** Row bands the grid was screened in. */
  bands: number;
  /** Depth of the near-surface (direct- and ground-wave) zone, m: run.json `nearSurfaceM`. */
  nearSurfaceM: number;
  /** report.html's slice thumbnails when they were made with slices.tif (`exportTargets`' `thumbnails`). */
  thumbnails?: Thumbnail[];
}

/**
 * Bytes a screened band holds per cell and slice: two stacks, two score arrays, extraction's work, the
 * band's anomalies and features (measured on the 4 GiB `pnpm bench scale` site: about 70 above the
 * process's baseline).
 */
const BYTES_PER_CELL_SLICE = 70;

/**
 * Grids the spilled points into the final stack and the stack before background removal, screens them
 * and writes slices.tif / slices.json, anomalies.geojson and forecast.geojson. A grid too large for
 * `screenBandBytes` is done in overlapping row bands: each band is gridded (both stacks), its core rows
 * go to a stack on disk, it is screened, and `BandJoin` keeps each object once (cut at core edges where
 * it runs on). The screened anomalies wait on disk (`FeatureSpill`) and are numbered in depth order at
 * the end, as one band numbers them; slices.tif is written from the disk stack. So memory is set by the
 * band, not by the site's area (the forecast keeps 5 bytes a cell: its surveyed mask and distance field).
 */
export async function sliceAndScreen(
  site: Site,
  stageDir: string,
  spill: PointSpill | undefined,
  ids: string[],
  windows: SliceWindow[],
  velocity: VelocityReport,
  recipe: Recipe,
  options: SliceAndScreenOptions,
  threads: number,
): Promise<Screening> {
  const mpu = site.crs.metresPerUnit;
  const timer = options.timer ?? new StageTimer();
  const toWgs84 = (x: number, y: number) => pointToWgs84(site.crs, x, y);
  const gridPlanned = timer.start('gridding');
  const given = options.source;
  const gridder = given ?? SpillGridder.open(spill!, windows, {
    crs: site.crs.code ?? site.crs.proj4,
    metresPerUnit: mpu,
    isGeographic: site.crs.isGeographic,
    level: options.level ?? false,
    threads,
    ...(options.cellSizeM !== undefined ? { cellSizeM: options.cellSizeM } : {}),
  });
  const grid = gridder.grid;
  const { width, height, originX, originY, cellSize } = grid;
  const cellM = cellSize * mpu;

  // Screening's view of the lines: positions thinned to one trace per grid cell (first and last kept),
  // read back from the spill one line at a time for each band (only the band's pieces are held), and the
  // line spacing from every trace.
  const coords: Pick<ScreenSource, 'lineStarts' | 'readCoords'> = given ?? spill!;
  const starts = coords.lineStarts();
  const positions = { lineStarts: starts, line: (l: number) => coords.readCoords(starts[l]!, starts[l + 1]!) };
  const thinned = (l: number): Line => {
    const c = positions.line(l);
    const m = c.length / 2;
    const x: number[] = [];
    const y: number[] = [];
    let last = NaN;
    for (let t = 0; t < m; t++) {
      const cell = Math.floor((c[2 * t]! - originX) / cellSize) * 1e9 + Math.floor((originY - c[2 * t + 1]!) / cellSize);
      if (cell !== last || t === m - 1) {
        x.push(c[2 * t]!);
        y.push(c[2 * t + 1]!);
      }
      last = cell;
    }
    return { id: ids[l]!, x: Float64Array.from(x), y: Float64Array.from(y) };
  };
  const lineSpacingM = lineSpacingOfM(positions, mpu);
  // a survey in two directions: each direction gridded from its own lines too (the one-line strip rule)
  const directions: DirectionRows[] = given
    ? (given.directions ?? [])
    : directionSets(ids.map((_, l) => axialDeg(positions.line(l)))).map((d) => ({ azimuthDeg: d.azimuthDeg, rows: (first, last) => (gridder as SpillGridder).rowsOfLines(first, last, d.lines) }));
  gridPlanned();

  const mig = recipe.steps.find((st) => st.step === 'migration');
  const migrationVelocity = mig && mig.step === 'migration' ? (mig.velocityMPerNs ?? velocity.site.velocityMPerNs) : undefined;
  const nearSurfaceM = nearSurfaceDepthM(site.antenna.frequencyMHz, site.antenna.separationM, velocity.model);
  const screenOptions = {
    nearSurfaceM,
    antennaFrequencyMHz: site.antenna.frequencyMHz,
    antennaSeparationM: site.antenna.separationM,
    // The slices are of migrated lines when the recipe migrates, which pulls a wall's air band towards it.
    ...(migrationVelocity !== undefined ? { migrationVelocityMPerNs: migrationVelocity } : {}),
    forecast: false,
  };

  const deepest = Math.max(0, ...windows.map((w) => w.bottomM));
  const overlapM = options.bandOverlapM ?? Math.max(20, 2.5 * airRadiusM(deepest, velocity.model, site.antenna.separationM));
  const overlap = Math.ceil(overlapM / cellM);
  // each direction's own stack and its scores: 8 bytes a cell and slice more
  const perCellSlice = BYTES_PER_CELL_SLICE + 8 * directions.length;
  const maxRows = Math.max(1, Math.floor((options.screenBandBytes ?? 384 * 2 ** 20) / (perCellSlice * width * Math.max(1, windows.length))));
  const bands = screenBands(height, maxRows, overlap);

  const disk = given ? undefined : DiskStack.create(join(stageDir, `.slices-${process.pid}.raw`), grid, windows);
  const beforeDisk = options.keepScreenInputs ? DiskStack.create(join(stageDir, SCREEN_INPUTS.before), grid, windows) : undefined;
  const directionDisks = options.keepScreenInputs && !given ? directions.map((_, k) => DiskStack.create(join(stageDir, directionStackFile(k)), grid, windows)) : [];
  if (options.keepScreenInputs && spill) await writeScreenLines(stageDir, spill, ids, directions);
  const kept = new FeatureSpill<GeoJsonFeature>(stageDir);
  const surveyed = new Uint8Array(width * height);
  const joiner = new BandJoin({ toWgs84, metresPerUnit: mpu });
  // lines reach this far past a band for the along-line search (half a line spacing, a margin)
  const lineMargin = (Number.isFinite(lineSpacingM) ? lineSpacingM : 0) / mpu + 4 * cellSize;
  const counts = { anomalies: 0, aboveGround: 0 };
  // slices.tif, the thumbnails and the forecast, made on the side while a one-band grid is screened
  let side: Promise<SideOutputsResult> | undefined;
  const forecastInputs: SideOutputsTask['forecast'] = { plan: site.plan, velocity, crs: site.crs, surveyed, options: screenOptions };
  const sideTask = (): SideOutputsTask => ({
    kind: 'sideOutputs',
    stageDir,
    disk: { path: disk!.path, grid, slices: windows },
    gridding: gridder.gridding,
    thumbnailSize: THUMBNAIL_SIZE,
    forecast: forecastInputs,
  });
  try {
    for (const [b, band] of bands.entries()) {
      options.onProgress('air-wave screening', b, bands.length);
      const [stack, before] = await timer.time('gridding', () => gridder.rows(band.first, band.last));
      const c0 = (band.coreFirst - band.first) * width, c1 = (band.coreLast - band.first) * width;
      const directionStacks: DirectionStack[] = [];
      for (const [k, d] of directions.entries()) {
        const own = await timer.time('gridding', () => d.rows(band.first, band.last));
        directionStacks.push({ azimuthDeg: d.azimuthDeg, stack: own });
        directionDisks[k]?.writeRows(band.coreFirst, own.slices.map((s) => s.values.subarray(c0, c1)));
      }
      timer.time(SIDE_STAGE, () => disk?.writeRows(band.coreFirst, stack!.slices.map((s) => s.values.subarray(c0, c1))));
      beforeDisk?.writeRows(band.coreFirst, before!.slices.map((s) => s.values.subarray(c0, c1)));
      const screeningDone = timer.start('air-wave screening');
      surveyed.set(surveyedMask(stack!).subarray(c0, c1), band.coreFirst * width);
      if (disk && options.side && bands.length === 1) {
        side = options.side(sideTask());
        // settled (and any error taken) when awaited below, or before the disk stack goes
        side.catch(() => {});
      }
      const screened = screenSite(
        {
          stack: stack!,
          plan: site.plan,
          velocity,
          lines: bands.length === 1 ? ids.map((_, l) => thinned(l)) : ids.flatMap((_, l) => linesInRows([thinned(l)], originY, cellSize, band.first, band.last, lineMargin)),
          lineSpacingM,
          metresPerUnit: mpu,
          toWgs84,
          beforeBackgroundStack: before!,
          ...(directionStacks.length > 0 ? { directionStacks } : {}),
        },
        screenOptions,
      );
      for (const j of joiner.take(screened, band, height, { main: stack!, before: before! })) {
        // ids are the band's until numbering: key them by band (an echo names its object by id)
        const p = j.feature.properties;
        p.key = `${b}:${String(p.id)}`;
        if (typeof p.echoOf === 'string') p.echoOf = `${b}:${p.echoOf}`;
        kept.add(j.feature, j.depthTopM, j.x);
        counts.anomalies++;
        if (j.feature.properties.origin === 'above-ground') counts.aboveGround++;
      }
      screeningDone();
    }
    options.onProgress('air-wave screening', bands.length, bands.length);
    // (a run without a side runner makes the side outputs here, in turn: the same function); with one,
    // the stage's time is the wait for it after screening
    const made = disk ? await timer.time(SIDE_STAGE, () => side ?? sideOutputs(sideTask())) : undefined;
    disk?.remove();
    const featuresDone = timer.start('anomalies.geojson, forecast');

    const anchored: Anchored[] = [];
    let i = 0;
    // an echo lies below its object, so its object is numbered first (depth order); an object another
    // band reported is not there: the echo keeps its class and loses the link
    const renamed = new Map<string, string>();
    const numbered = (function* () {
      for (const f of kept.sorted()) {
        const id = `A${String(++i).padStart(4, '0')}`;
        f.id = id;
        f.properties.id = id;
        renamed.set(String(f.properties.key), id);
        delete f.properties.key;
        if (typeof f.properties.echoOf === 'string') {
          const to = renamed.get(f.properties.echoOf);
          if (to) f.properties.echoOf = to;
          else delete f.properties.echoOf;
        }
        yield f;
      }
    })();
    const interfaces: GeoJsonFeature[] = [];
    await writeFeatureCollection(join(stageDir, 'anomalies.geojson'), { type: 'FeatureCollection', features: numbered, caution: CAUTION }, (f) => {
      const a = anchoredOf(f);
      if (a) anchored.push(a);
      if (f.properties.class === 'layer') interfaces.push(...interfaceParts(f));
    });
    await writeFeatureCollection(join(stageDir, 'interfaces.geojson'), { type: 'FeatureCollection', features: interfaces });
    const forecast = made?.forecast ?? gridForecast(forecastInputs, grid, windows);
    await writeFeatureCollection(join(stageDir, 'forecast.geojson'), forecast);
    featuresDone();
    return { anchored, ...counts, bands: bands.length, nearSurfaceM, ...(made ? { thumbnails: made.thumbnails } : {}) };
  } catch (e) {
    beforeDisk?.remove();
    for (const d of directionDisks) d.remove();
    throw e;
  } finally {
    // the side task reads the disk stack: done with it (settled either way) before it goes
    await side?.catch(() => {});
    disk?.remove();
    kept.remove();
  }
}

/** screen-lines.json and screen-lines.f64 of `keepScreenInputs`: every line's trace positions, one line at a time. */
async function writeScreenLines(dir: string, spill: PointSpill, ids: string[], directions: DirectionRows[]): Promise<void> {
  const starts = spill.lineStarts();
  const fh = await open(join(dir, SCREEN_INPUTS.positions), 'w');
  try {
    for (let l = 0; l < ids.length; l++) {
      const c = spill.readCoords(starts[l]!, starts[l + 1]!);
      await fh.write(new Uint8Array(c.buffer, c.byteOffset, c.byteLength));
    }
  } finally {
    await fh.close();
  }
  const json: ScreenLinesJson = {
    lines: ids,
    traces: ids.map((_, l) => starts[l + 1]! - starts[l]!),
    ...(directions.length > 0 ? { directions: directions.map((d, k) => ({ azimuthDeg: d.azimuthDeg, file: directionStackFile(k) })) } : {}),
  };
  await writeFile(join(dir, SCREEN_INPUTS.lines), `${JSON.stringify(json)}\n`);
}

/**
 * The lines of each direction of a survey in two directions (`directionGroups`), with the azimuth of
 * their mean axis (degrees clockwise from north, as anomaly directions are), from each line's axis
 * (`axialDeg`); none for one direction.
 */
function directionSets(axes: number[]): { azimuthDeg: number; lines: Uint8Array }[] {
  const group = directionGroups(axes);
  if (!group.some((g) => g === 1)) return [];
  return [0, 1].map((g) => {
    const keep = Uint8Array.from(group, (x) => (x === g ? 1 : 0));
    // mean axis on doubled angles (counter-clockwise from east), as an azimuth
    let c2 = 0, s2 = 0;
    axes.forEach((a, l) => {
      if (!keep[l] || !Number.isFinite(a)) return;
      c2 += Math.cos((2 * a * Math.PI) / 180);
      s2 += Math.sin((2 * a * Math.PI) / 180);
    });
    const ccw = (Math.atan2(s2, c2) * 90) / Math.PI;
    return { azimuthDeg: (((90 - ccw) % 180) + 180) % 180, lines: keep };
  });
}

/**
 * A layer anomaly as interface parts (interfaces.geojson): one polygon per slice it appears in, with
 * that slice's depth range and mid depth, so a dipping reflector reads as a depth map of bands.
 */
function interfaceParts(f: GeoJsonFeature): GeoJsonFeature[] {
  const members = Array.isArray(f.properties.members) ? (f.properties.members as Record<string, unknown>[]) : [];
  return members.flatMap((m) => {
    const outline = m.outline as GeoJsonFeature['geometry'];
    const top = Number(m.topM), bottom = Number(m.bottomM);
    if (!outline) return [];
    const properties: InterfaceProperties = {
      anomalyId: String(f.properties.id),
      slice: Number(m.slice),
      depthTopM: top,
      depthBottomM: bottom,
      depthM: Math.round(((top + bottom) / 2) * 1e6) / 1e6,
      areaM2: Number(m.areaM2),
      strengthDb: typeof m.strengthDb === 'number' ? m.strengthDb : null,
    };
    return [{ type: 'Feature' as const, geometry: outline, properties }];
  });
}

/** An anomaly's id, plan point and depth range, for re-matching review decisions. */
function anchoredOf(f: { properties?: Record<string, unknown> | null; geometry?: unknown }): Anchored | undefined {
  const p = f.properties ?? {};
  const c = anchorOf(p, f.geometry);
  return typeof p.id === 'string' && c ? { id: p.id, lon: c[0], lat: c[1], depthTopM: Number(p.depthTopM), depthBottomM: Number(p.depthBottomM) } : undefined;
}

/** A plan point for an anomaly: its `anchor` property if screening gave one, else the mean of its outline vertices. */
export function anchorOf(p: Record<string, unknown>, geometry: unknown): [number, number] | undefined {
  const a = p.anchor;
  if (Array.isArray(a) && typeof a[0] === 'number' && typeof a[1] === 'number') return [a[0], a[1]];
  const pts: number[][] = [];
  const walk = (c: unknown) => {
    if (Array.isArray(c) && typeof c[0] === 'number') pts.push(c as number[]);
    else if (Array.isArray(c)) c.forEach(walk);
  };
  walk((geometry as { coordinates?: unknown } | undefined)?.coordinates);
  if (pts.length === 0) return undefined;
  return [pts.reduce((s, q) => s + q[0]!, 0) / pts.length, pts.reduce((s, q) => s + q[1]!, 0) / pts.length];
}
