import type { SliceGrid } from '@lamina/slices';
import { cellCentreX, cellCentreY } from '@lamina/slices';
import { FIELD_WASM_BASE64 } from './field-wasm-binary';

interface Kernels {
  memory: WebAssembly.Memory;
  distanceField(seg: number, nSeg: number, pts: number, nPts: number, xs: number, width: number, ys: number, height: number, mpu: number, out: number): void;
}

let kernels: Kernels | null | undefined;

/** The module's one instance on this thread (its memory grown as needed); null where WebAssembly does not run. */
function instance(): Kernels | null {
  if (kernels === undefined) {
    try {
      const bytes = typeof Buffer !== 'undefined' ? Buffer.from(FIELD_WASM_BASE64, 'base64') : Uint8Array.from(atob(FIELD_WASM_BASE64), (c) => c.charCodeAt(0));
      kernels = WebAssembly.validate(bytes) ? (new WebAssembly.Instance(new WebAssembly.Module(bytes), {}).exports as unknown as Kernels) : null;
    } catch {
      kernels = null;
    }
  }
  return kernels;
}

/**
 * `distanceField` of a reflector's segments and points into `out`, in WebAssembly
 * (wasm/field-kernels.ts); null where WebAssembly does not run. The cell centres are worked out here, as
 * `distanceFieldInJs` works them out.
 */
export function wasmDistanceField(segments: Float64Array, points: Float64Array, grid: SliceGrid, metresPerUnit: number, out: Float32Array): Float32Array | null {
  const k = instance();
  if (!k) return null;
  const { width, height } = grid;
  // blocks of rows: the module's memory stays small whatever the grid
  const rows = Math.max(1, Math.min(height, Math.floor(BLOCK_CELLS / Math.max(1, width))));
  // float64: segments, points, column x, row y; then a block's float32 field
  const seg = 0, pts = seg + 8 * segments.length, xs = pts + 8 * points.length, ys = xs + 8 * width, f = ys + 8 * height;
  const bytes = f + 4 * width * rows;
  const have = k.memory.buffer.byteLength;
  if (bytes > have) k.memory.grow(Math.ceil((bytes - have) / 65536));
  const mem = new Float64Array(k.memory.buffer, 0, f / 8);
  mem.set(segments, seg / 8);
  mem.set(points, pts / 8);
  for (let col = 0; col < width; col++) mem[xs / 8 + col] = cellCentreX(grid, col);
  for (let row = 0; row < height; row++) mem[ys / 8 + row] = cellCentreY(grid, row);
  const block = new Float32Array(k.memory.buffer, f, width * rows);
  for (let r0 = 0; r0 < height; r0 += rows) {
    const n = Math.min(rows, height - r0);
    k.distanceField(seg, segments.length / 4, pts, points.length / 2, xs, width, ys + 8 * r0, n, metresPerUnit, f);
    out.set(n === rows ? block : block.subarray(0, n * width), r0 * width);
  }
  return out;
}

/** Cells of the field worked out per call (the module's float32 block). */
const BLOCK_CELLS = 1 << 16;
