// The schemas against hand-made files: what they accept, and that a broken file is refused with an
// error naming the file and the field (the InputError shape of @lamina/errors).
import { describe, expect, it } from 'vitest';
import { anomaliesSchema, checkContract, picksSchema, reviewSchema, runSchema, slicesSchema, tilesSchema, velocitySchema } from '../src';

const run = {
  site: { name: 'yard', crs: { input: 'EPSG:32617', proj4: '+proj=utm +zone=17 +datum=WGS84 +units=m +no_defs' } },
  identity: { name: 'yard', crs: 'EPSG:32617', extent: [-80, 35, -79.9, 35.1] },
  lines: [{ id: 'L01' }],
};
const feature = (props: Record<string, unknown>) => ({ type: 'Feature', geometry: { type: 'Point', coordinates: [-80, 35] }, properties: props });
const anomaly = { id: 'A0001', depthTopM: 0.4, depthBottomM: 0.6, origin: 'subsurface', confidence: 0.8, evidence: [] };

describe('checkContract', () => {
  it('returns the input itself (key order and unknown keys kept)', () => {
    const j = { ...run, extra: { b: 1, a: 2 } };
    expect(checkContract(runSchema, j, 'run.json')).toBe(j);
  });

  it('names the file and the JSON path, says what was expected and shows what was found', () => {
    const fc = { type: 'FeatureCollection', features: [feature(anomaly), feature({ ...anomaly, id: 'A0002', depthTopM: 'deep' })] };
    expect(() => checkContract(anomaliesSchema, fc, 'out/anomalies.geojson')).toThrow('out/anomalies.geojson: features[1].properties.depthTopM: expected a depth in metres, found "deep"');
    expect(() => checkContract(anomaliesSchema, { type: 'Topology' }, 'a.geojson')).toThrow(/^a\.geojson: type: expected a GeoJSON FeatureCollection, found "Topology"/);
    expect(() => checkContract(velocitySchema, { site: { velocityMPerNs: -0.1 } }, 'velocity.json')).toThrow('velocity.json: site.velocityMPerNs: expected a positive velocity in m/ns, found -0.1');
    expect(() => checkContract(runSchema, { ...run, identity: { ...run.identity, extent: [1, 2] } }, 'run.json')).toThrow(/^run\.json: identity\.extent: expected \[west, south, east, north\], found \[1,2\]/);
  });

  it('puts a prefix before the path of a part', () => {
    expect(() => checkContract(anomaliesSchema.shape.features.element, feature({ ...anomaly, origin: 'air' }), 'x.geojson', { at: 'features[7]' })).toThrow(
      'x.geojson: features[7].properties.origin: expected "subsurface" or "above-ground", found "air"',
    );
  });
});

describe('schemas', () => {
  it('run.json needs the CRS as proj4 or as the input it came from', () => {
    expect(() => checkContract(runSchema, { ...run, site: { name: 'yard', crs: {} } }, 'run.json')).toThrow(/site\.crs\.proj4: expected a proj4 string/);
  });

  it('slices.json: empty slices carry null statistics (JSON has no NaN)', () => {
    const stats = { min: null, max: null, mean: null, std: null, p2: null, p98: null, validCount: 0 };
    const s = { version: 1, file: 'slices.tif', crs: 'EPSG:32617', epsg: 32617, metresPerUnit: 1, isGeographic: false, originX: 0, originY: 10, cellSize: 0.1, width: 5, height: 4, nodata: -9999, gridding: null, slices: [{ index: 0, band: 1, topM: 0, bottomM: 0.2, stats }] };
    expect(checkContract(slicesSchema, s, 'slices.json')).toBe(s);
    expect(() => checkContract(slicesSchema, { ...s, width: 2.5 }, 'slices.json')).toThrow(/^slices\.json: width: /);
  });

  it('review.json and picks files are strict (a misspelt key is an error, not ignored)', () => {
    const review = { version: 1, site: run.identity, decisions: [{ anomalyId: 'A1', anchor: { lon: -80, lat: 35, depthTopM: 0.4, depthBottomM: 0.6 }, decision: 'accept', updatedAt: '2026-01-01T00:00:00Z', utilityType: 'gas' }] };
    expect(checkContract(reviewSchema, review, 'review.json')).toBe(review);
    expect(() => checkContract(reviewSchema, { ...review, decisions: [{ ...review.decisions[0], decison: 'x' }] }, 'review.json')).toThrow(/review\.json: decisions\[0\]: expected no key "decison"/);
    const picks = { hyperbolas: [{ line: 'L1', picks: Array.from({ length: 5 }, (_, i) => ({ trace: i, timeNs: 10 + i })) }] };
    expect(checkContract(picksSchema, picks, 'p.json')).toBe(picks);
    expect(() => checkContract(picksSchema, { hyperbolas: [{ line: 'L1', picks: [{ trace: 1, offsetM: 2, timeNs: 3 }] }] }, 'p.json')).toThrow(/p\.json: hyperbolas\[0\]\.picks/);
  });

  it('tiles.json names its version', () => {
    expect(() => checkContract(tilesSchema, { version: 2, tiles: [] }, 't/tiles.json')).toThrow(/^t\/tiles\.json: version: expected a tiles\.json manifest of version 1, found 2/);
  });
});
