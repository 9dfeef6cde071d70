import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { wasmUnionOfCells } from '../src/cells-wasm';
import { unionOfCellsInJs } from '../src/extract';
import { bits } from '@lamina/test-utils';

describe('cell-set kernels in WebAssembly (cells-wasm.ts)', () => {
  it('unionOfCells: the same cells and best scores as the JavaScript merges, for two members or more', () => {
    const member = fc
      .uniqueArray(fc.record({ cell: fc.integer({ min: 0, max: 400 }), score: fc.oneof({ weight: 8, arbitrary: fc.float({ noNaN: true, min: -5, max: 40 }) }, { weight: 1, arbitrary: fc.constantFrom(0, -0, Number.NaN, 7) }) }), { selector: (c) => c.cell, maxLength: 60 })
      .map((cs) => {
        const sorted = [...cs].sort((p, q) => p.cell - q.cell);
        return { cells: Int32Array.from(sorted, (c) => c.cell), scores: Float32Array.from(sorted, (c) => c.score) };
      });
    fc.assert(
      fc.property(fc.array(member, { minLength: 2, maxLength: 7 }), (members) => {
        const w = wasmUnionOfCells(members)!;
        const j = unionOfCellsInJs(members);
        expect(Array.from(w.cells)).toEqual(Array.from(j.cells));
        expect(Array.from(w.weights, bits)).toEqual(Array.from(j.weights, bits));
      }),
      { numRuns: 1000, seed: 4 },
    );
  });
});
