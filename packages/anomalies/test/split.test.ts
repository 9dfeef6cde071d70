import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { extractAnomalies, squaredDistance, thickParts } from '../src';
import { fullestBand, straightBands, straightBandsInJs } from '../src/split';
import { wasmStraightBands } from '../src/band-wasm';
import { grid, py, rng, synthStack } from './helpers';

describe('thick parts (morphological opening)', () => {
  it('the squared distance transform agrees with scipy.ndimage.distance_transform_edt', () => {
    const r = rng(11);
    const w = 57, h = 43;
    const mask = Uint8Array.from({ length: w * h }, () => (r() < 0.93 ? 1 : 0));
    const d = squaredDistance(mask, w, h, 0);
    const ref = JSON.parse(
      py(
        `import sys,json,numpy as np; from scipy import ndimage; m=np.array(json.loads(sys.stdin.read()),dtype=np.uint8).reshape(${h},${w}); print(json.dumps((ndimage.distance_transform_edt(m)**2).ravel().tolist()))`,
        JSON.stringify(Array.from(mask)),
      ),
    ) as number[];
    for (let i = 0; i < w * h; i++) expect(d[i]).toBeCloseTo(ref[i]!, 9);
  });

  it('parts agree with scipy.ndimage.binary_opening by a disk, labelled with 8-connectivity', () => {
    // two blobs joined by a thin neck, a thin arc hanging off one, random bites out of both
    const w = 80, h = 50, R = 3.4;
    const r = rng(5);
    const cells: number[] = [];
    for (let y = 0; y < h; y++)
      for (let x = 0; x < w; x++) {
        const blobA = (x - 18) ** 2 + (y - 25) ** 2 < 14 ** 2;
        const blobB = Math.abs(x - 60) < 12 && Math.abs(y - 25) < 9;
        const neck = x >= 30 && x <= 50 && Math.abs(y - 25) <= 1;
        const arc = Math.abs(Math.hypot(x - 60, y - 25) - 15) < 1 && y < 25;
        if ((blobA || blobB || neck || arc) && r() > 0.03) cells.push(y * w + x);
      }
    const parts = thickParts(Int32Array.from(cells), w, R);
    const ref = JSON.parse(
      py(
        `import sys,json,numpy as np; from scipy import ndimage
c=json.loads(sys.stdin.read()); m=np.zeros(${w * h},bool); m[c]=True; m=m.reshape(${h},${w})
yy,xx=np.mgrid[-4:5,-4:5]; disk=(xx**2+yy**2)<=${R}**2
o=ndimage.binary_opening(m,structure=disk)
lab,n=ndimage.label(o,structure=np.ones((3,3)))
print(json.dumps(sorted([sorted(np.flatnonzero(lab.ravel()==i+1).tolist()) for i in range(n)],key=lambda p:-len(p))))`,
        JSON.stringify(cells),
      ),
    ) as number[][];
    expect(parts.length).toBe(2);
    expect(parts.map((p) => Array.from(p))).toEqual(ref);
  });

  it('a pipe joined to a comb of thin arcs comes out of the layer-sized component as an object of its own', () => {
    // grid 24 x 16 m, 0.1 m cells; a 0.8 m wide pipe along x at y = 1994 m, a comb of 0.2 m arcs above it
    const g = grid(240, 160, 0.1);
    const pipe = (x: number, y: number) => x > 1001 && x < 1023 && Math.abs(y - 1994) < 0.4;
    const comb = (x: number, y: number) => x > 1001 && x < 1023 && y > 1994 && y < 2000 - 1 && (Math.abs(((x - 1000) % 1.5) - 0.75) < 0.1 || Math.abs(y - 1998.5) < 0.1);
    const stack = synthStack(g, [1], 0.2, (x, y) => (pipe(x, y) || comb(x, y) ? 60 : 0), 3);
    // a layer here: longer than 8 m and wider than 3 m (the test's own bound)
    const isLayer = (s: { lengthM: number; widthM: number }) => s.lengthM > 8 && s.widthM > 3;
    const split = extractAnomalies(stack, { isLayer, splitLayers: true, splitRadiusM: () => 0.25 });
    const objects = split.members.filter((m) => !m.layer);
    const big = objects.reduce((p, q) => (q.cells.length > p.cells.length ? q : p));
    expect(big.shape.kind).toBe('linear');
    expect(big.shape.lengthM).toBeGreaterThan(20);
    expect(big.shape.widthM).toBeLessThan(1.2);
    expect(Math.abs(big.y - 1994)).toBeLessThan(0.2);
    // without the opening (the default) the whole comb is one layer member and the pipe is not an object
    const whole = extractAnomalies(stack, { isLayer });
    expect(whole.members.filter((m) => !m.layer && m.shape.lengthM > 20 && m.shape.widthM < 1.2)).toHaveLength(0);
  });

  it('two pipes crossing in a slice (an X sized like a layer) come out as two linear objects (bandWidthM)', () => {
    // grid 24 x 16 m, 0.1 m cells; two 0.6 m wide pipes crossing at 60 degrees in the middle of the grid
    const g = grid(240, 160, 0.1);
    const band = (x: number, y: number, azDeg: number) => {
      const a = (azDeg * Math.PI) / 180;
      return Math.abs((x - 1012) * Math.cos(a) - (y - 1992) * Math.sin(a)) < 0.3 && Math.abs(x - 1012) < 10 && Math.abs(y - 1992) < 7;
    };
    const stack = synthStack(g, [1], 0.2, (x, y) => (band(x, y, 60) || band(x, y, 120) ? 60 : 0), 4);
    const isLayer = (s: { lengthM: number; widthM: number }) => s.lengthM > 8 && s.widthM > 3;
    const whole = extractAnomalies(stack, { isLayer });
    // without bands the X is one layer member
    expect(whole.members.filter((m) => !m.layer && m.shape.kind === 'linear' && m.shape.lengthM > 8)).toHaveLength(0);
    const split = extractAnomalies(stack, { isLayer, bandWidthM: () => 1 });
    const pipes = split.members.filter((m) => !m.layer && m.shape.kind === 'linear' && m.shape.lengthM > 8);
    expect(pipes).toHaveLength(2);
    for (const p of pipes) expect(p.shape.widthM).toBeLessThan(1);
    const dirs = pipes.map((p) => p.shape.directionDeg).sort((a, b) => a - b);
    expect(dirs[0]).toBeCloseTo(60, -1);
    expect(dirs[1]).toBeCloseTo(120, -1);
    // a broad layer (a filled 16 x 10 m sheet) is no bands: it stays one layer member
    const sheet = synthStack(g, [1], 0.2, (x, y) => (Math.abs(x - 1012) < 8 && Math.abs(y - 1992) < 5 ? 60 : 0), 5);
    const layer = extractAnomalies(sheet, { isLayer, bandWidthM: () => 1 });
    expect(layer.members.filter((m) => m.layer)).toHaveLength(1);
  });
});

/**
 * straightBands as first written (every direction's offsets and their least one by a pass over the
 * cells, one histogram): the second method the kernel is held to, band for band.
 */
function plainStraightBands(cells: Int32Array, width: number, bandCells: number, minCells: number, maxBands = 4): { bands: Int32Array[]; rest: Int32Array } {
  const w = Math.max(1, Math.round(bandCells));
  let left = Array.from(cells);
  const bands: Int32Array[] = [];
  while (bands.length < maxBands && left.length >= minCells) {
    const col = left.map((k) => k % width), row = left.map((k) => (k / width) | 0);
    const best = plainFullestBand(Float64Array.from(col), Float64Array.from(row), w);
    if (best.count < minCells) break;
    const inBand = (i: number) => {
      const r = col[i]! * best.c + row[i]! * best.s;
      return r >= best.lo && r < best.lo + w + 1e-9;
    };
    bands.push(Int32Array.from(left.filter((_, i) => inBand(i))));
    left = left.filter((_, i) => !inBand(i));
  }
  return { bands, rest: Int32Array.from(left) };
}

describe('straightBands', () => {
  it('finds the same bands as the plain Hough search on random crossings of straight strips', () => {
    const r = rng(7);
    const width = 160;
    let found = 0;
    for (let trial = 0; trial < 25; trial++) {
      const set = new Set<number>();
      const strips = 2 + Math.floor(r() * 3);
      for (let k = 0; k < strips; k++) {
        const th = r() * Math.PI, half = 1 + r() * 4, cx = 50 + r() * 60, cy = 50 + r() * 60, len = 20 + r() * 50;
        paintStrip(set, r, width, 160, th, half, cx, cy, len);
      }
      const cells = Int32Array.from(set).sort();
      const bandCells = 2 + r() * 10;
      const fast = straightBands(cells, width, bandCells, 6);
      const plain = plainStraightBands(cells, width, bandCells, 6);
      expect(fast.bands.map((b) => Array.from(b))).toEqual(plain.bands.map((b) => Array.from(b)));
      expect(Array.from(fast.rest)).toEqual(Array.from(plain.rest));
      found += plain.bands.length;
    }
    // most crossings come apart into two bands or more
    expect(found).toBeGreaterThan(50);
  });

  it('finds the same bands on thick elongated blobs as wide as the band (where most directions are passed over)', () => {
    const r = rng(11);
    const width = 300;
    for (let trial = 0; trial < 12; trial++) {
      const set = new Set<number>();
      const th = r() * Math.PI, half = 6 + r() * 8, len = 40 + r() * 60, cx = 150, cy = 150;
      for (let y = 0; y < 300; y++)
        for (let x = 0; x < width; x++) {
          const along = (x - cx) * Math.cos(th) + (y - cy) * Math.sin(th);
          const across = -(x - cx) * Math.sin(th) + (y - cy) * Math.cos(th);
          // a ragged edge, holes, and a side branch on some
          if (Math.abs(along) <= len && Math.abs(across) <= half + 2 * Math.sin(along / 7) && r() > 0.05) set.add(y * width + x);
          if (trial % 3 === 0 && Math.abs(x - cx) <= 4 && y > cy && y < cy + 50) set.add(y * width + x);
        }
      const cells = Int32Array.from(set).sort();
      const bandCells = 2 * half + r() * 10;
      const fast = straightBands(cells, width, bandCells, 6);
      const plain = plainStraightBands(cells, width, bandCells, 6);
      expect(fast.bands.map((b) => Array.from(b))).toEqual(plain.bands.map((b) => Array.from(b)));
      expect(Array.from(fast.rest)).toEqual(Array.from(plain.rest));
      // stopped at the first band refused: the bands before it, and every other cell left, ascending
      const k = 1 + (trial % 2);
      let seen = 0;
      const stopped = straightBands(cells, width, bandCells, 6, 4, () => seen++ < k);
      const kept = plain.bands.slice(0, k);
      expect(stopped.bands.map((b) => Array.from(b))).toEqual(kept.map((b) => Array.from(b)));
      const taken = new Set(kept.flatMap((b) => Array.from(b)));
      expect(Array.from(stopped.rest)).toEqual(Array.from(cells).filter((c) => !taken.has(c)));
    }
  });

  it('the fullest band is that of a search of every direction on small random sets (ties between directions and offsets)', () => {
    // few cells on a small patch: many directions hold equally full bands, and the first of them must win
    const cellSet = fc.uniqueArray(fc.integer({ min: 0, max: 40 * 40 - 1 }), { minLength: 1, maxLength: 300 });
    fc.assert(
      fc.property(cellSet, fc.integer({ min: 1, max: 40 }), fc.integer({ min: 1, max: 12 }), (list, width, w) => {
        const cells = Int32Array.from(list).sort();
        const col = Float64Array.from(cells, (k) => k % width), row = Float64Array.from(cells, (k) => (k / width) | 0);
        expect(fullestBand(col, row, cells.length, w)).toEqual(plainFullestBand(col, row, w));
      }),
      { numRuns: 400, seed: 15 },
    );
  });

  it('the fullest band is that of a search of every direction on thick strips and their crossings', () => {
    const r = rng(23);
    for (let trial = 0; trial < 16; trial++) {
      const width = 200;
      const set = new Set<number>();
      for (let k = 0; k < 1 + (trial % 3); k++) {
        const th = r() * Math.PI, half = 1 + r() * 10, cx = 60 + r() * 80, cy = 60 + r() * 80, len = 10 + r() * 60;
        paintStrip(set, r, width, 200, th, half, cx, cy, len);
      }
      const cells = Int32Array.from(set).sort();
      const col = Float64Array.from(cells, (k) => k % width), row = Float64Array.from(cells, (k) => (k / width) | 0);
      const w = 1 + Math.floor(r() * 30);
      expect(fullestBand(col, row, cells.length, w)).toEqual(plainFullestBand(col, row, w));
    }
  });
});

/** Cells of a straight strip (direction th, half-width `half`, half-length `len` about (cx, cy)) into `set`, each kept with probability 0.9. */
describe('straightBands in WebAssembly (band-wasm.ts)', () => {
  const same = (cells: Int32Array, width: number, bandCells: number, minCells: number, accept?: () => (b: Int32Array) => boolean) => {
    const wasm = wasmStraightBands(cells, width, Math.max(1, Math.round(bandCells)), minCells, 4, accept?.())!;
    const js = straightBandsInJs(cells, width, bandCells, minCells, 4, accept?.());
    expect(wasm.bands.map((b) => Array.from(b))).toEqual(js.bands.map((b) => Array.from(b)));
    expect(Array.from(wasm.rest)).toEqual(Array.from(js.rest));
    return js.bands.length;
  };
  /** Small random sets of cells on narrow grids, where ties between directions and offsets are common. */
  const smallSets = {
    width: fc.integer({ min: 1, max: 30 }),
    cells: fc.uniqueArray(fc.integer({ min: 0, max: 899 }), { minLength: 0, maxLength: 120 }),
    bandCells: fc.double({ min: 0.2, max: 8, noNaN: true }),
    minCells: fc.integer({ min: 1, max: 8 }),
  };

  it('gives the bands and the rest of the JavaScript search on small random sets (ties between directions and offsets)', () => {
    const sets = fc.record({ ...smallSets, stopAfter: fc.integer({ min: 0, max: 4 }) });
    fc.assert(
      fc.property(sets, ({ width, cells, bandCells, minCells, stopAfter }) => {
        const sorted = Int32Array.from(cells).sort();
        same(sorted, width, bandCells, minCells);
        same(sorted, width, bandCells, minCells, () => {
          let seen = 0;
          return () => seen++ < stopAfter;
        });
      }),
      { numRuns: 500, seed: 15 },
    );
  });

  it('loses no cell: the bands and the rest together are the input, once each (a cell on a band\'s far edge goes with the band)', () => {
    const sets = fc.record(smallSets);
    fc.assert(
      fc.property(sets, ({ width, cells, bandCells, minCells }) => {
        const sorted = Int32Array.from(cells).sort();
        for (const out of [straightBandsInJs(sorted, width, bandCells, minCells), wasmStraightBands(sorted, width, Math.max(1, Math.round(bandCells)), minCells, 4)!]) {
          const all = [...out.bands.flatMap((b) => Array.from(b)), ...out.rest].sort((a, b) => a - b);
          expect(all).toEqual(Array.from(sorted));
        }
      }),
      { numRuns: 500, seed: 16 },
    );
  });

  it('gives the bands and the rest of the JavaScript search on crossings of strips in a wide grid', () => {
    const r = rng(23);
    let found = 0;
    for (let trial = 0; trial < 15; trial++) {
      const width = 120 + Math.floor(r() * 200);
      const set = new Set<number>();
      for (let k = 0; k < 2 + Math.floor(r() * 3); k++) paintStrip(set, r, width, 160, r() * Math.PI, 1 + r() * 5, 30 + r() * 60, 30 + r() * 90, 15 + r() * 60);
      found += same(Int32Array.from(set).sort(), width, 1 + r() * 12, 6);
    }
    expect(found).toBeGreaterThan(20);
  });
});

function paintStrip(set: Set<number>, r: () => number, width: number, height: number, th: number, half: number, cx: number, cy: number, len: number): void {
  for (let y = 0; y < height; y++)
    for (let x = 0; x < width; x++) {
      const along = (x - cx) * Math.cos(th) + (y - cy) * Math.sin(th);
      const across = -(x - cx) * Math.sin(th) + (y - cy) * Math.cos(th);
      if (Math.abs(along) <= len && Math.abs(across) <= half && r() > 0.1) set.add(y * width + x);
    }
}

/** The fullest band of `w` bins over every direction in turn, the first strictly fuller one taken (`fullestBand` as first written). */
function plainFullestBand(col: Float64Array, row: Float64Array, w: number): { count: number; c: number; s: number; lo: number } {
  const span = Math.hypot(Math.max(...col) - Math.min(...col), Math.max(...row) - Math.min(...row));
  const nA = Math.min(720, Math.max(90, Math.ceil(Math.PI * span)));
  let best = { count: 0, c: 1, s: 0, lo: 0 };
  for (let a = 0; a < nA; a++) {
    const th = (Math.PI * a) / nA;
    const c = Math.cos(th), s = Math.sin(th);
    const rho = Array.from(col, (x, i) => x * c + row[i]! * s);
    const r0 = Math.min(...rho), r1 = Math.max(...rho);
    const bins = new Array<number>(Math.floor(r1 - r0) + 2).fill(0);
    for (const q of rho) bins[Math.floor(q - r0)]!++;
    let run = 0;
    for (let b = 0; b < bins.length; b++) {
      run += bins[b]!;
      if (b >= w) run -= bins[b - w]!;
      if (run > best.count) best = { count: run, c, s, lo: r0 + Math.max(0, b - w + 1) };
    }
  }
  return best;
}
