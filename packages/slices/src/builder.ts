import { averageVelocity, sampleDepth, sampleDepths, type VelocityModel } from '@lamina/velocity';
import { availableParallelism } from 'node:os';
import { buildIndex, idwGrid, searchFrame } from './idw';
import { idwGridParallel } from './idw-parallel';
import { levelLines } from './levelling';
import { griddingInfo, gridSpill, gridSpillSync, type SpillGridOptions } from './bands';
import { resolveGrid, type GridOptions } from './grid-options';
import { PointSpill } from './spill';
import type { SliceStack } from './stack';
import { surveyGeometry } from './survey';
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

/**
 * Collects per-trace slice values line by line, then grids them. The traces are never kept: each
 * line is reduced to its positions and nSlices floats per trace, which go to a `PointSpill` on disk.
 * Memory holds one line while adding, and the output grid (4 bytes per cell per slice) plus one row
 * band of points while gridding (`gridSpill`), whatever the number of lines. Call `dispose` to
 * delete the spill.
 */
export class SliceBuilder {
  readonly windows: SliceWindow[];
  readonly options: SliceBuilderOptions;
  private readonly spill: PointSpill;
  private ids: string[] = [];
  private depthCache = new Map<string, Float64Array>();

  constructor(options: SliceBuilderOptions & { spillDir?: string }) {
    if (options.windows.length === 0) throw new Error('expected at least one slice window, found none');
    this.options = options;
    this.windows = options.windows;
    this.spill = new PointSpill(this.windows.length, options.spillDir);
  }

  get traceCount(): number {
    return this.spill.traceCount;
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
    const values = traceSliceValues(line.data, nTraces, nSamples, depths, this.windows, this.options.mode);
    const x = Float64Array.from({ length: nTraces }, (_, t) => line.x[t]!);
    const y = Float64Array.from({ length: nTraces }, (_, t) => line.y[t]!);
    this.spill.addLine(x, y, values);
    this.ids.push(line.id);
  }

  /** Positions `[x0, y0, ...]`, trace-major slice values, and the first trace of each line (+ total), read back into memory. */
  points(): { coords: Float64Array; values: Float32Array; lineStarts: Int32Array } {
    const n = this.spill.traceCount;
    return { coords: this.spill.readCoords(0, n), values: this.spill.readValues(0, n), lineStarts: this.spill.lineStarts() };
  }

  /** Grid on the calling thread, in row bands. */
  grid(options: SpillGridOptions): SliceStack {
    return gridSpillSync(this.spill, this.windows, options, this.options.mode ?? 'mean-square')[0]!;
  }

  /** Grid on worker threads (`options.threads`, default the core count); the same result as `grid`. */
  async gridAsync(options: SpillGridOptions): Promise<SliceStack> {
    const threads = options.threads ?? availableParallelism();
    return (await gridSpill(this.spill, this.windows, { ...options, threads }, this.options.mode ?? 'mean-square'))[0]!;
  }

  /** Deletes the spilled points. */
  dispose(): void {
    this.spill.remove();
  }
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
  const gridding = griddingInfo(geometry, idw, options, mode, lineStarts.length - 1, coords.length / 2);
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
  options: SliceBuilderOptions & SpillGridOptions & { spillDir?: string },
): Promise<SliceStack> {
  const b = new SliceBuilder(options);
  try {
    for await (const line of lines) b.add(line);
    return await b.gridAsync(options);
  } finally {
    b.dispose();
  }
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

/**
 * Slice windows for a survey: from the surface to one period (1000 / f ns) before the record's end, half
 * a wavelength thick. The record's last period holds the processing's edge effects, not data: the dewow
 * window shrinks to one side there, the band-pass and the envelope lose what follows, and a pulse
 * arriving then is cut off; gain, largest at the end, then makes a band of it along every line (a
 * record too short for that keeps its whole length).
 */
export function defaultWindows(o: DefaultWindowOptions): SliceWindow[] {
  const end = (o.nSamples - 1) * o.dtNs - o.timeZeroNs;
  const trimmed = sampleDepth(o.model, end - 1000 / o.frequencyMHz, o.separationM);
  const maxDepth = trimmed > 0 ? trimmed : sampleDepth(o.model, end, o.separationM);
  if (!(maxDepth > 0)) throw new Error(`the record (${o.nSamples} samples of ${o.dtNs} ns) reaches no depth below the surface`);
  const top = o.topM ?? 0;
  const bottom = Math.min(o.bottomM ?? maxDepth, maxDepth);
  const thickness = o.thicknessM ?? defaultThicknessM(averageVelocity(o.model, (top + bottom) / 2), o.frequencyMHz);
  return sliceWindows(top, bottom, { thicknessM: thickness, overlap: o.overlap ?? 0 });
}
