import { buildIndex, idwRows, searchFrame, type IdwOptions } from './idw';
import { idwWorkers } from './idw-parallel';
import { levelFactors } from './levelling';
import type { GriddingInfo, SliceGrid, SliceStack } from './stack';
import type { PointSpill } from './spill';
import { surveyGeometryOf, type SurveyGeometry } from './survey';
import type { SliceMode, SliceWindow } from './windows';
import { resolveGrid, type GridOptions } from './grid-options';

export interface SpillGridOptions extends GridOptions {
  /**
   * Bytes of points (positions, values and kd-tree) held at once; the grid is cut into row bands to keep
   * under it. @default 64 MiB
   */
  bandBytes?: number;
}

/** The plan of a banded gridding: grid, parameters, the points each row band would hold. */
interface BandPlan {
  grid: SliceGrid;
  idw: Required<IdwOptions>;
  geometry: SurveyGeometry;
  /** Points (at most) that rows [r0, r1) and their margin hold, from the row histogram. */
  held: (r0: number, r1: number) => number;
  /** Points a band may hold. */
  budget: number;
  /** Rows of margin around a band: every point within the search radius of its cell centres. */
  marginRows: number;
  factors: Float64Array | undefined;
  lineStarts: Int32Array;
}

/**
 * Grids the points of a `PointSpill` one row band at a time: a band's points (those within the search
 * radius of its rows, read back from disk) get their own kd-tree and fill the band's rows of the output.
 * Memory: the output grid (4 bytes per cell per value) plus one band of points, whatever the number of
 * lines. Every cell sees the same points within its search radius as in `gridPoints`, so the result is
 * the same except for the order among points at exactly equal distances.
 *
 * The spill's values per trace may hold several stacks side by side (`nValues = stacks * windows.length`,
 * e.g. after and before a processing step): one neighbour search per cell serves all; one stack each is returned.
 */
export async function gridSpill(spill: PointSpill, windows: SliceWindow[], options: SpillGridOptions, mode: SliceMode = 'mean-square'): Promise<SliceStack[]> {
  const gridder = SpillGridder.open(spill, windows, options, mode);
  return gridder.rows(0, gridder.grid.height);
}

/** `gridSpill` on the calling thread. */
export function gridSpillSync(spill: PointSpill, windows: SliceWindow[], options: SpillGridOptions, mode: SliceMode = 'mean-square'): SliceStack[] {
  const gridder = SpillGridder.open(spill, windows, { ...options, threads: 1 }, mode);
  return gridder.rowsSync(0, gridder.grid.height);
}

/**
 * A banded gridding kept open to fill any rows of the grid, one call at a time: `rows(r0, r1)` returns
 * the stacks of rows [r0, r1) on their own sub-grid (the grid's origin moved down r0 rows), with the
 * cells the whole grid would have there. The grid, the levelling factors and the point histogram are
 * worked out once; each call starts and ends its own gridding workers. Memory: the rows asked for plus
 * one band of points.
 */
export class SpillGridder {
  /** Band buffers by kind (shared with workers or not) and values per point, reused between calls. */
  private readonly buffers = new Map<string, BandBuffers>();
  /** Point bands filled so far, over all calls. */
  pointBands = 0;

  private constructor(
    private readonly spill: PointSpill,
    private readonly plan: BandPlan,
    private readonly windows: SliceWindow[],
    private readonly options: SpillGridOptions,
    private readonly mode: SliceMode,
  ) {}

  static open(spill: PointSpill, windows: SliceWindow[], options: SpillGridOptions, mode: SliceMode = 'mean-square'): SpillGridder {
    return new SpillGridder(spill, planBands(spill, windows, options), windows, options, mode);
  }

  /** The whole output grid. */
  get grid(): SliceGrid {
    return { ...this.plan.grid };
  }

  /** What slices.json records of the gridding (`rowBands`: the point bands filled so far). */
  get gridding(): GriddingInfo {
    const { plan, spill, options, mode } = this;
    return { ...griddingInfo(plan.geometry, plan.idw, options, mode, spill.lineCount, spill.traceCount), rowBands: this.pointBands };
  }

  async rows(r0: number, r1: number): Promise<SliceStack[]> {
    return this.rowsOf(r0, r1, { nv: this.spill.nValues });
  }

  /** `rows` on the calling thread. */
  rowsSync(r0: number, r1: number): SliceStack[] {
    return this.rowsOfSync(r0, r1, { nv: this.spill.nValues });
  }

  /**
   * `rows` of the first stack only (the spill's first `windows.length` values per trace), made from the
   * traces of the lines `lines` keeps (1) alone, on the same grid with the same search: e.g. one
   * direction of a survey in two directions.
   */
  async rowsOfLines(r0: number, r1: number, lines: Uint8Array): Promise<SliceStack> {
    return (await this.rowsOf(r0, r1, { nv: this.windows.length, lines }))[0]!;
  }

  private async rowsOf(r0: number, r1: number, pick: Pick): Promise<SliceStack[]> {
    const { spill, plan } = this;
    const threads = this.options.threads ?? 1;
    const outRows = r1 - r0;
    const cells = plan.grid.width * outRows;
    const nValues = pick.nv;
    // Small grids are not worth the workers.
    if (threads <= 1 || cells * nValues < 2e6) return this.rowsOfSync(r0, r1, pick);
    const buffer = new SharedArrayBuffer(cells * nValues * 4);
    const workers = idwWorkers(threads);
    const buf = this.buffersOf(nValues, true);
    const bands = pointBands(plan, r0, r1);
    buf.reserve(Math.max(0, ...bands.map(([b0, b1]) => plan.held(b0, b1))));
    try {
      for (const [b0, b1] of bands) {
        const n = loadBand(spill, plan, b0, b1, buf, pick);
        const tree = buildIndex(buf.coords.subarray(0, 2 * n), searchFrame(plan.idw), true);
        await workers.rows(tree, n, buf.values.buffer as unknown as SharedArrayBuffer, nValues, plan.grid, plan.idw, b0, b1, buffer, spill.hasNaN, r0, outRows);
        this.pointBands++;
      }
    } finally {
      // Idle workers keep the shared buffers they were sent (their isolates have no reason to collect),
      // so each call's workers go with it: a site gridded in many bands would otherwise hold every band.
      await workers.close();
    }
    return this.stacksOf(bandsOf(buffer, nValues, cells), r0, r1);
  }

  private rowsOfSync(r0: number, r1: number, pick: Pick): SliceStack[] {
    const { spill, plan } = this;
    const nValues = pick.nv;
    const cells = plan.grid.width * (r1 - r0);
    const out = bandsOf(new ArrayBuffer(cells * nValues * 4), nValues, cells);
    const buf = this.buffersOf(nValues, false);
    const bands = pointBands(plan, r0, r1);
    buf.reserve(Math.max(0, ...bands.map(([b0, b1]) => plan.held(b0, b1))));
    for (const [b0, b1] of bands) {
      const n = loadBand(spill, plan, b0, b1, buf, pick);
      idwRows(buildIndex(buf.coords.subarray(0, 2 * n), searchFrame(plan.idw)), n, buf.values, nValues, plan.grid, plan.idw, b0, b1, out, spill.hasNaN, r0);
      this.pointBands++;
    }
    return this.stacksOf(out, r0, r1);
  }

  private buffersOf(nValues: number, sharedMemory: boolean): BandBuffers {
    const key = `${sharedMemory}:${nValues}`;
    let buf = this.buffers.get(key);
    if (!buf) this.buffers.set(key, (buf = new BandBuffers(nValues, sharedMemory)));
    return buf;
  }

  private stacksOf(out: Float32Array[], r0: number, r1: number): SliceStack[] {
    const { windows } = this;
    const ns = windows.length;
    const g = this.plan.grid;
    const grid: SliceGrid = { ...g, originY: g.originY - r0 * g.cellSize, height: r1 - r0 };
    const gridding = this.gridding;
    return Array.from({ length: out.length / ns }, (_, s) => ({
      grid: { ...grid },
      slices: windows.map((w, k) => ({ index: w.index, topM: w.topM, bottomM: w.bottomM, values: out[s * ns + k]! })),
      gridding: { ...gridding },
    }));
  }
}

function bandsOf(buffer: ArrayBufferLike, nValues: number, cells: number): Float32Array[] {
  return Array.from({ length: nValues }, (_, b) => new Float32Array(buffer, b * cells * 4, cells));
}

/** Rows [r0, r1) cut greedily into bands whose points fit the plan's budget (at least one row each). */
function pointBands(plan: BandPlan, r0: number, r1: number): [number, number][] {
  const bands: [number, number][] = [];
  for (let a = r0; a < r1; ) {
    let b = a + 1;
    while (b < r1 && plan.held(a, b + 1) <= plan.budget) b++;
    bands.push([a, b]);
    a = b;
  }
  return bands;
}

function planBands(spill: PointSpill, windows: SliceWindow[], options: SpillGridOptions): BandPlan {
  const ns = windows.length;
  if (ns === 0 || spill.nValues % ns !== 0) throw new Error(`expected a multiple of ${ns} values per point, found ${spill.nValues}`);
  const lineStarts = spill.lineStarts();
  const geometry = surveyGeometryOf({ lineStarts, line: (l) => spill.readCoords(lineStarts[l]!, lineStarts[l + 1]!) });
  const { grid, idw } = resolveGrid(geometry, options);
  const factors = options.level ? levelFactors(spill.nValues, lineStarts, (l) => spill.readValues(lineStarts[l]!, lineStarts[l + 1]!)) : undefined;
  // A point is within the search ellipse of a cell centre only if it is within the larger semi-axis in y.
  const reach = Math.max(idw.radius, idw.radiusAcross);
  const marginRows = Math.ceil(reach / grid.cellSize) + 2;
  const { height, originY, cellSize } = grid;
  // Points per row (clamped into the grid; points beyond any band's margin are never read).
  const perRow = new Float64Array(height);
  spill.forEachChunk((_, c) => {
    for (let i = 1; i < c.length; i += 2) {
      const r = Math.floor((originY - c[i]!) / cellSize);
      if (r < -marginRows || r >= height + marginRows) continue;
      perRow[Math.min(height - 1, Math.max(0, r))]! += 1;
    }
  });
  const prefix = new Float64Array(height + 1);
  for (let r = 0; r < height; r++) prefix[r + 1] = prefix[r]! + perRow[r]!;
  const held = (r0: number, r1: number) => prefix[Math.min(height, r1 + marginRows)]! - prefix[Math.max(0, r0 - marginRows)]!;
  // per point: 16 B position, 4 B per value, the kd-tree's 16 B position and 4 B id
  const budget = Math.max(1, Math.floor((options.bandBytes ?? 64 * 2 ** 20) / (36 + 4 * spill.nValues)));
  return { grid, idw, geometry, held, budget, marginRows, factors, lineStarts };
}

/** Buffers for one band of points, reused from band to band (grown when a band holds more). */
class BandBuffers {
  coords = new Float64Array(0);
  values: Float32Array<ArrayBufferLike> = new Float32Array(0);
  constructor(
    readonly nValues: number,
    readonly sharedMemory: boolean,
  ) {}
  reserve(n: number): void {
    if (n <= this.coords.length / 2) return;
    const cap = Math.ceil(n * 1.1) + 1024;
    const old = { coords: this.coords, values: this.values };
    this.coords = new Float64Array(2 * cap);
    const bytes = 4 * cap * this.nValues;
    this.values = new Float32Array(this.sharedMemory ? new SharedArrayBuffer(bytes) : new ArrayBuffer(bytes));
    this.coords.set(old.coords);
    this.values.set(old.values);
  }
}

/** Which values of which traces a gridding takes: the first `nv` of each trace, of the lines `lines` keeps (all without it). */
interface Pick {
  nv: number;
  lines?: Uint8Array;
}

/** The points of rows [r0, r1) plus the margin, in spill order, levelled if asked, into `buf` (n of them). */
function loadBand(spill: PointSpill, plan: BandPlan, r0: number, r1: number, buf: BandBuffers, pick: Pick): number {
  const { grid, marginRows, factors, lineStarts } = plan;
  const nv = spill.nValues;
  const take = pick.nv;
  const yTop = grid.originY - (r0 - marginRows) * grid.cellSize;
  const yBottom = grid.originY - (r1 + marginRows) * grid.cellSize;
  let k = 0;
  let line = 0;
  spill.forEachChunk(
    (first, c, v) => {
      const m = c.length / 2;
      for (let t = 0; t < m; t++) {
        const y = c[2 * t + 1]!;
        if (!(y <= yTop && y >= yBottom)) continue;
        if (factors || pick.lines) while (lineStarts[line + 1]! <= first + t) line++;
        if (pick.lines && !pick.lines[line]) continue;
        buf.reserve(k + 1);
        const { coords, values } = buf;
        coords[2 * k] = c[2 * t]!;
        coords[2 * k + 1] = y;
        values.set(v!.subarray(t * nv, t * nv + take), k * take);
        if (factors) for (let b = 0; b < take; b++) values[k * take + b] = values[k * take + b]! * factors[line * nv + b]!;
        k++;
      }
    },
    { values: true },
  );
  return k;
}

/** What slices.json records of the gridding. */
export function griddingInfo(geometry: SurveyGeometry, idw: Required<IdwOptions>, options: GridOptions, mode: SliceMode, lineCount: number, traceCount: number): GriddingInfo {
  return {
    method: 'idw',
    power: idw.power,
    maxPoints: idw.maxPoints,
    minPoints: idw.minPoints,
    radius: idw.radius,
    radiusAcross: idw.radiusAcross,
    directionDeg: idw.directionDeg,
    mode,
    levelled: options.level ?? false,
    lineCount,
    traceCount,
    lineSpacing: geometry.lineSpacing,
    traceSpacing: geometry.traceSpacing,
  };
}
