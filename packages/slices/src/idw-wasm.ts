import type KDBush from 'kdbush';
import { kernelsOf, type Kernels } from '@lamina/processing';
import type { SearchFrame } from './idw';
import { IDW_WASM_BASE64 } from './idw-wasm-binary';
import { cellCentreX, cellCentreY, type SliceGrid } from './stack';

/** The exports of wasm/idw-kernels.ts (pointers are byte offsets into `memory`). */
interface IdwExports {
  memory: WebAssembly.Memory;
  idwRows(
    tIds: number, coords: number, nSlots: number, nodeSize: number, empty: boolean, values: number, nBands: number, anyNaN: boolean,
    xs: number, width: number, ys: number, rows: number, ex: number, ey: number, nx: number, ny: number, r: number, k: number, minPoints: number,
    halfPower: number, nodata: number, kIds: number, kD2: number, w: number, stack: number, acc: number, wsum: number, out: number,
  ): void;
}

/** This thread's IDW kernel; null where WebAssembly does not run or `useKernels(false)` (@lamina/processing). */
export const idwKernels = kernelsOf<IdwExports>(IDW_WASM_BASE64, { Math: { pow: Math.pow } });

/**
 * Float32 outputs per kernel call (a block of a few rows): the module's memory holds the points and one
 * block. Many short calls rather than one: V8 runs a WebAssembly function in its baseline code until it
 * has run a while, and a call already running stays there (the bench site's grid: 52-58 ms in one call,
 * 34-42 ms in blocks of about two rows).
 */
const BLOCK_VALUES = 1 << 14;

/**
 * `idwRows` (./idw.ts) in the kernel (wasm/idw-kernels.ts): the tree's ids and coordinates and the values
 * copied in, the cell centres worked out here as the JavaScript works them out, the output copied out a
 * block of rows at a time; the same search and sums, so the same bits.
 */
export function idwRowsWasm(
  kernels: Kernels<IdwExports>,
  tree: KDBush,
  n: number,
  values: Float32Array,
  nBands: number,
  grid: SliceGrid,
  search: { frame: SearchFrame; k: number; minPoints: number; halfPower: number },
  rowStart: number,
  rowEnd: number,
  out: Float32Array[],
  anyNaN: boolean,
  outRow0: number,
): void {
  const { width, nodata } = grid;
  const { frame, k } = search;
  const nSlots = tree.ids.length;
  const nv = n * nBands;
  const per = Math.max(1, Math.min(rowEnd - rowStart, Math.floor(BLOCK_VALUES / Math.max(1, width * nBands))));
  const [ids, coords, vals, xs, ys, kIds, kD2, w, stack, acc, wsum, o] = kernels.layout(
    4 * nSlots, 16 * nSlots, 4 * nv, 8 * width, 8 * per, 4 * k, 8 * k, 8 * k, 4 * 384, 8 * nBands, 8 * nBands, 4 * per * width * nBands,
  );
  kernels.i32(ids, nSlots).set(tree.ids);
  kernels.f64(coords, 2 * nSlots).set(tree.coords);
  kernels.f32(vals, nv).set(values.subarray(0, nv));
  const x = kernels.f64(xs, width);
  for (let col = 0; col < width; col++) x[col] = cellCentreX(grid, col);
  for (let r0 = rowStart; r0 < rowEnd; r0 += per) {
    const rows = Math.min(per, rowEnd - r0);
    const y = kernels.f64(ys, rows);
    for (let i = 0; i < rows; i++) y[i] = cellCentreY(grid, r0 + i);
    kernels.k.idwRows(ids, coords, nSlots, tree.nodeSize, n === 0, vals, nBands, anyNaN, xs, width, ys, rows, frame.ex, frame.ey, frame.nx, frame.ny, frame.radius, k, search.minPoints, search.halfPower, nodata, kIds, kD2, w, stack, acc, wsum, o);
    const cells = rows * width;
    const res = kernels.f32(o, cells * nBands);
    for (let b = 0; b < nBands; b++) out[b]!.set(res.subarray(b * cells, (b + 1) * cells), (r0 - outRow0) * width);
  }
}
