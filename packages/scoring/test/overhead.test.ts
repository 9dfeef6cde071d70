import { describe, expect, it } from 'vitest';
import { scoreRun } from '../src';
import { feat, identity, k9Truth } from './fixtures';

const ring = (cx: number, cy: number, r: number) => ({
  type: 'Polygon',
  coordinates: [Array.from({ length: 65 }, (_, i) => [cx + r * Math.cos((i * Math.PI) / 32), cy + r * Math.sin((i * Math.PI) / 32)])],
});

describe('overhead reflectors', () => {
  // K 9: r(z) = c t / 2 = 3 z. A point 1 m above the ground: the air wave at two-way time t comes from
  // plan distance sqrt((c t / 2)^2 - h^2) (slant path, geometry), so at z = 0.5 m: sqrt(1.5^2 - 1) = 1.118 m.
  // antenna 2000 MHz: locus tolerance 0.25 + 0.0375 m
  const truth = k9Truth([], [{ id: 'lamp', kind: 'overhead', center: [50, 50], heightM: 1 }], { antenna: { frequencyMHz: 2000 } });
  const at = (id: string, z: number, r: number) => feat(id, ring(50, 50, r), { depthTopM: z - 0.01, depthBottomM: z + 0.01, origin: 'above-ground' });

  it('puts the locus at the slant plan distance, and none above z = h v / c', () => {
    const r = scoreRun(undefined, { type: 'FeatureCollection', features: [at('S', 0.5, Math.sqrt(2.25 - 1)), at('G', 0.5, 1.5), at('Hi', 0.2, 0.1)] }, truth, identity);
    const row = (id: string) => r.anomalies.find((a) => a.id === id)!;
    expect(row('S').reflector).toBe('lamp');
    // slice 0.49-0.51 m: locus band 1.08-1.16 m; the ground-level rule's radius 1.5 m lies 0.34 m beyond it (> tol)
    expect(row('G').reflector).toBeNull();
    // at 0.21 m at most r = 0.63 m < h - tol: the cable's air wave has not arrived yet
    expect(row('Hi').reflector).toBeNull();
  });
});
