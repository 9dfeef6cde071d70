// AssemblyScript source of the WebAssembly kernels on cell sets (grid indices, ascending) of
// ../src/cells-wasm.ts: join.ts `minCellDistance` (0 when two sets share a cell, else the least squared
// distance between their edge cells, the same integer arithmetic) and the merges of extract.ts
// `unionOfCells`. Built by scripts/build-wasm.mjs into ../src/cells-wasm-binary.ts (the module as
// base64); rebuild after a change here. Pointers are byte offsets into the module's memory; cells are
// i32, weights as each function says.

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

/**
 * One step of extract.ts `unionOfCells`: the ascending cells `a` (na, weights `wa` f64) and `b` (nb,
 * weights `wb` f32) merged into `oc` (cells) and `ow` (f64 weights), a cell in both taking the larger
 * weight (Math.max); how many.
 */
export function mergeCells(a: usize, wa: usize, na: i32, b: usize, wb: usize, nb: i32, oc: usize, ow: usize): i32 {
  let i = 0, j = 0, n = 0;
  while (i < na || j < nb) {
    let w: f64;
    let k: i32;
    if (j >= nb || (i < na && at(a, i) < at(b, j))) {
      k = at(a, i);
      w = load<f64>(wa + (<usize>i << 3));
      i++;
    } else if (i >= na || at(b, j) < at(a, i)) {
      k = at(b, j);
      w = <f64>load<f32>(wb + (<usize>j << 2));
      j++;
    } else {
      k = at(a, i);
      w = Math.max(load<f64>(wa + (<usize>i << 3)), <f64>load<f32>(wb + (<usize>j << 2)));
      i++;
      j++;
    }
    store<i32>(oc + (<usize>n << 2), k);
    store<f64>(ow + (<usize>n << 3), w);
    n++;
  }
  return n;
}
