import { describe, expect, it } from 'vitest';
import type { PlanFeature } from '@lamina/site';
import { planAirObjects } from '../src/air-objects';

const feature = (id: string, kind: PlanFeature['kind'], geometry: PlanFeature['geometry'], extra: Partial<PlanFeature> = {}): PlanFeature => ({ id, kind, properties: {}, wgs84: geometry, geometry, ...extra });

describe('planAirObjects', () => {
  it("gives each point its kind's largest radius and overhead objects their clearance", () => {
    const plan = [
      feature('c', 'column', { type: 'Point', coordinates: [10, 5] }),
      feature('p', 'post', { type: 'Point', coordinates: [12, 5] }),
      feature('t', 'tree', { type: 'Point', coordinates: [14, 5] }),
      feature('b', 'overhead', { type: 'LineString', coordinates: [[0, 0], [4, 0]] }, { heightM: 3 }),
    ];
    const o = planAirObjects(plan, 1);
    expect(Array.from(o.points)).toEqual([10, 5, 0, 12, 5, 0, 14, 5, 0]);
    expect(Array.from(o.pointRadiiM ?? [])).toEqual([0.4, 0.1, 0.5]);
    expect(Array.from(o.segments)).toEqual([0, 0, 4, 0, 3]);
  });
});
