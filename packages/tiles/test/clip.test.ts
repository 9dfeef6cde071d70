// Clipping to a tile's core against GDAL/OGR (Debian's python3-gdal: Geometry.Intersection, Area,
// Centroid), on random rectilinear outlines like the anomalies' (cell edges) and random lines.
import { describe, expect, it } from 'vitest';
import { runPython } from '@lamina/test-utils';
import type { Box } from '../src/grid';
import { clipLine, clipPolygons, contact, lineLength, polygonsCentroid, type Pt, type Ring } from '../src/merge/clip';

function random(seed: number): () => number {
  let s = seed >>> 0;
  return () => ((s = (Math.imul(s, 1664525) + 1013904223) >>> 0) / 2 ** 32);
}

/** A rectilinear blob of cells (the union of random cells around a walk) as its outline: one ring, staircase edges. */
function blob(rnd: () => number, x0: number, y0: number, cell: number): Ring {
  // a staircase polygon: columns of random heights, so it is simple (no holes) yet concave
  const cols = 3 + Math.floor(rnd() * 8);
  const tops = Array.from({ length: cols }, () => 1 + Math.floor(rnd() * 6));
  const ring: Ring = [[x0, y0]];
  for (let c = 0; c < cols; c++) {
    ring.push([x0 + c * cell, y0 + tops[c]! * cell]);
    ring.push([x0 + (c + 1) * cell, y0 + tops[c]! * cell]);
  }
  ring.push([x0 + cols * cell, y0]);
  return ring;
}

const wkt = (polys: Ring[][]): string =>
  polys.length === 0 ? 'MULTIPOLYGON EMPTY' : `MULTIPOLYGON (${polys.map((p) => `(${p.map((r) => `(${[...r, r[0]!].map((q) => `${q[0]} ${q[1]}`).join(', ')})`).join(', ')})`).join(', ')})`;

describe('clip to a core', () => {
  it('area and centroid of clipped outlines agree with OGR Intersection (UTM-sized coordinates)', () => {
    const rnd = random(3);
    const cases: { subject: Ring[][]; box: Box }[] = [];
    for (let i = 0; i < 40; i++) {
      const cell = 0.125;
      const x0 = 431250 + rnd() * 4, y0 = 4429810 + rnd() * 4;
      const subject = [[blob(rnd, x0, y0, cell)], [blob(rnd, x0 + 2, y0 - 1, cell)]];
      const bx = 431250 + Math.floor(rnd() * 4), by = 4429810 + Math.floor(rnd() * 4);
      cases.push({ subject, box: [bx, by, bx + 3, by + 3] });
    }
    const py = `import sys, json\nfrom osgeo import ogr\nout=[]\nfor c in json.load(sys.stdin):\n  g=ogr.CreateGeometryFromWkt(c['s'])\n  b=c['b']\n  box=ogr.CreateGeometryFromWkt('POLYGON ((%r %r, %r %r, %r %r, %r %r, %r %r))' % (b[0],b[1],b[2],b[1],b[2],b[3],b[0],b[3],b[0],b[1]))\n  i=g.Intersection(box)\n  a=i.GetArea()\n  ce=i.Centroid() if a > 0 else None\n  out.append([a, ce.GetX() if ce else None, ce.GetY() if ce else None])\nprint(json.dumps(out))`;
    const ref = JSON.parse(runPython(py, [], { input: JSON.stringify(cases.map((c) => ({ s: wkt(c.subject), b: c.box }))) })) as [number, number | null, number | null][];
    let nonEmpty = 0;
    for (const [i, c] of cases.entries()) {
      const clipped = clipPolygons(c.subject, c.box);
      const got = polygonsCentroid(clipped);
      const [area, cx, cy] = ref[i]!;
      if (area === 0) {
        expect(got?.area ?? 0).toBeCloseTo(0, 9);
        continue;
      }
      nonEmpty++;
      expect(got!.area).toBeCloseTo(area, 6);
      expect(got!.x).toBeCloseTo(cx!, 6);
      expect(got!.y).toBeCloseTo(cy!, 6);
      for (const p of clipped) for (const r of p) for (const q of r) {
        expect(q[0] >= c.box[0] && q[0] <= c.box[2] && q[1] >= c.box[1] && q[1] <= c.box[3]).toBe(true);
      }
    }
    expect(nonEmpty).toBeGreaterThan(10);
  });

  it('a polygon with a hole keeps the hole where it is inside the box', () => {
    const outer: Ring = [[0, 0], [4, 0], [4, 4], [0, 4]];
    const hole: Ring = [[1, 1], [1, 2], [2, 2], [2, 1]];
    const c = polygonsCentroid(clipPolygons([[outer, hole]], [0, 0, 3, 4]));
    expect(c!.area).toBeCloseTo(12 - 1, 12);
  });

  it('contact: where a clipped outline lies on each side', () => {
    const ring: Ring = [[1, 1], [5, 1], [5, 2], [1, 2]];
    const clipped = clipPolygons([[ring]], [0, 0, 3, 3]);
    expect(contact(clipped, [0, 0, 3, 3], 'east', 1e-9)).toEqual([1, 2]);
    expect(contact(clipped, [0, 0, 3, 3], 'west', 1e-9)).toBeUndefined();
  });

  it('lines: the runs inside the box, their length as OGR measures the intersection', () => {
    const rnd = random(9);
    const lines: Pt[][] = Array.from({ length: 30 }, () => Array.from({ length: 2 + Math.floor(rnd() * 6) }, () => [rnd() * 10, rnd() * 10] as Pt));
    const box: Box = [2, 3, 7, 8];
    const py = `import sys, json\nfrom osgeo import ogr\nbox=ogr.CreateGeometryFromWkt('POLYGON ((2 3, 7 3, 7 8, 2 8, 2 3))')\nprint(json.dumps([ogr.CreateGeometryFromWkt('LINESTRING (%s)' % ', '.join('%r %r' % (p[0], p[1]) for p in l)).Intersection(box).Length() for l in json.load(sys.stdin)]))`;
    const ref = JSON.parse(runPython(py, [], { input: JSON.stringify(lines) })) as number[];
    for (const [i, l] of lines.entries()) expect(clipLine(l, box).reduce((s, r) => s + lineLength(r), 0)).toBeCloseTo(ref[i]!, 9);
  });
});
