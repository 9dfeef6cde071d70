import type { Member } from './types';

export interface LinkOptions {
  /** Link two members of neighbouring slices when their shared cells are at least this fraction of the smaller. @default 0.2 */
  minOverlap?: number;
  /** Or when both are compact and their centroids lie within this distance, site CRS units. @default 2 cells */
  maxCentroidDistance?: number;
  /** Slices a chain may skip (0: only adjacent slices link). @default 1 */
  maxGap?: number;
  /** And shared cells at least this fraction of the larger member (keeps a large blob from absorbing every piece it touches). @default 0.1 */
  minOverlapOfLarger?: number;
  /**
   * Two linear members whose directions differ by more than this are crossing, degrees; less for long
   * thin members, whose shapes fix their directions better: the larger of their atan(width / length).
   * @default 30
   */
  crossingAngleDeg?: number;
  /** Overlap fraction (of the smaller) crossing linear members need to link. @default 0.5 */
  crossingOverlap?: number;
}

/** How well a member's shape fixes its direction: atan(width / length), degrees. */
function spreadDeg(m: Member): number {
  return (Math.atan2(m.shape.widthM, m.shape.lengthM) * 180) / Math.PI;
}

function angleDiff(a: number, b: number): number {
  const d = Math.abs(a - b) % 180;
  return Math.min(d, 180 - d);
}

/**
 * Groups members of neighbouring slices into 3D objects (union-find over links). A link needs
 * overlap in plan (shared cells / smaller member >= minOverlap; >= crossingOverlap for two linear
 * members further apart in direction than their shapes fix it, at most crossingAngleDeg, so crossing or
 * diverging utilities at neighbouring depths stay apart), or, for two compact members,
 * centroids within maxCentroidDistance. Returns groups of member ids, each sorted by slice.
 */
export function linkMembers(members: Member[], gridCells: number, cellSize: number, options: LinkOptions = {}): number[][] {
  const minOverlap = options.minOverlap ?? 0.2;
  const maxDist = options.maxCentroidDistance ?? 2 * cellSize;
  const maxGap = options.maxGap ?? 1;
  const crossAngle = options.crossingAngleDeg ?? 30;
  const crossOverlap = options.crossingOverlap ?? 0.5;
  const minOverlapLarger = options.minOverlapOfLarger ?? 0.1;
  const { union, groups } = disjointSets(members.length);
  const bySlice = new Map<number, Member[]>();
  for (const m of members) {
    const l = bySlice.get(m.slice);
    if (l) l.push(m);
    else bySlice.set(m.slice, [m]);
  }
  const slices = [...bySlice.keys()].sort((a, b) => a - b);
  const label = new Int32Array(gridCells).fill(-1);
  const counts = new Map<number, number>();
  for (const s of slices) {
    const here = bySlice.get(s)!;
    for (const m of here) for (let ci = 0; ci < m.cells.length; ci++) label[m.cells[ci]!] = m.id;
    for (let g = 1; g <= maxGap + 1; g++) {
      const next = bySlice.get(s + g);
      if (!next) continue;
      for (const b of next) {
        counts.clear();
        for (let ci = 0; ci < b.cells.length; ci++) {
          const c = b.cells[ci]!;
          const a = label[c]!;
          if (a >= 0) counts.set(a, (counts.get(a) ?? 0) + 1);
        }
        for (const a of here) {
          // a layer and the objects inside it share cells but are not one thing
          if ((a.layer ?? false) !== (b.layer ?? false)) continue;
          const shared = counts.get(a.id) ?? 0;
          // two linear members at an angle (crossing utilities at neighbouring depths) need more overlap
          const crossing = a.shape.kind === 'linear' && b.shape.kind === 'linear' && angleDiff(a.shape.directionDeg, b.shape.directionDeg) > Math.min(crossAngle, Math.max(spreadDeg(a), spreadDeg(b)));
          const need = Math.max(
            (crossing ? crossOverlap : minOverlap) * Math.min(a.cells.length, b.cells.length),
            minOverlapLarger * Math.max(a.cells.length, b.cells.length),
          );
          const linked =
            shared >= need && shared > 0
              ? true
              : a.shape.kind === 'compact' && b.shape.kind === 'compact' && Math.hypot(a.x - b.x, a.y - b.y) <= maxDist;
          if (linked) union(a.id, b.id);
        }
      }
    }
    for (const m of here) for (let ci = 0; ci < m.cells.length; ci++) label[m.cells[ci]!] = -1;
  }
  return groups(members.map((m) => m.id)).map((g) => g.sort((a, b) => members[a]!.slice - members[b]!.slice || a - b));
}

/** Disjoint sets of the items 0..n-1 (union-find; a union keeps the smaller root), and the sets in the order `order` meets their items. */
function disjointSets(n: number): { union: (a: number, b: number) => void; groups: (order: Iterable<number>) => number[][] } {
  const parent = Int32Array.from({ length: n }, (_, i) => i);
  const find = (a: number): number => {
    while (parent[a] !== a) a = parent[a] = parent[parent[a]!]!;
    return a;
  };
  return {
    union: (a, b) => {
      const ra = find(a), rb = find(b);
      if (ra !== rb) parent[Math.max(ra, rb)] = Math.min(ra, rb);
    },
    groups: (order) => {
      const out = new Map<number, number[]>();
      for (const i of order) {
        const r = find(i);
        const l = out.get(r);
        if (l) l.push(i);
        else out.set(r, [i]);
      }
      return [...out.values()];
    },
  };
}

export interface ChainOptions {
  /** Shared cells a link needs, as a fraction of the smaller member. @default 0.7 */
  minOverlap?: number;
  /**
   * Largest angle between two linear members of one chain, degrees; less for long thin members, whose
   * shapes fix their directions better: the larger of their atan(width / length) (`linkMembers`' crossing
   * rule). @default 20 (`joinAlignedPieces`' maxAngleDeg; common practice, no source)
   */
  maxAngleDeg?: number;
  /** Slices a chain may skip. @default 0 (only adjacent slices link: an object keeps its depth from slice to slice) */
  maxGap?: number;
}

/**
 * Chains of members that keep their plan position from slice to slice: two members of neighbouring
 * slices link when most of the smaller lies inside the other (`minOverlap`), they are of one kind (a
 * small blob under a pipe's long member is something else: a ghost's piece, a stone) and, both linear,
 * they run the same way within what their shapes fix (`maxAngleDeg`: a pipe's piece inside a wider band
 * that crosses it at a small angle does not chain with it). An object (a pipe, a footing) keeps its
 * position over depth; the bands in which a dipping layer crosses successive slices move down-dip by the
 * slice thickness over the tangent of the dip, so a band and the next share about one pulse over the
 * slice thickness plus one pulse (a half for slices one pulse thick), and a band crossing a pipe runs at
 * an angle to it. `linkMembers` links on a fifth of the smaller: through a layer that crosses their
 * depths, two objects and the layer come out as one anomaly. Returns groups of indices into `members`,
 * by slice.
 */
export function stationaryChains(members: readonly Member[], options: ChainOptions = {}): number[][] {
  const minOverlap = options.minOverlap ?? 0.7;
  const maxAngle = options.maxAngleDeg ?? 20;
  const maxGap = options.maxGap ?? 0;
  const n = members.length;
  const { union, groups } = disjointSets(n);
  for (let i = 0; i < n; i++)
    for (let j = 0; j < n; j++) {
      const a = members[i]!, b = members[j]!;
      const gap = b.slice - a.slice;
      if (gap < 1 || gap > maxGap + 1) continue;
      if (a.shape.kind !== b.shape.kind) continue;
      if (a.shape.kind === 'linear' && angleDiff(a.shape.directionDeg, b.shape.directionDeg) > Math.min(maxAngle, Math.max(spreadDeg(a), spreadDeg(b)))) continue;
      const shared = sharedCells(a.cells, b.cells);
      if (shared < minOverlap * Math.min(a.cells.length, b.cells.length)) continue;
      union(i, j);
    }
  return groups(members.keys()).map((g) => g.sort((p, q) => members[p]!.slice - members[q]!.slice || p - q));
}

/**
 * How many cells two ascending lists without repeats (`Anomaly3D.cells`, a member's `cells`) share: the
 * overlap of two anomalies in plan.
 */
export function sharedCells(a: ArrayLike<number>, b: ArrayLike<number>): number {
  let i = 0, j = 0, n = 0;
  while (i < a.length && j < b.length) {
    const ka = a[i]!, kb = b[j]!;
    if (ka < kb) i++;
    else if (kb < ka) j++;
    else (n++, i++, j++);
  }
  return n;
}
