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
  const parent = Int32Array.from(members.keys());
  const find = (a: number): number => {
    while (parent[a] !== a) {
      parent[a] = parent[parent[a]!]!;
      a = parent[a]!;
    }
    return a;
  };
  const union = (a: number, b: number) => {
    const ra = find(a), rb = find(b);
    if (ra !== rb) parent[Math.max(ra, rb)] = Math.min(ra, rb);
  };
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
    for (const m of here) for (const c of m.cells) label[c] = m.id;
    for (let g = 1; g <= maxGap + 1; g++) {
      const next = bySlice.get(s + g);
      if (!next) continue;
      for (const b of next) {
        counts.clear();
        for (const c of b.cells) {
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
    for (const m of here) for (const c of m.cells) label[c] = -1;
  }
  const groups = new Map<number, number[]>();
  for (const m of members) {
    const r = find(m.id);
    const l = groups.get(r);
    if (l) l.push(m.id);
    else groups.set(r, [m.id]);
  }
  return [...groups.values()].map((g) => g.sort((a, b) => members[a]!.slice - members[b]!.slice || a - b));
}
