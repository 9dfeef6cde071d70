import { makeMember, type Member } from '@lamina/anomalies';
import { cellCentreX, cellCentreY, type SliceStack } from '@lamina/slices';
import type { Line } from './context';
import { wasmLineStrips } from './screen-wasm';

export interface AlongLineOptions {
  /** Robust z a strip must reach somewhere. */
  threshold: number;
  /** Robust z down to which it grows. */
  lowThreshold: number;
  minCells: number;
  /** Shortest strip, m. */
  minLengthM: number;
  /** Largest angle between a strip and its survey line, degrees. */
  parallelToleranceDeg: number;
  metresPerUnit: number;
  /** Id of the first member made (members of the main stack keep theirs). */
  firstId: number;
}

/**
 * Label of the nearest survey line for every grid cell (-1 when no line is within `reachCells`):
 * a multi-source breadth-first sweep (8-neighbour steps) from the cells under each line's traces.
 */
export function nearestLineLabels(grid: SliceStack['grid'], lines: Line[], reachCells: number): Int32Array {
  const { width, height, originX, originY, cellSize } = grid;
  const label = new Int32Array(width * height).fill(-1);
  const dist = new Int32Array(width * height).fill(-1);
  const queue = new Int32Array(width * height);
  let head = 0, tail = 0;
  lines.forEach((l, li) => {
    for (let i = 0; i < l.x.length; i++) {
      const c = Math.floor((l.x[i]! - originX) / cellSize), r = Math.floor((originY - l.y[i]!) / cellSize);
      if (c < 0 || r < 0 || c >= width || r >= height) continue;
      const k = r * width + c;
      if (dist[k]! >= 0) continue;
      dist[k] = 0;
      label[k] = li;
      queue[tail++] = k;
    }
  });
  while (head < tail) {
    const k = queue[head++]!;
    const d = dist[k]!;
    if (d >= reachCells) continue;
    const r = (k / width) | 0, c = k - r * width;
    for (let dr = -1; dr <= 1; dr++)
      for (let dc = -1; dc <= 1; dc++) {
        const rr = r + dr, cc = c + dc;
        if ((dr === 0 && dc === 0) || rr < 0 || cc < 0 || rr >= height || cc >= width) continue;
        const q = rr * width + cc;
        if (dist[q]! >= 0) continue;
        dist[q] = d + 1;
        label[q] = label[k]!;
        queue[tail++] = q;
      }
  }
  return label;
}

function lineAzimuth(l: Line): number {
  const n = l.x.length;
  if (n < 2) return NaN;
  const dx = l.x[n - 1]! - l.x[0]!, dy = l.y[n - 1]! - l.y[0]!;
  if (dx === 0 && dy === 0) return NaN;
  return ((((Math.atan2(dx, dy) * 180) / Math.PI) % 180) + 180) % 180;
}

/**
 * Strips of the stack made before background removal that the main stack lacks: per slice, cells
 * scoring >= lowThreshold there and in no member of the main stack (`taken`: its members), grouped 8-connected
 * but only among cells nearest to the same survey line, so that a utility on one line does not merge
 * with a flat air-wave band or another utility on the next line. A strip holding a cell >= threshold,
 * of at least minCells, linear, minLengthM long and within parallelToleranceDeg of its line is kept.
 *
 * Why: background removal subtracts each line's mean trace, so an event as long as the line (a
 * utility under it, or the air wave of a wall parallel to it) is taken out of the main stack. It
 * survives in the stack before background removal, but there it sits among the other flat events of
 * the same slice and, linked across depth as one blob, is neither linear nor new; taken line by line
 * and slice by slice it is both.
 */
export function alongLineMembers(before: SliceStack, scores: Float32Array[], taken: readonly Pick<Member, 'slice' | 'cells'>[], lines: Line[], labels: Int32Array, options: AlongLineOptions): Member[] {
  const { width, height } = before.grid;
  const az = lines.map(lineAzimuth);
  const out: Member[] = [];
  const bySlice = new Map<number, Int32Array[]>();
  for (const m of taken) {
    const list = bySlice.get(m.slice);
    if (list) list.push(m.cells);
    else bySlice.set(m.slice, [m.cells]);
  }
  // a cell is not looked at (seen) when taken: so it starts no strip and joins none
  const seen = new Uint8Array(width * height);
  for (let si = 0; si < before.slices.length; si++) {
    const z = scores[si];
    if (!z) continue;
    seen.fill(0);
    for (const cells of bySlice.get(si) ?? []) for (let i = 0; i < cells.length; i++) seen[cells[i]!] = 1;
    const strips = wasmLineStrips(z, labels, seen, width, height, options.lowThreshold, options.threshold, options.minCells) ?? lineStrips(z, labels, seen, width, height, options.lowThreshold, options.threshold, options.minCells);
    for (const { cells, line: li } of strips) {
      const m = makeMember(options.firstId + out.length, si, cells, before, z, { metresPerUnit: options.metresPerUnit });
      if (m.shape.kind !== 'linear' || m.shape.lengthM < options.minLengthM) continue;
      const a = az[li]!;
      const d = Math.abs(m.shape.directionDeg - a) % 180;
      if (!(Math.min(d, 180 - d) <= options.parallelToleranceDeg)) continue;
      out.push(m);
    }
  }
  return out;
}

/**
 * The strips of one slice (`alongLineMembers`): per cell in order, not `seen`, of a line (`labels`
 * >= 0) and scoring at least `low`, the 8-connected cells of the same line scoring at least `low`
 * (each marked seen), kept when at least minCells and holding a score of at least `threshold`; each
 * with its cells ascending and its line. In JavaScript: where WebAssembly does not run
 * (`wasmLineStrips`, which leaves `seen` as it was), and its reference in the tests.
 */
export function lineStrips(z: Float32Array, labels: Int32Array, seen: Uint8Array, width: number, height: number, low: number, threshold: number, minCells: number): { cells: Int32Array; line: number }[] {
  const out: { cells: Int32Array; line: number }[] = [];
  const queue = new Int32Array(width * height);
  for (let start = 0; start < width * height; start++) {
    const li = labels[start]!;
    if (seen[start] || li < 0 || !(z[start]! >= low)) continue;
    let head = 0, tail = 0, peak = -Infinity;
    queue[tail++] = start;
    seen[start] = 1;
    while (head < tail) {
      const k = queue[head++]!;
      peak = Math.max(peak, z[k]!);
      const r = (k / width) | 0, c = k - r * width;
      for (let dr = -1; dr <= 1; dr++)
        for (let dc = -1; dc <= 1; dc++) {
          const rr = r + dr, cc = c + dc;
          if (rr < 0 || cc < 0 || rr >= height || cc >= width) continue;
          const q = rr * width + cc;
          if (seen[q] || labels[q] !== li || !(z[q]! >= low)) continue;
          seen[q] = 1;
          queue[tail++] = q;
        }
    }
    if (tail < minCells || peak < threshold) continue;
    out.push({ cells: queue.slice(0, tail).sort(), line: li });
  }
  return out;
}

/**
 * Strips that belong to a planar reflector: per slice, the strips within `reachCells` of one another
 * (a line spacing: strips on neighbouring lines) are grouped, and a group that spans more across the
 * lines than any utility may (`tooWide(acrossM, depthM, topM)`, e.g. `sameSliceWidthM`) is a flat reflector
 * crossing many lines (a layer, or the ground wave), not a utility along one line: a utility parallel
 * to the lines shows on the few lines within its footprint only. Every strip is long along its line
 * (background removal takes out only what runs along most of it), so the width across decides.
 * Returns such groups, each the list of its strips (one slice).
 */
export function planarGroups(strips: readonly Member[], grid: SliceStack['grid'], reachCells: number, tooWide: (acrossM: number, depthM: number, topM: number) => boolean, metresPerUnit = 1): Member[][] {
  const out: Member[][] = [];
  const { width, height } = grid;
  const r = Math.max(1, Math.round(reachCells));
  const bySlice = new Map<number, Member[]>();
  for (const m of strips) {
    const list = bySlice.get(m.slice);
    if (list) list.push(m);
    else bySlice.set(m.slice, [m]);
  }
  for (const ms of bySlice.values()) {
    if (ms.length < 2) continue;
    // owner of each strip cell, then union-find over strips whose cells lie within r cells (Chebyshev)
    const owner = new Map<number, number>();
    ms.forEach((m, i) => m.cells.forEach((k) => owner.set(k, i)));
    const parent = ms.map((_, i) => i);
    const find = (i: number): number => (parent[i] === i ? i : (parent[i] = find(parent[i]!)));
    ms.forEach((m, i) => {
      for (let ci = 0; ci < m.cells.length; ci++) {
        const k = m.cells[ci]!;
        const y = (k / width) | 0, x = k - y * width;
        for (let dy = -r; dy <= r; dy++) {
          const yy = y + dy;
          if (yy < 0 || yy >= height) continue;
          for (let dx = -r; dx <= r; dx++) {
            const xx = x + dx;
            if (xx < 0 || xx >= width) continue;
            const j = owner.get(yy * width + xx);
            if (j !== undefined && j !== i) parent[find(j)] = find(i);
          }
        }
      }
    });
    const groups = new Map<number, number[]>();
    ms.forEach((_, i) => {
      const root = find(i);
      const list = groups.get(root);
      if (list) list.push(i);
      else groups.set(root, [i]);
    });
    for (const g of groups.values()) {
      if (g.length < 2) continue;
      // across-line axis: perpendicular to the strips' mean axis (doubled angles)
      let c = 0, s = 0;
      for (const i of g) {
        const a = (2 * ms[i]!.shape.directionDeg * Math.PI) / 180;
        c += Math.cos(a);
        s += Math.sin(a);
      }
      const az = 0.5 * Math.atan2(s, c);
      const ax = Math.cos(az), ay = -Math.sin(az); // unit vector across (azimuth + 90 degrees)
      let lo = Infinity, hi = -Infinity;
      for (const i of g) {
        const m = ms[i]!;
        for (let ci = 0; ci < m.cells.length; ci++) {
          const k = m.cells[ci]!;
          const yy = (k / width) | 0;
          const p = (cellCentreX(grid, k - yy * width) * ax + cellCentreY(grid, yy) * ay) * metresPerUnit;
          lo = Math.min(lo, p);
          hi = Math.max(hi, p);
        }
      }
      const acrossM = hi - lo + grid.cellSize * metresPerUnit;
      if (tooWide(acrossM, ms[g[0]!]!.bottomM, ms[g[0]!]!.topM)) out.push(g.map((i) => ms[i]!));
    }
  }
  return out;
}
