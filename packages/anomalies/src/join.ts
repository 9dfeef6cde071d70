import type { SliceGrid } from '@lamina/slices';
import { wasmMinCellDistance } from './cells-wasm';
import { axisAngleDeg, axisDiffDeg, IN_LINE_ANGLE_DEG, oneLineFootprintM, oneLineWidthM } from './classify';
import { cellShape, type ShapeOptions } from './shape';
import { edgeCells } from './split';
import type { Anomaly3D } from './types';

export interface JoinOptions extends ShapeOptions {
  /** Largest plan gap between two pieces of one utility, m. @default 2 line spacings (a pipe at an angle to the lines is seen once per line) */
  maxGapM?: number;
  /** Largest depth gap between the pieces' depth ranges, m. @default 0 (the ranges meet) */
  maxDepthGapM?: number;
  /** A linear piece must run within this angle of the joined line, degrees. @default `IN_LINE_ANGLE_DEG`, 20 (common practice, no source) */
  maxAngleDeg?: number;
  /**
   * Compact pieces that may join a piece of the usual kind (linear, or seen on one line) but not one
   * another: e.g. `isPointPiece` ones, which a utility shows where its response breaks up.
   * @default none
   */
  alsoJoinable?: (a: Anomaly3D) => boolean;
  /**
   * Azimuths of the survey lines, degrees (`ClassifyContext.lineAzimuthsDeg`): a compact piece no wider
   * than one line's gridded footprint (2 spacings and a cell) whose long axis runs along a line (within
   * `alongLineDeg`) takes part too: a utility crossing the lines at a shallow angle is seen once per
   * line, each time drawn out along it. @default none
   */
  lineAzimuthsDeg?: readonly number[];
  /** @default 15 */
  alongLineDeg?: number;
}

/**
 * Groups pieces of one utility: anomalies that line up in plan and depth across small gaps. Only
 * linear pieces and compact ones seen on one line (`oneLineWidthM`) take part, and `alsoJoinable` ones with those. Pairs
 * are tried nearest first (union-find); two groups join when their depth ranges meet within
 * `maxDepthGapM`, some cells of the two lie within `maxGapM`, their union is linear and no wider than
 * `maxWidthM(depth)` allows, and every linear piece runs along the union. Returns groups of indices
 * (singletons included), each ascending.
 */
export function joinAlignedPieces(
  pieces: Anomaly3D[],
  grid: SliceGrid,
  lineSpacingM: number,
  maxWidthM: (depthM: number) => number,
  options: JoinOptions = {},
): number[][] {
  const mpu = options.metresPerUnit ?? 1;
  const n = pieces.length;
  const gapU = (options.maxGapM ?? 2 * lineSpacingM) / mpu;
  // a piece of a utility is linear, or compact and seen on one line only (a pipe crossing the lines
  // at an angle); a compact piece wider than a line spacing is an object of its own (a footing)
  const cellM = grid.cellSize * mpu;
  const azimuths = options.lineAzimuthsDeg ?? [];
  const drawnAlongLine = (a: Anomaly3D) =>
    azimuths.length > 0 && a.shape.widthM <= oneLineFootprintM(lineSpacingM, cellM) && a.shape.lengthM > a.shape.widthM && axisAngleDeg(a.shape.directionDeg, azimuths) <= (options.alongLineDeg ?? 15);
  const oneLine = oneLineWidthM(lineSpacingM, cellM);
  const drawn = pieces.map((a) => a.shape.kind !== 'linear' && a.shape.widthM > oneLine && drawnAlongLine(a));
  const usual = pieces.map((a, i) => a.shape.kind === 'linear' || a.shape.widthM <= oneLine || drawn[i]!);
  const also = pieces.map((a, i) => !usual[i] && (options.alsoJoinable?.(a) ?? false));
  const maxAngle = options.maxAngleDeg ?? IN_LINE_ANGLE_DEG;
  const box = pieces.map((a) => {
    let r0 = Infinity, r1 = -Infinity, c0 = Infinity, c1 = -Infinity;
    for (let ci = 0; ci < a.cells.length; ci++) {
      const k = a.cells[ci]!;
      const r = (k / grid.width) | 0, c = k - r * grid.width;
      if (r < r0) r0 = r;
      if (r > r1) r1 = r;
      if (c < c0) c0 = c;
      if (c > c1) c1 = c;
    }
    return { r0, r1, c0, c1 };
  });
  const gapCells = gapU / grid.cellSize;
  const edges: (Int32Array | undefined)[] = new Array(n);
  const edgesOf = (i: number) => (edges[i] ??= edgeCells(pieces[i]!.cells, grid.width));
  const pairs: [number, number, number][] = [];
  for (let i = 0; i < n; i++)
    for (let j = i + 1; j < n; j++) {
      const a = pieces[i]!, b = pieces[j]!;
      const dz = options.maxDepthGapM ?? 0;
      if (!(usual[i] || also[i]) || !(usual[j] || also[j]) || (also[i] && also[j])) continue;
      if (a.depthTopM > b.depthBottomM + dz + 1e-9 || b.depthTopM > a.depthBottomM + dz + 1e-9) continue;
      const A = box[i]!, B = box[j]!;
      const br = Math.max(0, A.r0 - B.r1, B.r0 - A.r1), bc = Math.max(0, A.c0 - B.c1, B.c0 - A.c1);
      if (Math.hypot(br, bc) > gapCells + 1) continue;
      const d = minCellDistance(a.cells, b.cells, grid.width, edgesOf(i), edgesOf(j));
      if (d <= gapCells + 1) pairs.push([d, i, j]);
    }
  pairs.sort((p, q) => p[0] - q[0] || p[1] - q[1] || p[2] - q[2]);
  const parent = Int32Array.from({ length: n }, (_, i) => i);
  const find = (a: number): number => {
    while (parent[a] !== a) a = parent[a] = parent[parent[a]!]!;
    return a;
  };
  const groupOf = new Map<number, number[]>(Array.from({ length: n }, (_, i) => [i, [i]]));
  // each group's cells (ascending, each once) and deepest bottom, kept with it: a trial union merges two lists
  const groupCells = new Map<number, Int32Array>();
  const groupBottom = new Map<number, number>();
  const cellsOf = (r: number) => groupCells.get(r) ?? pieces[r]!.cells;
  const bottomOf = (r: number) => groupBottom.get(r) ?? Math.max(0, pieces[r]!.depthBottomM);
  for (const [, i, j] of pairs) {
    const ri = find(i), rj = find(j);
    if (ri === rj) continue;
    const members = [...groupOf.get(ri)!, ...groupOf.get(rj)!];
    const cells = mergeAscending(cellsOf(ri), cellsOf(rj));
    const bottom = Math.max(bottomOf(ri), bottomOf(rj));
    const shape = cellShape(cells, grid, options);
    if (shape.kind !== 'linear' || shape.widthM > maxWidthM(bottom)) continue;
    if (members.some((m) => pieces[m]!.shape.kind === 'linear' && axisDiffDeg(pieces[m]!.shape.directionDeg, shape.directionDeg) > maxAngle)) continue;
    const root = Math.min(ri, rj);
    parent[ri] = root;
    parent[rj] = root;
    groupOf.delete(ri);
    groupOf.delete(rj);
    groupOf.set(root, members.sort((p, q) => p - q));
    groupCells.set(root, cells);
    groupBottom.set(root, bottom);
  }
  // A group of compact pieces drawn out along the lines and nothing linear is a utility only when seen
  // on three lines at least: two such blobs side by side are as likely two stones.
  const out: number[][] = [];
  for (const g of groupOf.values()) {
    const weak = g.length < 3 && g.some((m) => drawn[m]) && g.every((m) => pieces[m]!.shape.kind !== 'linear');
    if (weak) for (const m of g) out.push([m]);
    else out.push(g);
  }
  return out.sort((p, q) => p[0]! - q[0]!);
}

/** The union of two ascending lists of cells, ascending, each cell once. */
function mergeAscending(a: Int32Array, b: Int32Array): Int32Array {
  const out = new Int32Array(a.length + b.length);
  let i = 0, j = 0, n = 0;
  while (i < a.length && j < b.length) {
    const x = a[i]!, y = b[j]!;
    if (x < y) (out[n++] = x), i++;
    else if (y < x) (out[n++] = y), j++;
    else (out[n++] = x), i++, j++;
  }
  while (i < a.length) out[n++] = a[i++]!;
  while (j < b.length) out[n++] = b[j++]!;
  return out.slice(0, n);
}

/**
 * Smallest distance between cells of two ascending cell lists, in cells: 0 when they share a cell, else
 * the least over their edge cells (`edgeCells`). Exact: for disjoint sets, a cell whose four neighbours
 * all belong to its set has one of them strictly nearer to any cell of the other set (one step along the
 * axis of the larger offset), so every nearest pair is a pair of edge cells.
 */
export function minCellDistance(a: Int32Array, b: Int32Array, width: number, edgeA = edgeCells(a, width), edgeB = edgeCells(b, width)): number {
  return wasmMinCellDistance(a, b, width, edgeA, edgeB) ?? minCellDistanceInJs(a, b, width, edgeA, edgeB);
}

/** `minCellDistance` in JavaScript: where WebAssembly does not run, and its kernel's reference in the tests (cells-wasm.ts). */
export function minCellDistanceInJs(a: Int32Array, b: Int32Array, width: number, edgeA = edgeCells(a, width), edgeB = edgeCells(b, width)): number {
  for (let i = 0, j = 0; i < a.length && j < b.length; ) {
    if (a[i]! === b[j]!) return 0;
    if (a[i]! < b[j]!) i++;
    else j++;
  }
  let best = Infinity;
  for (let i = 0; i < edgeA.length; i++) {
    const ra = (edgeA[i]! / width) | 0, ca = edgeA[i]! - ra * width;
    for (let j = 0; j < edgeB.length; j++) {
      const rb = (edgeB[j]! / width) | 0, cb = edgeB[j]! - rb * width;
      const d = (ra - rb) ** 2 + (ca - cb) ** 2;
      if (d < best) best = d;
    }
  }
  return Math.sqrt(best);
}
