import { execFileSync } from 'node:child_process';
import type { SliceGrid, SliceStack } from '@lamina/slices';

import { mulberry32 as rng } from '@lamina/random';
export { rng };

/** Debian's python with numpy/scipy/GDAL (not the python3 first on PATH). */
export function py(script: string, input: string): string {
  return execFileSync('/usr/bin/python3', ['-c', script], { input, encoding: 'utf8', maxBuffer: 1 << 28 });
}

export function grid(width: number, height: number, cellSize = 0.1, originX = 1000, originY = 2000): SliceGrid {
  return { crs: 'EPSG:32617', originX, originY, cellSize, width, height, nodata: -9999 };
}

/** A stack of background noise (mean of 4 exponentials: a squared envelope averaged over a window) plus `paint(x, y, z)` per cell centre. */
export function synthStack(
  g: SliceGrid,
  depths: number[],
  thickness: number,
  paint: (x: number, y: number, z: number) => number,
  seed = 1,
): SliceStack {
  const r = rng(seed);
  return {
    grid: g,
    slices: depths.map((z, index) => {
      const values = new Float32Array(g.width * g.height);
      for (let row = 0; row < g.height; row++)
        for (let col = 0; col < g.width; col++) {
          const x = g.originX + (col + 0.5) * g.cellSize, y = g.originY - (row + 0.5) * g.cellSize;
          values[row * g.width + col] = -(Math.log(1 - r()) + Math.log(1 - r()) + Math.log(1 - r()) + Math.log(1 - r())) / 4 + paint(x, y, z);
        }
      return { index, topM: z - thickness / 2, bottomM: z + thickness / 2, values };
    }),
  };
}
