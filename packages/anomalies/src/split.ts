import { wasmStraightBands } from './band-wasm';

/**
 * Thick parts of a component: its morphological opening by a disk of radius `radiusCells` (erosion,
 * then dilation of what is left, Serra 1982), split into 8-connected parts. Two objects that touch
 * through a neck narrower than the disk's diameter come out as two parts; a part thinner than the
 * diameter everywhere (an arc, a fringe) is not in the opening at all. Cells are grid indices
 * (row * width + col), ascending; the parts are ascending too, largest first.
 */
export function thickParts(cells: Int32Array, width: number, radiusCells: number): Int32Array[] {
  if (cells.length === 0 || !(radiusCells > 0)) return [];
  // a one-cell frame of outside cells round the bounding box
  const { mask: inside, w, h, r0, c0 } = boxMask(cells, width);
  // erosion: cells farther than the radius from every outside cell
  const dOut = squaredDistance(inside, w, h, 0);
  const core = new Uint8Array(w * h);
  const r2 = radiusCells * radiusCells;
  let any = false;
  for (let i = 0; i < w * h; i++) if (inside[i] && dOut[i]! > r2) (core[i] = 1), (any = true);
  if (!any) return [];
  // dilation of the core by the same disk, inside the component
  const dCore = squaredDistance(core, w, h, 1);
  const open = new Uint8Array(w * h);
  for (let i = 0; i < w * h; i++) if (inside[i] && dCore[i]! <= r2) open[i] = 1;
  return maskParts(open, w, h, r0, c0, width);
}

/**
 * 8-connected parts of the set cells of `mask` (w x h, a one-cell frame of unset cells round the box
 * whose first row and column are r0, c0 of a grid `width` wide), as grid indices: each part ascending,
 * the parts largest first.
 */
function maskParts(mask: Uint8Array, w: number, h: number, r0: number, c0: number, width: number): Int32Array[] {
  const parts: Int32Array[] = [];
  const seen = new Uint8Array(w * h);
  const stack: number[] = [];
  for (let s = 0; s < w * h; s++) {
    if (!mask[s] || seen[s]) continue;
    const out: number[] = [];
    seen[s] = 1;
    stack.push(s);
    while (stack.length) {
      const i = stack.pop()!;
      const y = (i / w) | 0, x = i - y * w;
      out.push((y - 1 + r0) * width + (x - 1 + c0));
      for (let dy = -1; dy <= 1; dy++)
        for (let dx = -1; dx <= 1; dx++) {
          const j = (y + dy) * w + (x + dx);
          if ((dx || dy) && y + dy >= 0 && y + dy < h && x + dx >= 0 && x + dx < w && mask[j] && !seen[j]) (seen[j] = 1), stack.push(j);
        }
    }
    parts.push(Int32Array.from(out).sort());
  }
  return parts.sort((p, q) => q.length - p.length);
}

/** A set of cells (grid indices) as a mask of its bounding box with a one-cell frame (see `maskParts`). */
function boxMask(cells: Int32Array, width: number): { mask: Uint8Array; w: number; h: number; r0: number; c0: number } {
  let r0 = Infinity, r1 = -Infinity, c0 = Infinity, c1 = -Infinity;
  for (let i = 0; i < cells.length; i++) {
    const k = cells[i]!;
    const r = (k / width) | 0, c = k - r * width;
    if (r < r0) r0 = r;
    if (r > r1) r1 = r;
    if (c < c0) c0 = c;
    if (c > c1) c1 = c;
  }
  const w = c1 - c0 + 3, h = r1 - r0 + 3;
  const mask = new Uint8Array(w * h);
  for (let i = 0; i < cells.length; i++) {
    const k = cells[i]!;
    const r = (k / width) | 0, c = k - r * width;
    mask[(r - r0 + 1) * w + (c - c0 + 1)] = 1;
  }
  return { mask, w, h, r0, c0 };
}

/**
 * Squared Euclidean distance (in cells) of every cell to the nearest cell whose `mask` equals
 * `target` (Felzenszwalb and Huttenlocher 2012, the lower envelope of parabolas, by rows then columns).
 */
export function squaredDistance(mask: Uint8Array, w: number, h: number, target: 0 | 1): Float64Array {
  const INF = 1e20;
  const d = new Float64Array(w * h);
  for (let i = 0; i < w * h; i++) d[i] = mask[i] === target ? 0 : INF;
  const n = Math.max(w, h);
  const f = new Float64Array(n), out = new Float64Array(n), z = new Float64Array(n + 1);
  const v = new Int32Array(n);
  const pass = (len: number, get: (i: number) => number, set: (i: number, x: number) => void) => {
    for (let i = 0; i < len; i++) f[i] = get(i);
    let k = 0;
    v[0] = 0;
    z[0] = -Infinity;
    z[1] = Infinity;
    for (let q = 1; q < len; q++) {
      let s = (f[q]! + q * q - (f[v[k]!]! + v[k]! * v[k]!)) / (2 * q - 2 * v[k]!);
      while (s <= z[k]!) {
        k--;
        s = (f[q]! + q * q - (f[v[k]!]! + v[k]! * v[k]!)) / (2 * q - 2 * v[k]!);
      }
      k++;
      v[k] = q;
      z[k] = s;
      z[k + 1] = Infinity;
    }
    k = 0;
    for (let q = 0; q < len; q++) {
      while (z[k + 1]! < q) k++;
      out[q] = (q - v[k]!) ** 2 + f[v[k]!]!;
    }
    for (let i = 0; i < len; i++) set(i, out[i]!);
  };
  for (let y = 0; y < h; y++) pass(w, (x) => d[y * w + x]!, (x, val) => (d[y * w + x] = val));
  for (let x = 0; x < w; x++) pass(h, (y) => d[y * w + x]!, (y, val) => (d[y * w + x] = val));
  return d;
}

/**
 * Straight bands of a component, strongest first: the band `bandCells` wide (across its axis) that
 * holds most of the component's cells, found over all directions (a Hough transform of the cell
 * centres, directions about one cell apart at the component's far end), taken out, and the search
 * repeated on what is left, up to `maxBands` bands of at least `minCells` cells. Two utilities crossing
 * in one slice make an X that is as wide as it is long, sized like a layer by its second moments; as
 * bands it is two objects. Returns the bands (cells ascending) and the cells in none of them.
 *
 * With `accept`, the search stops at the first band it refuses: that band's cells stay in `rest`, and
 * the bands that would have followed it are never searched for (a caller that keeps only the bands
 * before the first refused one gets the same bands and the same rest, ascending).
 */
export function straightBands(cells: Int32Array, width: number, bandCells: number, minCells: number, maxBands = 4, accept?: (band: Int32Array) => boolean): { bands: Int32Array[]; rest: Int32Array } {
  return wasmStraightBands(cells, width, Math.max(1, Math.round(bandCells)), minCells, maxBands, accept) ?? straightBandsInJs(cells, width, bandCells, minCells, maxBands, accept);
}

/** `straightBands` in JavaScript: where WebAssembly does not run, and the kernels' reference in the tests (band-wasm.ts). */
export function straightBandsInJs(cells: Int32Array, width: number, bandCells: number, minCells: number, maxBands = 4, accept?: (band: Int32Array) => boolean): { bands: Int32Array[]; rest: Int32Array } {
  const w = Math.max(1, Math.round(bandCells));
  const n0 = cells.length;
  // the cells still left: their indices, columns and rows in the first `n` places
  const left = Int32Array.from(cells);
  const col = new Float64Array(n0);
  const row = new Float64Array(n0);
  for (let i = 0; i < n0; i++) {
    col[i] = left[i]! % width;
    row[i] = (left[i]! / width) | 0;
  }
  const ends = rowEnds(n0);
  let n = n0;
  const bands: Int32Array[] = [];
  while (bands.length < maxBands && n >= minCells) {
    const best = fullestBand(col, row, n, w, ends);
    if (best.count < minCells) break;
    // the band's cells out, the others moved down (kept in ascending order); every cell of the range,
    // also one on its far edge that the window's count (bins [lo, lo + w)) left to the next window
    const band = new Int32Array(n);
    let nb = 0;
    for (let i = 0; i < n; i++) {
      const r = col[i]! * best.c + row[i]! * best.s;
      if (r >= best.lo && r < best.lo + w + 1e-9) band[nb++] = left[i]!;
    }
    const found = band.subarray(0, nb).slice();
    if (accept && !accept(found)) break;
    let m = 0;
    for (let i = 0; i < n; i++) {
      const r = col[i]! * best.c + row[i]! * best.s;
      if (!(r >= best.lo && r < best.lo + w + 1e-9)) {
        left[m] = left[i]!;
        col[m] = col[i]!;
        row[m] = row[i]!;
        m++;
      }
    }
    bands.push(found);
    n = m;
  }
  return { bands, rest: left.slice(0, n) };
}

/** Each row's first and last column and its number of cells among a set of cells (`count` rows). */
interface RowEnds {
  row: Float64Array;
  first: Float64Array;
  last: Float64Array;
  cells: Int32Array;
  count: number;
}

/** Work space of `fullestBand` for up to `n` cells. */
function rowEnds(n: number): RowEnds {
  return { row: new Float64Array(n), first: new Float64Array(n), last: new Float64Array(n), cells: new Int32Array(n), count: 0 };
}

/**
 * Below this |cos| (|sin|) of a direction the cells of one row (column) are not counted as spaced
 * along it (`fullestBand`'s bound): their offsets are some 1e-11 apart at worst from rounding, far
 * less than their spacing above it.
 */
const MIN_STEP = 1e-3;

/** Cells of the fullest `w`-bin window a row (column) may hold when its cells' offsets step by `step`: at most ceil(w / step) + 1, with room for rounding. */
function perLine(w: number, step: number): number {
  return step < MIN_STEP ? Infinity : Math.floor((w / step) * (1 + 1e-6)) + 2;
}

/** Sum over counts of min(count, k). */
function cappedSum(counts: Int32Array, n: number, k: number): number {
  let t = 0;
  for (let i = 0; i < n; i++) t += Math.min(counts[i]!, k);
  return t;
}

/**
 * Every COARSE-th direction is searched first; the others only where a bound from the nearest searched
 * one says they could hold more (see `fullestBand`).
 */
const COARSE = 16;

/**
 * The band `w` one-cell bins wide across direction (c, s) = (cos, sin) of some angle that holds most
 * of the first `n` cells (columns `col`, rows `row`, ascending as grid indices): its count, direction
 * and lowest offset col c + row s. `ends` is work space. Of equally full bands, the one of the lowest
 * angle and, in it, of the lowest offset: what a search of every direction in turn finds.
 *
 * Branch and bound over the directions: every COARSE-th is searched; a direction d steps from a searched
 * one turns every cell's offset about the box centre by at most R d pi / nA (R the box's half diagonal),
 * so the cells of any of its windows lie within w + 2 R d pi / nA of each other in the searched
 * direction, and the fullest window of that many bins (+ 2 for the bin edges) there bounds its count.
 * A direction is searched only when that bound (or the per-row and per-column one) could reach the best.
 */
export function fullestBand(col: Float64Array, row: Float64Array, n: number, w: number, ends: RowEnds = rowEnds(n)): { count: number; c: number; s: number; lo: number } {
  let c0 = Infinity, c1 = -Infinity, w0 = Infinity, w1 = -Infinity;
  let nRows = 0;
  for (let i = 0; i < n; i++) {
    if (col[i]! < c0) c0 = col[i]!;
    if (col[i]! > c1) c1 = col[i]!;
    if (row[i]! < w0) w0 = row[i]!;
    if (row[i]! > w1) w1 = row[i]!;
    // ascending cells: a row is one run
    if (i === 0 || row[i] !== row[i - 1]) {
      ends.row[nRows] = row[i]!;
      ends.cells[nRows] = 0;
      ends.first[nRows++] = col[i]!;
    }
    ends.last[nRows - 1] = col[i]!;
    ends.cells[nRows - 1]!++;
  }
  ends.count = nRows;
  // cells per column, for the bound below
  const nCols = c1 - c0 + 1;
  const colCells = new Int32Array(nCols);
  for (let i = 0; i < n; i++) colCells[col[i]! - c0]!++;
  const span = Math.hypot(c1 - c0, w1 - w0);
  // directions about one cell apart at the far end
  const nA = Math.min(720, Math.max(90, Math.ceil(Math.PI * span)));
  const nBins = Math.floor(span) + 3;
  const bins = new Int32Array(4 * nBins);
  const cum = new Int32Array(nBins + 1);
  // wide[g * half + d - 1]: the fullest window of widthAt(d) bins of searched direction g * COARSE
  const half = COARSE >> 1;
  const nG = Math.ceil(nA / COARSE);
  const wide = new Int32Array(nG * half);
  // cells of a window d directions away lie within this many offset units at the searched one (with room for rounding)
  const widthAt = (d: number) => Math.floor(w + span * ((d * Math.PI) / nA) * (1 + 1e-9) + 1e-6) + 2;
  let bestCount = 0, bestA = -1, bestC = 1, bestS = 0, bestLo = 0;
  const search = (a: number): void => {
    const th = (Math.PI * a) / nA;
    const c = Math.cos(th), s = Math.sin(th);
    const { nb, r0 } = histogram(col, row, n, c, s, ends, bins);
    // the fullest window of w bins, the first of them (a direction of equal count before this one keeps the band)
    let run = 0, most = 0, at = 0;
    for (let b = 0; b < nb; b++) {
      run += bins[b]!;
      if (b >= w) run -= bins[b - w]!;
      if (run > most) (most = run), (at = b);
    }
    if (most > bestCount || (most === bestCount && a < bestA)) (bestCount = most), (bestA = a), (bestC = c), (bestS = s), (bestLo = r0 + Math.max(0, at - w + 1));
    if (a % COARSE !== 0) return;
    cum[0] = 0;
    for (let b = 0; b < nb; b++) cum[b + 1] = cum[b]! + bins[b]!;
    const g = a / COARSE;
    for (let d = 1; d <= half; d++) {
      const wd = widthAt(d);
      let m = 0;
      for (let b = 0; b < nb; b++) m = Math.max(m, cum[Math.min(nb, b + wd)]! - cum[b]!);
      wide[g * half + d - 1] = m;
    }
  };
  for (let a = 0; a < nA; a += COARSE) search(a);
  for (let a = 1; a < nA; a++) {
    if (a % COARSE === 0) continue;
    // the nearest searched direction; past the last one, direction 0 turned half a circle (offsets negated: the same windows)
    const lower = a - (a % COARSE), upper = lower + COARSE;
    const g = upper - a < a - lower ? (upper < nA ? upper / COARSE : 0) : lower / COARSE;
    const d = Math.min(a - lower, upper - a);
    let bound = wide[g * half + d - 1]!;
    // skipped only when it could not take the band: a direction before the best one takes it on a tie
    const beaten = (x: number) => x < bestCount || (x === bestCount && a > bestA);
    if (beaten(bound)) continue;
    const c = Math.cos((Math.PI * a) / nA), s = Math.sin((Math.PI * a) / nA);
    // distinct columns of one row have offsets at least |c| apart, distinct rows of one column |s| apart:
    // a window of w bins holds at most perLine of each
    bound = Math.min(bound, cappedSum(ends.cells, nRows, perLine(w, Math.abs(c))));
    if (beaten(bound)) continue;
    bound = Math.min(bound, cappedSum(colCells, nCols, perLine(w, Math.abs(s))));
    if (beaten(bound)) continue;
    search(a);
  }
  return { count: bestCount, c: bestC, s: bestS, lo: bestLo };
}

/**
 * Cells per one-cell bin of the offset col c + row s of the first `n` cells, from the least offset
 * `r0` on, in the first `nb` places of `bins` (at least 4 nb long). `ends` holds the cells' rows (`fullestBand`).
 */
function histogram(col: Float64Array, row: Float64Array, n: number, c: number, s: number, ends: RowEnds, bins: Int32Array): { nb: number; r0: number } {
  // The offset never decreases with col (c >= 0) or never increases (c < 0) along a row: each row's
  // least and greatest offsets are at its ends.
  const lo = c >= 0 ? ends.first : ends.last, hi = c >= 0 ? ends.last : ends.first;
  let r0 = Infinity, r1 = -Infinity;
  for (let k = 0; k < ends.count; k++) {
    const q0 = lo[k]! * c + ends.row[k]! * s, q1 = hi[k]! * c + ends.row[k]! * s;
    if (q0 < r0) r0 = q0;
    if (q1 > r1) r1 = q1;
  }
  // offset - r0 >= 0: truncation is the floor. Four interleaved histograms (cell i counts in histogram
  // i mod 4): neighbouring cells mostly fall in one bin, and counting them in one array makes each
  // increment wait for the one before.
  const nb = Math.floor(r1 - r0) + 2;
  bins.fill(0, 0, 4 * nb);
  let i = 0;
  for (; i + 3 < n; i += 4) {
    bins[4 * ((col[i]! * c + row[i]! * s - r0) | 0)]!++;
    bins[4 * ((col[i + 1]! * c + row[i + 1]! * s - r0) | 0) + 1]!++;
    bins[4 * ((col[i + 2]! * c + row[i + 2]! * s - r0) | 0) + 2]!++;
    bins[4 * ((col[i + 3]! * c + row[i + 3]! * s - r0) | 0) + 3]!++;
  }
  for (; i < n; i++) bins[4 * ((col[i]! * c + row[i]! * s - r0) | 0)]!++;
  // the four histograms summed into the first nb places (bin b reads places 4b.. not yet written)
  for (let b = 0; b < nb; b++) bins[b] = bins[4 * b]! + bins[4 * b + 1]! + bins[4 * b + 2]! + bins[4 * b + 3]!;
  return { nb, r0 };
}

/** 8-connected parts of a set of cells (ascending grid indices), largest first. */
export function connectedParts(cells: Int32Array, width: number): Int32Array[] {
  if (cells.length === 0) return [];
  const { mask, w, h, r0, c0 } = boxMask(cells, width);
  return maskParts(mask, w, h, r0, c0, width);
}

/** The cells of an ascending cell list with a 4-neighbour outside it (or outside the grid's columns), ascending. */
export function edgeCells(cells: Int32Array, width: number): Int32Array {
  const has = (k: number) => {
    let lo = 0, hi = cells.length - 1;
    while (lo <= hi) {
      const m = (lo + hi) >> 1, v = cells[m]!;
      if (v === k) return true;
      if (v < k) lo = m + 1;
      else hi = m - 1;
    }
    return false;
  };
  const out = new Int32Array(cells.length);
  let n = 0;
  for (let i = 0; i < cells.length; i++) {
    const k = cells[i]!, c = k % width;
    // left and right neighbours are the list's neighbours when present (ascending), up and down by search
    const left = c > 0 && i > 0 && cells[i - 1] === k - 1;
    const right = c < width - 1 && i + 1 < cells.length && cells[i + 1] === k + 1;
    if (!(left && right && has(k - width) && has(k + width))) out[n++] = k;
  }
  return out.slice(0, n);
}
