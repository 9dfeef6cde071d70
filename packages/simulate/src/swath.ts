import type { LineGeom, Scatterer } from './model';

/**
 * Lines that go around what stands on the ground. A cart cannot drive through a post, tree, column, wall,
 * fence or building: where its footprint would overlap one, the crew stops recording, lifts the cart past
 * it and goes on in a new file. The footprint is a rectangle centred on the antenna midpoint: `halfWidthM`
 * to each side, and half the antenna separation plus `halfWidthM` ahead and behind (the box and the
 * wheels; common practice, no source). A trace is not recorded where that rectangle, grown by an object's
 * radius, holds the object (walls, fences and building edges are taken as chains of points 0.05 m apart).
 * Each run of recorded traces at least one footprint long becomes a line: the first keeps the line's id,
 * the next ones add "b", "c", ... ("-27", "-28", ... past "z"). Overhead objects (cables, beams) do not stop the cart.
 */
export function linesAroundObstructions(lines: LineGeom[], scatterers: Scatterer[], halfWidthM: number, separationM: number): LineGeom[] {
  const obstacles = standingPoints(scatterers);
  if (!obstacles.x.length) return lines;
  const halfLength = separationM / 2 + halfWidthM;
  const out: LineGeom[] = [];
  for (const line of lines) {
    const n = line.mx.length;
    const keep = new Uint8Array(n).fill(1);
    const { dx, dy } = line;
    for (let k = 0; k < obstacles.x.length; k++) {
      const ox = obstacles.x[k]!, oy = obstacles.y[k]!, r = obstacles.r[k]!;
      for (let j = 0; j < n; j++) {
        const ex = ox - line.mx[j]!, ey = oy - line.my[j]!;
        if (Math.abs(ex * dx + ey * dy) < halfLength + r && Math.abs(ex * dy - ey * dx) < halfWidthM + r) keep[j] = 0;
      }
    }
    // runs of kept traces, at least one footprint long
    let piece = 0;
    for (let j = 0; j < n; ) {
      if (!keep[j]) {
        j++;
        continue;
      }
      let e = j;
      while (e + 1 < n && keep[e + 1]) e++;
      const length = Math.hypot(line.mx[e]! - line.mx[j]!, line.my[e]! - line.my[j]!);
      if (e > j && length >= 2 * halfLength) {
        out.push({ ...line, id: pieceId(line.id, piece), mx: line.mx.slice(j, e + 1), my: line.my.slice(j, e + 1) });
        piece++;
      }
      j = e + 1;
    }
  }
  return out.map((l, index) => ({ ...l, index }));
}

/** The id of a line's piece: the line's own for the first, then "b" to "z", then "-27", "-28", ... */
function pieceId(id: string, piece: number): string {
  if (piece === 0) return id;
  return piece < 26 ? `${id}${String.fromCharCode(97 + piece)}` : `${id}-${piece + 1}`;
}

/** Ground-standing above-ground scatterers as points (local metres) with their radius. */
function standingPoints(scatterers: Scatterer[]): { x: number[]; y: number[]; r: number[] } {
  const x: number[] = [], y: number[] = [], r: number[] = [];
  const step = 0.05;
  for (const s of scatterers) {
    if (s.medium !== 'air') continue;
    if (s.type === 'point') {
      if (s.z !== 0) continue;
      x.push(s.x), y.push(s.y), r.push(s.radius);
    } else if (s.type === 'segment') {
      if (s.az !== 0 || s.bz !== 0) continue;
      const len = Math.hypot(s.bx - s.ax, s.by - s.ay);
      const m = Math.max(1, Math.ceil(len / step));
      for (let i = 0; i <= m; i++) x.push(s.ax + ((s.bx - s.ax) * i) / m), y.push(s.ay + ((s.by - s.ay) * i) / m), r.push(s.radius);
    }
  }
  return { x, y, r };
}
