import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { distanceTo, type Reflector } from '../src';

/** Distance to a reflector as first written: Math.hypot to every segment's foot and every point, the least. */
function plainDistanceTo(r: Reflector, x: number, y: number): number {
  let best = Infinity;
  const s = r.segments, p = r.points;
  for (let i = 0; i < s.length; i += 4) {
    const ax = s[i]!, ay = s[i + 1]!, dx = s[i + 2]! - ax, dy = s[i + 3]! - ay;
    const l2 = dx * dx + dy * dy;
    let t = l2 > 0 ? ((x - ax) * dx + (y - ay) * dy) / l2 : 0;
    t = t < 0 ? 0 : t > 1 ? 1 : t;
    best = Math.min(best, Math.hypot(x - ax - t * dx, y - ay - t * dy));
  }
  for (let i = 0; i < p.length; i += 2) best = Math.min(best, Math.hypot(x - p[i]!, y - p[i + 1]!));
  return best;
}

describe('distanceTo', () => {
  it('is the least Math.hypot over every segment and point (reflectors of one to twelve elements, far from the origin, equal distances)', () => {
    // coordinates on a coarse lattice far from the origin: many elements at equal or nearly equal distances
    const coord = fc.integer({ min: -40, max: 40 }).map((k) => 500_000 + k * 0.25);
    const reflector = fc.record({ segments: fc.array(coord, { maxLength: 24 }), points: fc.array(coord, { maxLength: 24 }) }).map(({ segments, points }) => ({
      featureId: 'f',
      kind: 'wall' as const,
      source: 'line' as const,
      segments: Float64Array.from(segments.slice(0, segments.length - (segments.length % 4))),
      points: Float64Array.from(points.slice(0, points.length - (points.length % 2))),
    }));
    fc.assert(
      fc.property(reflector, coord, coord, (r, x, y) => {
        expect(distanceTo(r, x, y)).toBe(plainDistanceTo(r, x, y));
      }),
      { numRuns: 3000, seed: 15 },
    );
  });
});
