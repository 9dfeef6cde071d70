// The yardstick against the answer: on random scenes of the field bench's generator, a "perfect" output
// made from truth.json itself (one target per recorded buried object: a pipe's centreline over its whole
// length, a compact object's footprint, each over its depth range) must score what the issue asks of a
// perfect tool under packages/scoring's frozen definitions: every target on a buried object, every
// recorded utility found along its surveyed length, every recorded compact object found, no air-wave
// target, and one piece per utility but for another utility's target that runs within 45 degrees of it
// (README "Pieces per utility": such a target is a piece of both). A definition that a perfect output fails
// is a defect of the definition (both changes of 2026-12-05 were found this way).
import { mkdtempSync, readFileSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { scoreRun, type ScoreTruth } from '@lamina/scoring';
import { randomScenario, simulateSite } from '@lamina/simulate';

type XY = [number, number];
type Buried = ScoreTruth['buried'][number] & { sizeM?: number[]; azimuthDeg?: number };
const work = mkdtempSync(join(tmpdir(), 'lamina-perfect-'));
afterAll(() => rmSync(work, { recursive: true, force: true }));

const identity = (x: number, y: number): XY => [x, y];
const recorded = (b: Buried) => b.response?.traces === undefined || b.response.traces > 0;

/** A compact object's plan footprint: its box turned by its azimuth, else a square round its radius. */
function footprint(b: Buried): XY[] {
  const [cx, cy] = b.center!;
  const [sx, sy] = b.sizeM && b.sizeM.length >= 2 ? [b.sizeM[0]! / 2, b.sizeM[1]! / 2] : [b.radiusM, b.radiusM];
  const a = ((b.azimuthDeg ?? 0) * Math.PI) / 180;
  const corner = (u: number, v: number): XY => [cx + u * Math.cos(a) - v * Math.sin(a), cy + u * Math.sin(a) + v * Math.cos(a)];
  const ring = [corner(-sx, -sy), corner(sx, -sy), corner(sx, sy), corner(-sx, sy)];
  return [...ring, ring[0]!];
}

function perfectOutput(truth: ScoreTruth) {
  const features = (truth.buried as Buried[]).filter(recorded).map((b) => ({
    type: 'Feature' as const,
    geometry: (b.center
      ? { type: 'Polygon', coordinates: [footprint(b)] }
      : { type: 'LineString', coordinates: [b.from!.slice(0, 2), b.to!.slice(0, 2)] }) as never,
    properties: { id: `T-${b.id}`, depthTopM: b.topDepthM!, depthBottomM: b.bottomDepthM!, origin: 'subsurface', class: b.center ? 'structure' : 'utility' },
  }));
  return { type: 'FeatureCollection' as const, features };
}

/** Axis angle between two pipes, degrees in [0, 90]. */
function angleDeg(a: Buried, b: Buried): number {
  const az = (p: Buried) => Math.atan2(p.to![1] - p.from![1], p.to![0] - p.from![0]);
  const d = Math.abs(az(a) - az(b)) % Math.PI;
  return (Math.min(d, Math.PI - d) * 180) / Math.PI;
}

describe('a perfect output scores perfectly (random scenes, truth.json as the answer)', () => {
  const seeds = [1, 2, 3, 4, 5, 6];
  it.each(seeds)('random scene %i', async (seed) => {
    const dir = join(work, `random-${seed}`);
    await simulateSite(randomScenario(seed, { sideM: [6, 8], maxTraces: 1500 }), dir);
    const truth = JSON.parse(readFileSync(join(dir, 'truth.json'), 'utf8')) as ScoreTruth & { lines: { start: XY; end: XY }[] };
    const perfect = perfectOutput(truth);
    const lines = truth.lines.map((l) => [l.start, l.end]);
    const r = scoreRun(perfect, perfect, truth, identity, { survey: { lines } });
    const buried = truth.buried as Buried[];
    expect(r.precision.byCount).toBe(1);
    expect(r.targetAirFraction).toBe(0);
    expect(r.buriedRecall.linear).toBe(1);
    expect(r.buriedRecall.compact).toBe(1);
    // pieces: the utility's own target, and each other recorded utility's target covering it within 45 degrees
    const byId = new Map(buried.map((b) => [b.id, b]));
    for (const p of r.precision.pieces) {
      const u = byId.get(p.id)!;
      if (!recorded(u)) continue;
      const covering = r.buried.find((b) => b.id === p.id)!.targets;
      const along = covering.filter((id) => {
        const v = byId.get(id.slice(2))!;
        return v.id === u.id || (!v.center && angleDeg(u, v) <= 45) || !!v.center;
      });
      expect(p.pieces, `${p.id}: covered by ${covering.join(' ')}`).toBe(along.length);
    }
  }, 60_000);
});
