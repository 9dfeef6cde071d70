import type { VelocityModel } from '@lamina/velocity';
import { averageVelocity, sampleDepths, timeToDepth } from './depth';
import { buildIndex, idwGrid, searchFrame, type IdwOptions } from './idw';
import { idwGridParallel } from './idw-parallel';
import { levelLines } from './levelling';
import type { GriddingInfo, SliceGrid, SliceStack } from './stack';
import { surveyGeometry, type SurveyGeometry } from './survey';
import { defaultThicknessM, sliceWindows, traceSliceValues, type SliceMode, type SliceWindow } from './windows';

/** The part of a processed line the slicer reads (a `RadarLine` fits). `data` holds the envelope or amplitudes. */
export interface LineInput {
  id: string;
  nTraces: number;
  nSamples: number;
  dtNs: number;
  timeZeroNs: number;
  data: Float32Array;
  x: ArrayLike<number>;
  y: ArrayLike<number>;
}

export interface SliceBuilderOptions {
  windows: SliceWindow[];
  model: VelocityModel;
  /** Antenna separation, m. */
  separationM: number;
  /** @default 'mean-square' */
  mode?: SliceMode;
}

export interface GridOptions {
  /** Site CRS as given (`EPSG:nnnn` or proj4). */
  crs: string;
  /** @default 1 */
  metresPerUnit?: number;
  /** @default false */
  isGeographic?: boolean;
  /** Cell size, m. @default a quarter of the line spacing, at least the trace spacing */
  cellSizeM?: number;
  /** Search radius along the survey direction, m. @default half the line spacing (parallel lines), else the line spacing */
  radiusM?: number;
  /** Search radius across the survey direction, m. @default the line spacing (parallel lines), else `radiusM` */
  radiusAcrossM?: number;
  /** Survey direction, degrees counter-clockwise from east. @default estimated from the lines */
  directionDeg?: number;
  /** @default 2 */
  power?: number;
  /** @default 12 */
  maxPoints?: number;
  /** @default 1 */
  minPoints?: number;
  /** Line-level levelling (see `levelLines`). @default false */
  level?: boolean;
  /** @default -9999 */
  nodata?: number;
  /** Grid extent [minX, minY, maxX, maxY] in CRS units. @default the traces' bounding box */
  bounds?: [number, number, number, number];
  /** Worker threads for `gridAsync` / `buildSlices`. @default os.availableParallelism() */
  threads?: number;
}

/** Lines whose axial directions agree this well (mean resultant length) count as a parallel survey. Common practice, no source. */
const PARALLEL = 0.9;

/**
 * Collects per-trace slice values line by line, then grids them. Only positions (2 doubles), and
 * nSlices floats per trace are kept, never the traces: memory grows by 16 + 4 * nSlices bytes per trace
 * (plus the output grid, 4 bytes per cell per slice), not with the samples.
 */
export class SliceBuilder {
  readonly windows: SliceWindow[];
  readonly options: SliceBuilderOptions;
  private coords = new Float64Array(1024);
  private values: Float32Array;
  private n = 0;
  private starts: number[] = [0];
  private ids: string[] = [];
  private depthCache = new Map<string, Float64Array>();

  constructor(options: SliceBuilderOptions) {
    if (options.windows.length === 0) throw new Error('expected at least one slice window, found none');
    this.options = options;
    this.windows = options.windows;
    this.values = new Float32Array(512 * this.windows.length);
  }

  get traceCount(): number {
    return this.n;
  }

  get lineIds(): readonly string[] {
    return this.ids;
  }

  add(line: LineInput): void {
    const { nTraces, nSamples } = line;
    if (line.x.length < nTraces || line.y.length < nTraces) {
      throw new Error(`line ${line.id}: expected ${nTraces} positions, found ${Math.min(line.x.length, line.y.length)}`);
    }
    const key = `${nSamples}|${line.dtNs}|${line.timeZeroNs}`;
    let depths = this.depthCache.get(key);
    if (!depths) {
      depths = sampleDepths(nSamples, line.dtNs, line.timeZeroNs, this.options.model, this.options.separationM);
      this.depthCache.set(key, depths);
    }
    const ns = this.windows.length;
    this.reserve(this.n + nTraces);
    traceSliceValues(line.data, nTraces, nSamples, depths, this.windows, this.options.mode, this.values.subarray(this.n * ns, (this.n + nTraces) * ns));
    for (let t = 0; t < nTraces; t++) {
      this.coords[2 * (this.n + t)] = line.x[t]!;
      this.coords[2 * (this.n + t) + 1] = line.y[t]!;
    }
    this.n += nTraces;
    this.starts.push(this.n);
    this.ids.push(line.id);
  }

  private reserve(n: number) {
    if (2 * n <= this.coords.length) return;
    let cap = this.coords.length / 2;
    while (cap < n) cap *= 2;
    const c = new Float64Array(2 * cap);
    c.set(this.coords.subarray(0, 2 * this.n));
    this.coords = c;
    const v = new Float32Array(cap * this.windows.length);
    v.set(this.values.subarray(0, this.n * this.windows.length));
    this.values = v;
  }

  /** Positions `[x0, y0, ...]`, trace-major slice values, and the first trace of each line (+ total). */
  points(): { coords: Float64Array; values: Float32Array; lineStarts: Int32Array } {
    return {
      coords: this.coords.subarray(0, 2 * this.n),
      values: this.values.subarray(0, this.n * this.windows.length),
      lineStarts: Int32Array.from(this.starts),
    };
  }

  /** Grid on the calling thread. */
  grid(options: GridOptions): SliceStack {
    const { coords, values, lineStarts } = this.points();
    return gridPoints(coords, values, lineStarts, this.windows, options, this.options.mode ?? 'mean-square');
  }

  /** Grid on worker threads (`options.threads`); the same result as `grid`. */
  gridAsync(options: GridOptions): Promise<SliceStack> {
    const { coords, values, lineStarts } = this.points();
    return gridPointsAsync(coords, values, lineStarts, this.windows, options, this.options.mode ?? 'mean-square');
  }
}

/** Resolved gridding parameters in CRS units, from options and the survey geometry. */
export function resolveGrid(geometry: SurveyGeometry, options: GridOptions): { grid: SliceGrid; idw: Required<IdwOptions> } {
  const mpu = options.metresPerUnit ?? 1;
  const { traceSpacing } = geometry;
  // One line: no line spacing to go by, so take 20 trace spacings. Common practice, no source.
  const lineSpacing = Number.isFinite(geometry.lineSpacing) && geometry.lineSpacing > 0 ? geometry.lineSpacing : 20 * (traceSpacing || 1 / mpu);
  const parallel = geometry.parallelism >= PARALLEL;
  // Cell a quarter of the line spacing, not finer than the traces. Common practice, no source.
  const cellSize = options.cellSizeM !== undefined ? options.cellSizeM / mpu : Math.max(lineSpacing / 4, traceSpacing || 0);
  const radius = options.radiusM !== undefined ? options.radiusM / mpu : parallel ? lineSpacing / 2 : lineSpacing;
  const radiusAcross = options.radiusAcrossM !== undefined ? options.radiusAcrossM / mpu : parallel ? lineSpacing : radius;
  if (!(cellSize > 0)) throw new Error(`cell size must be positive, found ${cellSize}`);
  const [minX, minY, maxX, maxY] = options.bounds ?? geometry.bounds;
  const originX = Math.floor(minX / cellSize) * cellSize;
  const originY = Math.ceil(maxY / cellSize) * cellSize;
  const width = Math.max(1, Math.ceil((maxX - originX) / cellSize + 1e-9));
  const height = Math.max(1, Math.ceil((originY - minY) / cellSize + 1e-9));
  if (width * height > 4e8) {
    throw new Error(`grid of ${width} x ${height} cells is too large: choose a larger cell size (now ${cellSize * mpu} m)`);
  }
  const grid: SliceGrid = {
    crs: options.crs,
    originX,
    originY,
    cellSize,
    width,
    height,
    nodata: options.nodata ?? -9999,
    metresPerUnit: mpu,
    isGeographic: options.isGeographic ?? false,
  };
  const idw: Required<IdwOptions> = {
    radius,
    radiusAcross,
    directionDeg: options.directionDeg ?? geometry.directionDeg,
    power: options.power ?? 2,
    maxPoints: options.maxPoints ?? 12,
    minPoints: options.minPoints ?? 1,
  };
  return { grid, idw };
}

/** Grid trace-major slice values (`nTraces * windows.length`) at `coords` onto a stack. */
export function gridPoints(
  coords: Float64Array,
  values: Float32Array,
  lineStarts: Int32Array,
  windows: SliceWindow[],
  options: GridOptions,
  mode: SliceMode = 'mean-square',
): SliceStack {
  const p = prepare(coords, values, lineStarts, windows, options, mode);
  const index = buildIndex(coords, searchFrame(p.idw));
  return p.finish(idwGrid(coords, p.values, windows.length, p.grid, p.idw, index));
}

/** `gridPoints` with the gridding on worker threads. */
export async function gridPointsAsync(
  coords: Float64Array,
  values: Float32Array,
  lineStarts: Int32Array,
  windows: SliceWindow[],
  options: GridOptions,
  mode: SliceMode = 'mean-square',
): Promise<SliceStack> {
  const p = prepare(coords, values, lineStarts, windows, options, mode);
  return p.finish(await idwGridParallel(coords, p.values, windows.length, p.grid, p.idw, options.threads));
}

function prepare(coords: Float64Array, values: Float32Array, lineStarts: Int32Array, windows: SliceWindow[], options: GridOptions, mode: SliceMode) {
  const ns = windows.length;
  const geometry = surveyGeometry(coords, lineStarts);
  const { grid, idw } = resolveGrid(geometry, options);
  let v = values;
  if (options.level) {
    v = values.slice();
    levelLines(v, ns, lineStarts);
  }
  const gridding: GriddingInfo = {
    method: 'idw',
    power: idw.power,
    maxPoints: idw.maxPoints,
    minPoints: idw.minPoints,
    radius: idw.radius,
    radiusAcross: idw.radiusAcross,
    directionDeg: idw.directionDeg,
    mode,
    levelled: options.level ?? false,
    lineCount: lineStarts.length - 1,
    traceCount: coords.length / 2,
    lineSpacing: geometry.lineSpacing,
    traceSpacing: geometry.traceSpacing,
  };
  const finish = (bands: Float32Array[]): SliceStack => ({
    grid,
    slices: windows.map((w, k) => ({ index: w.index, topM: w.topM, bottomM: w.bottomM, values: bands[k]! })),
    gridding,
  });
  return { grid, idw, values: v, finish };
}

/** Streaming entry point: feed lines one at a time (any iterable or async iterable), get the stack. */
export async function buildSlices(
  lines: Iterable<LineInput> | AsyncIterable<LineInput>,
  options: SliceBuilderOptions & GridOptions,
): Promise<SliceStack> {
  const b = new SliceBuilder(options);
  for await (const line of lines) b.add(line);
  return b.gridAsync(options);
}

export interface DefaultWindowOptions {
  model: VelocityModel;
  separationM: number;
  frequencyMHz: number;
  /** Record geometry of the lines, to bound the depth range by the deepest sample. */
  nSamples: number;
  dtNs: number;
  timeZeroNs: number;
  /** @default 0 */
  topM?: number;
  /** @default the depth of the last sample */
  bottomM?: number;
  /** @default half a wavelength at the average velocity to mid-range (`defaultThicknessM`) */
  thicknessM?: number;
  /** @default 0 */
  overlap?: number;
}

/** Slice windows for a survey: from the surface to the record's depth, half a wavelength thick. */
export function defaultWindows(o: DefaultWindowOptions): SliceWindow[] {
  const maxDepth = timeToDepth((o.nSamples - 1) * o.dtNs - o.timeZeroNs, o.model, o.separationM);
  if (!(maxDepth > 0)) throw new Error(`the record (${o.nSamples} samples of ${o.dtNs} ns) reaches no depth below the surface`);
  const top = o.topM ?? 0;
  const bottom = Math.min(o.bottomM ?? maxDepth, maxDepth);
  const thickness = o.thicknessM ?? defaultThicknessM(averageVelocity((top + bottom) / 2, o.model), o.frequencyMHz);
  return sliceWindows(top, bottom, { thicknessM: thickness, overlap: o.overlap ?? 0 });
}
