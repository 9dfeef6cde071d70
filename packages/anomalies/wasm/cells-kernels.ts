// AssemblyScript source of the WebAssembly kernel of `minCellDistance` (../src/cells-wasm.ts, join.ts):
// the least squared distance in cells between two cell sets (grid indices, ascending), 0 when they
// share a cell, else over their edge cells' pairs, the same integer arithmetic as join.ts. Built by
// scripts/build-screen-wasm.mjs into ../src/cells-wasm-binary.ts (the module as base64); rebuild after a
// change here. Pointers are byte offsets into the module's memory; all arrays i32.

@inline function at(p: usize, i: i32): i32 {
  return load<i32>(p + (<usize>i << 2));
}

/** join.ts `minCellDistance` before its square root: 0 when `a` and `b` share a cell, else the least squared distance between an edge cell of each. */
export function minCellDistance2(a: usize, na: i32, b: usize, nb: i32, edgeA: usize, nea: i32, edgeB: usize, neb: i32, width: i32): f64 {
  for (let i = 0, j = 0; i < na && j < nb; ) {
    const x = at(a, i), y = at(b, j);
    if (x == y) return 0;
    if (x < y) i++;
    else j++;
  }
  let best: f64 = Infinity;
  for (let i = 0; i < nea; i++) {
    const ka = at(edgeA, i);
    const ra = ka / width, ca = ka - ra * width;
    for (let j = 0; j < neb; j++) {
      const kb = at(edgeB, j);
      const rb = kb / width, cb = kb - rb * width;
      const dr = <f64>(ra - rb), dc = <f64>(ca - cb);
      const d = dr * dr + dc * dc;
      if (d < best) best = d;
    }
  }
  return best;
}
