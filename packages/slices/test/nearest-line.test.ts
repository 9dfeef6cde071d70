import { describe, expect, it } from 'vitest';
import { runPython } from '@lamina/test-utils';
import { mulberry32 as rng } from '@lamina/random';
import { nearestOtherLine } from '../src';

describe('nearestOtherLine', () => {
  it('gives the exact distance to the nearest trace of another line of the same group, whatever the start radius', () => {
    // 12 wavy lines (two direction groups), irregular trace steps; queries on the lines
    const r = rng(7);
    const lines: Float64Array[] = [];
    for (let l = 0; l < 12; l++) {
      const across = l < 8;
      const n = 40 + Math.floor(r() * 60);
      const c = new Float64Array(2 * n);
      let s = 0;
      for (let i = 0; i < n; i++) {
        s += 0.02 + 0.1 * r();
        const a = s, b = (across ? 0.7 * l : 0.9 * (l - 8)) + 0.05 * Math.sin(3 * s) + 0.02 * r();
        c[2 * i] = across ? a : b;
        c[2 * i + 1] = across ? b : a;
      }
      lines.push(c);
    }
    const group = Int32Array.from(lines, (_, l) => (l < 8 ? 0 : 1));
    const lineStarts = new Int32Array(lines.length + 1);
    lines.forEach((c, l) => (lineStarts[l + 1] = lineStarts[l]! + c.length / 2));
    const queries = { x: [] as number[], y: [] as number[], line: [] as number[] };
    lines.forEach((c, l) => {
      for (const f of [0.1, 0.5, 0.9]) {
        const i = Math.floor((c.length / 2 - 1) * f);
        queries.x.push(c[2 * i]!);
        queries.y.push(c[2 * i + 1]!);
        queries.line.push(l);
      }
    });
    let minX = Infinity, minY = Infinity, maxX = -Infinity, maxY = -Infinity;
    for (const c of lines)
      for (let i = 0; i < c.length; i += 2) {
        minX = Math.min(minX, c[i]!);
        maxX = Math.max(maxX, c[i]!);
        minY = Math.min(minY, c[i + 1]!);
        maxY = Math.max(maxY, c[i + 1]!);
      }
    // reference: scipy.spatial.cKDTree nearest neighbour per line group (Debian python3-scipy)
    const ref = JSON.parse(
      runPython(
        `import sys,json
import numpy as np
from scipy.spatial import cKDTree
d=json.loads(sys.stdin.read())
out=[]
for qx,qy,ql in zip(d['qx'],d['qy'],d['ql']):
    pts=np.array([p for l,c in enumerate(d['lines']) if l!=ql and d['group'][l]==d['group'][ql] for p in zip(c[0::2],c[1::2])])
    out.append(float(cKDTree(pts).query([qx,qy])[0]))
print(json.dumps(out))`,
        [],
        { input: JSON.stringify({ lines: lines.map((c) => Array.from(c)), group: Array.from(group), qx: queries.x, qy: queries.y, ql: queries.line }) },
      ),
    ) as number[];
    const source = { lineStarts, line: (l: number) => lines[l]! };
    for (const startRadius of [1e-3, 0.05, 0.3, 5]) {
      const best = nearestOtherLine(source, queries, { startRadius, bounds: [minX, minY, maxX, maxY], group });
      best.forEach((d, q) => expect(d).toBeCloseTo(ref[q]!, 12));
    }
  });
});
