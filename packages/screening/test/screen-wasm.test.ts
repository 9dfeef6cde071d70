import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { locusBandMedian } from '../src/checks/before-background';
import { lineStrips } from '../src/along-line';
import { pointModel } from '../src/checks/unsurveyed';
import { wasmLineStrips, wasmLocusBandMedian, wasmPointModel } from '../src/screen-wasm';
import { bits } from '@lamina/test-utils';

describe('the before-background locus band in WebAssembly (screen-wasm.ts)', () => {
  it('gathers the same scores and selects the same median as locusBandMedian in JavaScript', () => {
    const cases = fc
      .record({
        width: fc.integer({ min: 1, max: 30 }),
        height: fc.integer({ min: 1, max: 30 }),
        seed: fc.array(fc.float({ noNaN: true, min: -50, max: 50 }), { minLength: 1, maxLength: 64 }),
        special: fc.array(fc.constantFrom(Number.NaN, Infinity, -Infinity, 0, -0, 3), { minLength: 1, maxLength: 8 }),
        radius: fc.double({ min: 0, max: 5, noNaN: true }),
        half: fc.double({ min: 0, max: 3, noNaN: true }),
        box: fc.tuple(fc.nat(), fc.nat(), fc.nat(), fc.nat()),
      })
      .map(({ width, height, seed, special, radius, half, box }) => {
        const n = width * height;
        // distances on a coarse lattice (cells exactly on the band's edges), scores with repeats, NaN and infinities
        const field = Float32Array.from({ length: n }, (_, i) => Math.abs(seed[i % seed.length]!) / 8 + (i % 3) * 0.25);
        const sc = Float32Array.from({ length: n }, (_, i) => (i % 5 === 0 ? special[i % special.length]! : seed[(i * 7) % seed.length]!));
        const [a, b] = [box[0] % height, box[1] % height].sort((p, q) => p - q);
        const [c, d] = [box[2] % width, box[3] % width].sort((p, q) => p - q);
        return { field, sc, width, r0: a!, r1: b!, c0: c!, c1: d!, radius, half };
      });
    fc.assert(
      fc.property(cases, ({ field, sc, width, r0, r1, c0, c1, radius, half }) => {
        const w = wasmLocusBandMedian(field, sc, width, r0, r1, c0, c1, radius, half)!;
        const j = locusBandMedian(field, sc, width, r0, r1, c0, c1, radius, half);
        expect([w.count, bits(w.median)]).toEqual([j.count, bits(j.median)]);
      }),
      { numRuns: 1000, seed: 8 },
    );
  });
});

describe('the along-line strips in WebAssembly (screen-wasm.ts)', () => {
  it('finds the same strips, in the same order, as lineStrips in JavaScript, and leaves seen as it was', () => {
    const cases = fc
      .record({
        width: fc.integer({ min: 1, max: 25 }),
        height: fc.integer({ min: 1, max: 25 }),
        z: fc.array(fc.oneof(fc.float({ noNaN: true, min: -2, max: 9 }), fc.constantFrom(Number.NaN, 3, 5)), { minLength: 1, maxLength: 50 }),
        lines: fc.integer({ min: 1, max: 4 }),
        taken: fc.array(fc.nat(), { maxLength: 20 }),
        minCells: fc.integer({ min: 1, max: 6 }),
      })
      .map(({ width, height, z, lines, taken, minCells }) => {
        const n = width * height;
        // lines in vertical bands (some cells of none), scores repeating with a stride that crosses them
        const labels = Int32Array.from({ length: n }, (_, k) => ((k % width) % 5 === 4 ? -1 : Math.floor(((k % width) * lines) / width)));
        const scores = Float32Array.from({ length: n }, (_, k) => z[(k * 3) % z.length]!);
        const seen = new Uint8Array(n);
        for (const t of taken) seen[t % n] = 1;
        return { width, height, labels, scores, seen, minCells };
      });
    let found = 0;
    fc.assert(
      fc.property(cases, ({ width, height, labels, scores, seen, minCells }) => {
        const before = Uint8Array.from(seen);
        const w = wasmLineStrips(scores, labels, seen, width, height, 3, 5, minCells)!;
        expect(seen).toEqual(before);
        const j = lineStrips(scores, labels, seen, width, height, 3, 5, minCells);
        expect(w.map((s) => [s.line, ...s.cells])).toEqual(j.map((s) => [s.line, ...s.cells]));
        found += j.length;
      }),
      { numRuns: 1000, seed: 9 },
    );
    expect(found).toBeGreaterThan(500);
  });
});

describe('the unsurveyed-obstruction point model in WebAssembly (screen-wasm.ts)', () => {
  it('ends at the same point, bit for bit, as pointModel in JavaScript (rings, lines, one cell repeated)', () => {
    const coord = fc.oneof(fc.integer({ min: 0, max: 60 }).map((k) => 700_000 + k * 0.125), fc.double({ min: 700_000, max: 700_008, noNaN: true }));
    const member = fc.record({ xy: fc.array(fc.tuple(coord, coord), { minLength: 1, maxLength: 40 }), r: fc.double({ min: 0, max: 6, noNaN: true }) }).map(({ xy, r }) => ({ x: Float64Array.from(xy, (p) => p[0]), y: Float64Array.from(xy, (p) => p[1]), r }));
    fc.assert(
      fc.property(fc.array(member, { minLength: 1, maxLength: 6 }), coord, coord, fc.constantFrom(0.125, 0.3), (pts, px, py, cellSize) => {
        const w = wasmPointModel(pts, px, py, cellSize)!;
        expect(w.map(bits)).toEqual(pointModel(pts, px, py, cellSize).map(bits));
      }),
      { numRuns: 500, seed: 12 },
    );
  });
});
