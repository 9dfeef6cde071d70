/**
 * Connected components (8-connectivity) with hysteresis thresholding: a component is the
 * 8-connected set of cells scoring >= `low` that holds at least one cell >= `high` and at least
 * `minCells` cells (the two-threshold scheme of Canny 1986, applied to regions).
 * Returns the cells of each component, ascending.
 */
export function components(
  scores: Float32Array,
  width: number,
  height: number,
  high: number,
  low: number,
  minCells: number,
): Int32Array[] {
  const n = width * height;
  const seen = new Uint8Array(n);
  const stack = new Int32Array(n);
  const out: Int32Array[] = [];
  for (let start = 0; start < n; start++) {
    if (seen[start] || !(scores[start]! >= low)) continue;
    let top = 0;
    let count = 0;
    let hasSeed = false;
    stack[top++] = start;
    seen[start] = 1;
    const cells: number[] = [];
    while (top > 0) {
      const c = stack[--top]!;
      cells.push(c);
      count++;
      if (scores[c]! >= high) hasSeed = true;
      const row = (c / width) | 0;
      const col = c - row * width;
      for (let dr = -1; dr <= 1; dr++) {
        const r = row + dr;
        if (r < 0 || r >= height) continue;
        for (let dc = -1; dc <= 1; dc++) {
          const cc = col + dc;
          if ((dr === 0 && dc === 0) || cc < 0 || cc >= width) continue;
          const k = r * width + cc;
          if (!seen[k] && scores[k]! >= low) {
            seen[k] = 1;
            stack[top++] = k;
          }
        }
      }
    }
    if (hasSeed && count >= minCells) out.push(Int32Array.from(cells).sort());
  }
  return out;
}
