import { describe, expect, it } from 'vitest';
import { execFileSync } from 'node:child_process';
import { readdirSync, readFileSync, statSync } from 'node:fs';
import { join } from 'node:path';
import { DiskStack, writeSlices, writeSlicesFromDisk, type GriddingInfo, type SliceGrid, type SliceStack } from '../src';
import { mulberry32 as rng } from '@lamina/random';
import { tempDir, PYTHON } from '@lamina/test-utils';

const dir = tempDir('lamina-disk-stack-');

function grid(width: number, height: number, nodata = -9999): SliceGrid {
  return { crs: 'EPSG:32617', originX: 500123.5, originY: 4100456.25, cellSize: 0.125, width, height, nodata, metresPerUnit: 1 };
}

function windows(n: number): { index: number; topM: number; bottomM: number }[] {
  return Array.from({ length: n }, (_, k) => ({ index: k, topM: Number((k * 0.1).toFixed(3)), bottomM: Number(((k + 1) * 0.1).toFixed(3)) }));
}

/** A stack with a diagonal band of nodata, NaN cells, one empty slice and one slice with a single valid cell. */
function stackOf(width: number, height: number, n: number): SliceStack {
  const r = rng(5);
  const g = grid(width, height);
  const slices = windows(n).map((w, k) => {
    const values = new Float32Array(width * height);
    for (let i = 0; i < values.length; i++) {
      const col = i % width;
      const row = Math.floor(i / width);
      values[i] = Math.abs(col - row) < 10 ? g.nodata : (k + 1) * (1 + Math.sin(col / 9) * Math.cos(row / 7)) + r();
      if (i % 131 === k) values[i] = Number.NaN;
    }
    if (k === n - 2) values.fill(g.nodata);
    if (k === n - 1) {
      values.fill(Number.NaN);
      values[width + 3] = 2.5;
    }
    return { ...w, values };
  });
  return { grid: g, slices };
}

const gridding: GriddingInfo = {
  method: 'idw', power: 2, maxPoints: 12, minPoints: 1, radius: 0.5, radiusAcross: 0.75, directionDeg: 90, mode: 'mean-abs',
  levelled: true, lineCount: 7, traceCount: 12345, lineSpacing: 0.5, traceSpacing: 0.05, rowBands: 3,
};

describe('DiskStack', () => {
  it('create fills nodata: a file of width x height x slices Float32 (numpy reads it back)', () => {
    const path = join(dir, 'filled.f32');
    const disk = DiskStack.create(path, grid(300, 200, -9999), windows(3));
    expect(statSync(path).size).toBe(300 * 200 * 3 * 4);
    for (let k = 0; k < 3; k++) expect(disk.readRows(k, 0, 200).every((v) => v === -9999)).toBe(true);
    // numpy (Debian python3-numpy) reads the raw file as little-endian Float32.
    const out = execFileSync(PYTHON, ['-c', `import numpy as np; a=np.fromfile(${JSON.stringify(path)}, '<f4'); print(a.size, int((a == -9999).sum()))`], {
      encoding: 'utf8',
    });
    expect(out.trim()).toBe(`${300 * 200 * 3} ${300 * 200 * 3}`);
    disk.remove();
    expect(readdirSync(dir)).not.toContain('filled.f32');
  });

  it('create truncates an existing file; a nodata of 0 gives zeros', () => {
    const path = join(dir, 'zero.f32');
    DiskStack.create(path, grid(50, 40), windows(4)).remove();
    const disk = DiskStack.create(path, grid(20, 10, 0), windows(2));
    expect(statSync(path).size).toBe(20 * 10 * 2 * 4);
    expect(disk.readRows(1, 0, 10).every((v) => v === 0)).toBe(true);
    disk.remove();
  });

  it('rows written in several bands read back as they went in, each slice at k * width * height * 4', () => {
    const [w, h, n] = [123, 77, 3];
    const stack = stackOf(w, h, n);
    const path = join(dir, 'bands.f32');
    const disk = DiskStack.create(path, stack.grid, windows(n));
    // Bands of 10 rows, in a shuffled order, with a short last band.
    const starts = [30, 0, 70, 10, 50, 20, 60, 40];
    for (const r0 of starts) {
      const r1 = Math.min(h, r0 + 10);
      disk.writeRows(r0, stack.slices.map((s) => s.values.slice(r0 * w, r1 * w)));
    }
    const out = new Float32Array(w * h + 5);
    for (const [k, s] of stack.slices.entries()) {
      expect(Buffer.compare(Buffer.from(disk.readRows(k, 0, h, out).buffer, 0, w * h * 4), Buffer.from(s.values.buffer))).toBe(0);
      expect(Array.from(disk.readRows(k, 33, 35))).toEqual(Array.from(s.values.subarray(33 * w, 35 * w)));
    }
    // The file is the slices one after the other (the layout the brief fixes).
    expect(Buffer.compare(readFileSync(path), Buffer.concat(stack.slices.map((s) => Buffer.from(s.values.buffer))))).toBe(0);
    disk.remove();
  });

  it('says what it expected', () => {
    const disk = DiskStack.create(join(dir, 'bad.f32'), grid(10, 5), windows(2));
    expect(() => disk.writeRows(0, [new Float32Array(10)])).toThrow(/expected rows of 2 slices, found 1/);
    expect(() => disk.writeRows(0, [new Float32Array(10), new Float32Array(20)])).toThrow(/slice 1 has 20 values, expected 10/);
    expect(() => disk.writeRows(0, [new Float32Array(15), new Float32Array(15)])).toThrow(/whole rows of 10 values/);
    expect(() => disk.writeRows(4, [new Float32Array(20), new Float32Array(20)])).toThrow(/rows within \[0, 5\], found \[4, 6\)/);
    expect(() => disk.readRows(2, 0, 1)).toThrow(/band in \[0, 2\), found 2/);
    disk.remove();
    expect(() => disk.readRows(0, 0, 1)).toThrow(/removed/);
  });
});

describe('writeSlicesFromDisk: the same slices.tif and slices.json as writeSlices', () => {
  it.each([
    ['600 x 300 x 4, tile 256 (2 overviews)', 600, 300, 4, {}],
    ['211 x 97 x 5, tile 32 (3 overviews), zlib level 6', 211, 97, 5, { tileSize: 32, level: 6 }],
  ])('%s', async (name, w, h, n, options) => {
    const stack = stackOf(w, h, n);
    stack.gridding = gridding;
    const sub = join(dir, name.replace(/\W+/g, '-'));
    const disk = DiskStack.create(join(sub + '.f32'), stack.grid, windows(n));
    for (let r0 = 0; r0 < h; r0 += 40) disk.writeRows(r0, stack.slices.map((s) => s.values.subarray(r0 * w, Math.min(h, r0 + 40) * w)));

    const fromMemory = await writeSlices(stack, join(sub, 'memory'), options);
    const fromDisk = await writeSlicesFromDisk(disk, join(sub, 'disk'), gridding, options);
    disk.remove();
    expect(fromDisk).toEqual(fromMemory);
    expect(fromDisk.slices[n - 2]!.stats.validCount).toBe(0);
    expect(fromDisk.slices[n - 1]!.stats).toMatchObject({ validCount: 1, p2: 2.5, p98: 2.5 });
    for (const f of ['slices.tif', 'slices.json']) {
      expect(Buffer.compare(readFileSync(join(sub, 'disk', f)), readFileSync(join(sub, 'memory', f))), f).toBe(0);
    }
    expect(readdirSync(join(sub, 'disk')).sort()).toEqual(['slices.json', 'slices.tif']);
  });

  it('refuses a NaN nodata before writing anything', async () => {
    const disk = DiskStack.create(join(dir, 'nan.f32'), grid(8, 8, Number.NaN), windows(1));
    await expect(writeSlicesFromDisk(disk, join(dir, 'nan-out'), undefined)).rejects.toThrow(/nodata must be a finite number/);
    disk.remove();
    expect(readdirSync(dir)).not.toContain('nan-out');
  });
});
