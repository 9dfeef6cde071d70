import KDBush from 'kdbush';
import { idwKernels, idwRowsWasm } from './idw-wasm';
import { cellCentreX, cellCentreY, type SliceGrid } from './stack';

export interface IdwOptions {
  /** Search radius along the survey direction, site CRS units. */
  radius: number;
  /** Search radius across the survey direction, site CRS units. @default radius (a circle) */
  radiusAcross?: number;
  /** Survey direction, degrees counter-clockwise from the x axis (east). @default 0 */
  directionDeg?: number;
  /** Inverse-distance power. @default 2 */
  power?: number;
  /** Use at most this many nearest points within the radius. @default 12 */
  maxPoints?: number;
  /** Cells with fewer points within the radius are nodata. @default 1 */
  minPoints?: number;
}

/**
 * The search frame: an ellipse with semi-axes `radius` (along the survey direction) and `radiusAcross`
 * becomes a circle of radius `radius` once positions are rotated onto the survey direction and the
 * across-line coordinate is scaled by radius / radiusAcross. Distances for ranking and weighting are
 * measured in this frame (so an anisotropic search is an isotropic one on scaled positions).
 */
export interface SearchFrame {
  ex: number;
  ey: number;
  nx: number;
  ny: number;
  radius: number;
}

export function searchFrame(options: IdwOptions): SearchFrame {
  const ra = options.radius;
  const rc = options.radiusAcross ?? ra;
  if (!(ra > 0) || !(rc > 0)) throw new Error(`search radii must be positive, found ${ra} and ${rc}`);
  const th = ((options.directionDeg ?? 0) * Math.PI) / 180;
  const s = ra / rc;
  return { ex: Math.cos(th), ey: Math.sin(th), nx: -Math.sin(th) * s, ny: Math.cos(th) * s, radius: ra };
}

/** kd-tree (kdbush) of the points in the search frame. Its data is one ArrayBuffer (`index.data`). */
export function buildIndex(coords: Float64Array, frame: SearchFrame, shared = false): KDBush {
  const n = coords.length / 2;
  const index = shared ? new KDBush(Math.max(n, 1), 32, Float64Array, SharedArrayBuffer) : new KDBush(Math.max(n, 1), 32);
  for (let i = 0; i < n; i++) {
    const x = coords[2 * i]!;
    const y = coords[2 * i + 1]!;
    index.add(x * frame.ex + y * frame.ey, x * frame.nx + y * frame.ny);
  }
  if (n === 0) index.add(Number.POSITIVE_INFINITY, Number.POSITIVE_INFINITY);
  return index.finish();
}

/**
 * The k nearest points within `r` of (qx, qy) in the index (search frame coordinates), nearest first.
 * Writes ids and squared distances into `ids`/`d2` (length >= k); returns how many were found.
 * The radius shrinks to the current k-th distance as the search goes, and the nearer half of a node is
 * visited first, so most of the tree is never touched.
 */
export function nearestWithin(
  index: KDBush,
  qx: number,
  qy: number,
  r: number,
  k: number,
  ids: Int32Array,
  d2: Float64Array,
  stack: Int32Array,
): number {
  const tIds = index.ids;
  const coords = index.coords;
  const nodeSize = index.nodeSize;
  let count = 0;
  let r2 = r * r;
  let sp = 0;
  stack[sp++] = 0;
  stack[sp++] = tIds.length - 1;
  stack[sp++] = 0;
  while (sp > 0) {
    const axis = stack[--sp]!;
    const right = stack[--sp]!;
    const left = stack[--sp]!;
    if (right - left <= nodeSize) {
      for (let i = left; i <= right; i++) {
        const dx = coords[2 * i]! - qx;
        const dy = coords[2 * i + 1]! - qy;
        const d = dx * dx + dy * dy;
        if (d <= r2) {
          count = insert(tIds[i]!, d, ids, d2, count, k);
          if (count === k) r2 = d2[k - 1]!;
        }
      }
      continue;
    }
    const m = (left + right) >> 1;
    const x = coords[2 * m]!;
    const y = coords[2 * m + 1]!;
    const dx = x - qx;
    const dy = y - qy;
    const d = dx * dx + dy * dy;
    if (d <= r2) {
      count = insert(tIds[m]!, d, ids, d2, count, k);
      if (count === k) r2 = d2[k - 1]!;
    }
    const delta = axis === 0 ? qx - x : qy - y;
    const nextAxis = 1 - axis;
    // Push the far side first so the near side is searched first (LIFO).
    if (delta <= 0) {
      if (delta * delta <= r2) {
        stack[sp++] = m + 1;
        stack[sp++] = right;
        stack[sp++] = nextAxis;
      }
      stack[sp++] = left;
      stack[sp++] = m - 1;
      stack[sp++] = nextAxis;
    } else {
      if (delta * delta <= r2) {
        stack[sp++] = left;
        stack[sp++] = m - 1;
        stack[sp++] = nextAxis;
      }
      stack[sp++] = m + 1;
      stack[sp++] = right;
      stack[sp++] = nextAxis;
    }
  }
  return count;
}

function insert(id: number, d: number, ids: Int32Array, d2: Float64Array, count: number, k: number): number {
  // Equal distances keep arrival order, as a multimap does.
  let j = count < k ? count : k - 1;
  if (count === k && d >= d2[k - 1]!) return count;
  while (j > 0 && d2[j - 1]! > d) {
    d2[j] = d2[j - 1]!;
    ids[j] = ids[j - 1]!;
    j--;
  }
  d2[j] = d;
  ids[j] = id;
  return count < k ? count + 1 : count;
}

/**
 * Inverse-distance weighting of `nBands` values per point onto `grid`, evaluated at cell centres: the
 * `maxPoints` nearest points within the search ellipse, weights 1 / r^power; a point closer than
 * sqrt(1e-13) to a cell centre gives its value directly; cells with fewer than `minPoints` points are nodata.
 * The neighbour search runs once per cell and its weights serve every band.
 *
 * `coords` is `[x0, y0, x1, y1, ...]` (site CRS), `values` point-major (`values[p * nBands + b]`);
 * a NaN value leaves that point out of that band only (weights renormalised). Returns one row-major
 * Float32Array per band. `index` must have been built by `buildIndex` with the same search frame.
 */
export function idwGrid(
  coords: Float64Array,
  values: Float32Array,
  nBands: number,
  grid: SliceGrid,
  options: IdwOptions,
  index?: KDBush,
): Float32Array[] {
  const n = coords.length / 2;
  if (values.length !== n * nBands) throw new Error(`expected ${n * nBands} values (${n} points x ${nBands} bands), found ${values.length}`);
  const tree = index ?? buildIndex(coords, searchFrame(options));
  const out: Float32Array[] = [];
  for (let b = 0; b < nBands; b++) out.push(new Float32Array(grid.width * grid.height));
  idwRows(tree, n, values, nBands, grid, options, 0, grid.height, out);
  return out;
}

/** True if any value is NaN (then the per-band weight sums are kept). */
export function hasNaN(values: Float32Array): boolean {
  for (let i = 0; i < values.length; i++) if (values[i] !== values[i]) return true;
  return false;
}

/**
 * The kernel of `idwGrid` for rows [rowStart, rowEnd) into preallocated `out` bands (also run by workers);
 * in WebAssembly where it runs (`idwRowsWasm`, the same bits), else the JavaScript here.
 * `out` holds the grid's rows from `outRow0` on (row r at (r - outRow0) * width): a band of a grid is
 * gridded at the grid's own cell centres, so its cells equal the whole grid's.
 */
export function idwRows(
  tree: KDBush,
  n: number,
  values: Float32Array,
  nBands: number,
  grid: SliceGrid,
  options: IdwOptions,
  rowStart: number,
  rowEnd: number,
  out: Float32Array[],
  anyNaN = hasNaN(values),
  outRow0 = 0,
): void {
  const frame = searchFrame(options);
  const power = options.power ?? 2;
  const k = Math.max(1, options.maxPoints ?? 12);
  const minPoints = options.minPoints ?? 1;
  // (a count that is no int32 makes the JavaScript throw, as before)
  const kernels = k === (k | 0) ? idwKernels() : null;
  if (kernels) return idwRowsWasm(kernels, tree, n, values, nBands, grid, { frame, k, minPoints, halfPower: power / 2 }, rowStart, rowEnd, out, anyNaN, outRow0);
  const { width, nodata } = grid;
  const ids = new Int32Array(k);
  const d2 = new Float64Array(k);
  const w = new Float64Array(k);
  const stack = new Int32Array(3 * 2 * 64);
  const acc = new Float64Array(nBands);
  const wsum = new Float64Array(nBands);
  const halfPower = power / 2;
  const r = frame.radius;
  for (let row = rowStart; row < rowEnd; row++) {
    const y = cellCentreY(grid, row);
    for (let col = 0; col < width; col++) {
      const x = cellCentreX(grid, col);
      const qx = x * frame.ex + y * frame.ey;
      const qy = x * frame.nx + y * frame.ny;
      const cell = (row - outRow0) * width + col;
      const found = n === 0 ? 0 : nearestWithin(tree, qx, qy, r, k, ids, d2, stack);
      if (found < minPoints || found === 0) {
        for (let b = 0; b < nBands; b++) out[b]![cell] = nodata;
        continue;
      }
      if (d2[0]! < 1e-13) {
        const base = ids[0]! * nBands;
        for (let b = 0; b < nBands; b++) {
          const v = values[base + b]!;
          out[b]![cell] = v === v ? v : nodata;
        }
        continue;
      }
      let total = 0;
      for (let j = 0; j < found; j++) {
        const wj = halfPower === 1 ? 1 / d2[j]! : 1 / Math.pow(d2[j]!, halfPower);
        w[j] = wj;
        total += wj;
      }
      acc.fill(0);
      if (!anyNaN) {
        for (let j = 0; j < found; j++) {
          const wj = w[j]!;
          const base = ids[j]! * nBands;
          for (let b = 0; b < nBands; b++) acc[b] = acc[b]! + wj * values[base + b]!;
        }
        const inv = 1 / total;
        for (let b = 0; b < nBands; b++) out[b]![cell] = acc[b]! * inv;
      } else {
        wsum.fill(0);
        for (let j = 0; j < found; j++) {
          const wj = w[j]!;
          const base = ids[j]! * nBands;
          for (let b = 0; b < nBands; b++) {
            const v = values[base + b]!;
            if (v === v) {
              acc[b] = acc[b]! + wj * v;
              wsum[b] = wsum[b]! + wj;
            }
          }
        }
        for (let b = 0; b < nBands; b++) out[b]![cell] = wsum[b]! > 0 ? acc[b]! / wsum[b]! : nodata;
      }
    }
  }
}
