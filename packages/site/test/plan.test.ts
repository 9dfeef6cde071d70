import { describe, expect, it } from 'vitest';
import { parsePlan, pointFromWgs84, resolveCrs } from '../src';

const crs = resolveCrs('EPSG:32617');
const lon = -81;
const lat = 35.2;
const d = 1e-4;
const square = [[lon, lat], [lon + d, lat], [lon + d, lat + d], [lon, lat + d], [lon, lat]];
const fc = (...features: unknown[]) => ({ type: 'FeatureCollection', features });
const f = (kind: string, geometry: unknown, extra: Record<string, unknown> = {}, id?: string | number) => ({ type: 'Feature', ...(id !== undefined ? { id } : {}), properties: { kind, ...extra }, geometry });

describe('plan.geojson', () => {
  it('accepts an empty collection', () => {
    expect(parsePlan(fc(), 'plan.geojson', { crs })).toEqual([]);
  });

  it('accepts every kind with its geometry, gives ids and projects to the site CRS', () => {
    const plan = parsePlan(
      fc(
        f('building', { type: 'Polygon', coordinates: [square] }, { heightM: 6 }),
        f('building', { type: 'MultiPolygon', coordinates: [[square]] }),
        f('wall', { type: 'LineString', coordinates: [[lon, lat], [lon + d, lat]] }),
        f('fence', { type: 'LineString', coordinates: [[lon, lat, 101.5], [lon, lat + d, 101.7]] }, { postSpacingM: 2.4, heightM: 1.2 }, 'north fence'),
        f('post', { type: 'Point', coordinates: [lon, lat] }, { id: 7 }),
        f('tree', { type: 'Point', coordinates: [lon, lat] }),
        f('column', { type: 'Point', coordinates: [lon, lat] }),
        f('other', { type: 'MultiLineString', coordinates: [[[lon, lat], [lon + d, lat]]] }),
      ),
      'plan.geojson',
      { crs },
    );
    expect(plan.map((p) => p.id)).toEqual(['building-1', 'building-2', 'wall-1', 'north fence', '7', 'tree-1', 'column-1', 'other-1']);
    const fence = plan[3];
    expect(fence?.postSpacingM).toBe(2.4);
    expect(fence?.heightM).toBe(1.2);
    // heights in positions are dropped: plan geometry is 2D
    expect(fence?.wgs84).toEqual({ type: 'LineString', coordinates: [[lon, lat], [lon, lat + d]] });
    const post = plan[4];
    expect(post?.geometry.type).toBe('Point');
    const [x, y] = pointFromWgs84(crs, lon, lat);
    expect(post?.geometry.coordinates).toEqual([x, y]);
    expect(post?.properties.kind).toBe('post');
  });

  it('an overhead object is a line or a point with its height; without heightM it is refused', () => {
    const plan = parsePlan(fc(f('overhead', { type: 'LineString', coordinates: [[lon, lat], [lon + d, lat]] }, { heightM: 5.5 }), f('overhead', { type: 'Point', coordinates: [lon, lat] }, { heightM: 3 })), 'p', { crs });
    expect(plan.map((p) => [p.id, p.heightM])).toEqual([['overhead-1', 5.5], ['overhead-2', 3]]);
    expect(() => parsePlan(fc(f('overhead', { type: 'Point', coordinates: [lon, lat] })), 'p.geojson')).toThrow(/^p\.geojson: features\[0\]\.properties\.heightM: missing: an overhead feature needs heightM/);
    expect(() => parsePlan(fc(f('overhead', { type: 'Polygon', coordinates: [square] }, { heightM: 3 })), 'p.geojson')).toThrow(/expected LineString or Point for kind "overhead"/);
  });

  it('generated ids skip ids the plan already uses', () => {
    const plan = parsePlan(fc(f('tree', { type: 'Point', coordinates: [lon, lat] }), f('tree', { type: 'Point', coordinates: [lon, lat] }, {}, 'tree-1')), 'p');
    expect(plan.map((p) => p.id)).toEqual(['tree-2', 'tree-1']);
  });

  it('repeated vertices are not a self-intersection; a bow tie is', () => {
    const rep = [[lon, lat], [lon + d, lat], [lon + d, lat], [lon + d, lat + d], [lon, lat + d], [lon, lat]];
    expect(parsePlan(fc(f('building', { type: 'Polygon', coordinates: [rep] })), 'p')).toHaveLength(1);
    const bow = [[lon, lat], [lon + d, lat + d], [lon + d, lat], [lon, lat + d], [lon, lat]];
    expect(() => parsePlan(fc(f('building', { type: 'MultiPolygon', coordinates: [[square], [bow]] })), 'p.geojson')).toThrow(
      /^p\.geojson: features\[0\]\.geometry\.coordinates\[1\]: expected a simple footprint, found a self-intersection near/,
    );
  });

  it('collects problems across features', () => {
    try {
      parsePlan(fc(f('fence', { type: 'Point', coordinates: [lon, lat] }), { type: 'Feature', properties: {}, geometry: null }, f('tree', { type: 'Point', coordinates: [200, lat] })), 'plan.geojson');
      expect.unreachable();
    } catch (e) {
      const p = (e as { problems: { path: string }[] }).problems.map((q) => q.path);
      expect(p).toEqual(['features[0].geometry.type', 'features[1].properties.kind', 'features[2].geometry.coordinates[0]']);
    }
  });
});
