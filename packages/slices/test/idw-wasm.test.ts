// The IDW kernel (wasm/idw-kernels.ts) against the JavaScript of `idwRows` it replaces (useKernels(false)
// of @lamina/processing): the same bits on every cell.
import { describe, expect, it } from 'vitest';
import { useKernels } from '@lamina/processing';
import { mulberry32 as rng } from '@lamina/random';
import { kernelsOffAndOn } from '@lamina/test-utils';
import { buildIndex, idwRows, searchFrame, type IdwOptions, type SliceGrid } from '../src';
import { idwKernels } from '../src/idw-wasm';

if (!idwKernels()) throw new Error('IDW kernel: WebAssembly expected on Node 20');

/** Byte-wise equality of float32 arrays (tells -0 from 0, keeps NaN payloads). */
function sameBits(a: Float32Array, b: Float32Array): boolean {
  return Buffer.from(a.buffer, a.byteOffset, a.byteLength).equals(Buffer.from(b.buffer, b.byteOffset, b.byteLength));
}

/**
 * Points on a grid of 0.25 (many at equal distances from a cell centre, some exactly on one), a few
 * duplicated, and random ones; values with NaN, zeros of both signs and large magnitudes when asked.
 */
function points(n: number, seed: number, special: boolean) {
  const r = rng(seed);
  const coords = new Float64Array(2 * n);
  const values = new Float32Array(3 * n);
  for (let i = 0; i < n; i++) {
    const snap = i % 3 === 0;
    coords[2 * i] = snap ? Math.round(r() * 100) / 4 : r() * 25;
    coords[2 * i + 1] = snap ? Math.round(r() * 80) / 4 : r() * 20;
    if (i % 17 === 5) coords.copyWithin(2 * i, 2 * (i - 1), 2 * i);
    for (let b = 0; b < 3; b++) {
      const u = r();
      values[3 * i + b] = special && u < 0.05 ? NaN : special && u < 0.1 ? -0 : special && u < 0.15 ? 0 : special && u < 0.2 ? 3e38 : (r() - 0.3) * 100;
    }
  }
  return { coords, values };
}

const grid = (nodata: number): SliceGrid => ({ crs: 'EPSG:32617', originX: -0.125, originY: 20.125, cellSize: 0.25, width: 102, height: 82, nodata });

describe('idwRows in the kernel', () => {
  const cases: { name: string; n: number; special: boolean; options: IdwOptions; nodata: number; rows?: [number, number] }[] = [
    { name: 'defaults', n: 600, special: false, options: { radius: 1.2 }, nodata: -9999 },
    { name: 'NaN, +-0 and huge values; NaN nodata', n: 600, special: true, options: { radius: 1.2 }, nodata: NaN },
    { name: 'power 3 (Math.pow), one point, two at least', n: 400, special: false, options: { radius: 2, power: 3, maxPoints: 1, minPoints: 2 }, nodata: -9999 },
    { name: 'an ellipse across the lines, 30 points, fractional minPoints', n: 900, special: true, options: { radius: 1.5, radiusAcross: 0.6, directionDeg: 33, maxPoints: 30, minPoints: 2.5 }, nodata: -1 },
    { name: 'a band of rows of the grid', n: 600, special: false, options: { radius: 0.9, maxPoints: 6 }, nodata: -9999, rows: [17, 49] },
    { name: 'no points', n: 0, special: false, options: { radius: 1 }, nodata: -9999 },
  ];
  for (const c of cases) {
    it(`the JavaScript's bits: ${c.name}`, () => {
      const { coords, values } = points(c.n, 7 + c.n, c.special);
      const g = grid(c.nodata);
      const [r0, r1] = c.rows ?? [0, g.height];
      const tree = buildIndex(coords, searchFrame(c.options));
      const [js, wasm] = kernelsOffAndOn(useKernels, () => {
        const out = Array.from({ length: 3 }, () => new Float32Array(g.width * (r1 - r0)).fill(7));
        idwRows(tree, c.n, values, 3, g, c.options, r0, r1, out, values.some((v) => v !== v), r0);
        return out;
      });
      js.forEach((band, b) => expect(sameBits(wasm[b]!, band), `band ${b}`).toBe(true));
    });
  }
});
