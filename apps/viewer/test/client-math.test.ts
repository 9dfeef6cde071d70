import { describe, expect, it } from 'vitest';
import { execFileSync } from 'node:child_process';
import { colourise, colourTable, COLOUR_MAP_NAMES, percentiles } from '../src/client/colormaps';
import { gridCornersWgs84 } from '../src/client/geo';
import { anomalyAnchorLonLat, parseRange } from '../src';

import { PYTHON as PY } from '@lamina/test-utils';

describe('colour maps', () => {
  it('has at least two maps, each a 256 x RGB ramp from its first to its last stop', () => {
    expect(COLOUR_MAP_NAMES.length).toBeGreaterThanOrEqual(2);
    for (const n of COLOUR_MAP_NAMES) expect(colourTable(n)).toHaveLength(768);
    const slate = colourTable('slate');
    expect([...slate.subarray(0, 3)]).toEqual([0, 0, 0]);
    expect([...slate.subarray(765)]).toEqual([255, 255, 255]);
  });

  it('clips to [lo, hi], leaves nodata/NaN transparent', () => {
    const lut = colourTable('slate');
    const rgba = colourise(new Float32Array([-5, 0, 0.5, 1, 7, -9999, NaN]), -9999, 0, 1, lut);
    const px = (i: number) => [...rgba.subarray(i * 4, i * 4 + 4)];
    expect(px(0)).toEqual([0, 0, 0, 255]);
    expect(px(1)).toEqual([0, 0, 0, 255]);
    expect(px(2)).toEqual([128, 128, 128, 255]);
    expect(px(3)).toEqual([255, 255, 255, 255]);
    expect(px(4)).toEqual([255, 255, 255, 255]);
    expect(px(5)[3]).toBe(0);
    expect(px(6)[3]).toBe(0);
  });

  it('percentiles agree with numpy.percentile (linear) to 1e-9', () => {
    let s = 1;
    const v = Float64Array.from({ length: 5001 }, () => ((s = (s * 16807) % 2147483647) / 2147483647) * 10 - 3);
    const ps = [0, 2, 25, 50, 98, 100];
    const ours = percentiles(v, null, ps, 1e9);
    // numpy 1.24 (Debian), default method "linear"
    const ref = JSON.parse(execFileSync(PY, ['-c', `import sys,json,numpy as np; v=np.array(json.load(sys.stdin)); print(json.dumps([float(np.percentile(v,p)) for p in ${JSON.stringify(ps)}]))`], { input: JSON.stringify([...v]) }).toString()) as number[];
    ours.forEach((o, i) => expect(o).toBeCloseTo(ref[i]!, 9));
  });
});

describe('georeferencing', () => {
  it('grid corners reprojected in the browser code agree with cs2cs to 1e-7 degrees', () => {
    const g = { originX: 631000, originY: 3985025, resX: 0.25, resY: 0.25, width: 120, height: 100 };
    const corners = gridCornersWgs84(g, '+proj=utm +zone=17 +datum=WGS84 +units=m +no_defs');
    const xy = [
      [631000, 3985000],
      [631000, 3985025],
      [631030, 3985025],
      [631030, 3985000],
    ];
    // PROJ 9.1 (Debian) cs2cs; EPSG:4326 output is lat lon
    const out = execFileSync('cs2cs', ['-f', '%.9f', 'EPSG:32617', 'EPSG:4326'], { input: xy.map((p) => p.join(' ')).join('\n') + '\n' }).toString().trim().split('\n');
    out.forEach((line, i) => {
      const [lat, lon] = line.split(/\s+/).map(Number);
      expect(corners[i]![0]).toBeCloseTo(lon!, 7);
      expect(corners[i]![1]).toBeCloseTo(lat!, 7);
    });
  });
});

describe('anchors and ranges', () => {
  it('anchors a polygon at its area centroid, a point at itself', () => {
    const sq = { geometry: { type: 'Polygon', coordinates: [[[0, 0], [4, 0], [4, 2], [0, 2], [0, 0]]] } };
    expect(anomalyAnchorLonLat(sq)).toEqual([2, 1]);
    // L-shape: centroid by decomposition into two rectangles (area-weighted)
    const l = { geometry: { type: 'Polygon', coordinates: [[[0, 0], [2, 0], [2, 1], [1, 1], [1, 3], [0, 3], [0, 0]]] } };
    const [cx, cy] = anomalyAnchorLonLat(l)!;
    expect(cx).toBeCloseTo((2 * 1 * 1 + 1 * 2 * 0.5) / 4, 12);
    expect(cy).toBeCloseTo((2 * 0.5 + 2 * 2) / 4, 12);
    expect(anomalyAnchorLonLat({ geometry: { type: 'Point', coordinates: [5, 6] } })).toEqual([5, 6]);
    expect(anomalyAnchorLonLat({ properties: { lon: 1, lat: 2 }, geometry: null })).toEqual([1, 2]);
    expect(anomalyAnchorLonLat({ properties: { centroid: [3, 4] }, geometry: sq.geometry })).toEqual([3, 4]);
  });
  it('parses single byte ranges as in RFC 9110 section 14.1.2', () => {
    expect(parseRange('bytes=0-499', 10000)).toEqual({ start: 0, end: 499 });
    expect(parseRange('bytes=9500-', 10000)).toEqual({ start: 9500, end: 9999 });
    expect(parseRange('bytes=-500', 10000)).toEqual({ start: 9500, end: 9999 });
    expect(parseRange('bytes=0-99999', 10000)).toEqual({ start: 0, end: 9999 });
    expect(parseRange('bytes=10000-', 10000)).toBeNull();
    expect(parseRange(undefined, 10)).toBeUndefined();
    expect(parseRange('bytes=0-1,5-6', 10)).toBeUndefined();
  });
});

describe('velocityLine (what the depths rest on, in the side panel)', () => {
  it('states the fitted site K with its spread and fits, and warns with the site note when the velocity is assumed', async () => {
    const { velocityLine } = await import('../src/client/velocity-line');
    const fitted = velocityLine({ site: { velocityMPerNs: 0.1064, permittivity: 7.94, spreadMPerNs: 0.0021, fitCount: 84, objectCount: 12 }, model: { kind: 'constant', layers: [] }, hyperbolas: [] } as never);
    // K = (c / v)^2, so dK / K = 2 dv / v: 2 x 7.94 x 0.0021 / 0.1064 = 0.31
    expect(fitted.text).toBe('Depths: K 7.94 ± 0.31 (v 0.1064 m/ns), from 84 hyperbola fits on 12 objects.');
    expect(fitted.warn).toBe(false);
    const assumed = velocityLine({ site: { velocityMPerNs: 0.1, permittivity: 8.988, spreadMPerNs: 0, fitCount: 0, note: 'no usable subsurface hyperbola fit: assumed 0.1 m/ns; depths are uncertain' }, model: { kind: 'constant', layers: [] }, hyperbolas: [] } as never);
    expect(assumed.text).toBe('Depths: K 8.99 (v 0.1000 m/ns), assumed, no hyperbola fit. No usable subsurface hyperbola fit: assumed 0.1 m/ns; depths are uncertain.');
    expect(assumed.warn).toBe(true);
    // with the site value's own uncertainty (velocity.json uncertaintyMPerNs): 2 x 8.988 x 0.0291 / 0.1 = 5.2
    const withU = velocityLine({ site: { velocityMPerNs: 0.1, permittivity: 8.988, spreadMPerNs: 0, uncertaintyMPerNs: 0.0291, fitCount: 0 }, model: { kind: 'constant', layers: [] }, hyperbolas: [] } as never);
    expect(withU.text).toBe('Depths: K 8.99, site value ± 5.2 (v 0.1000 m/ns), assumed, no hyperbola fit.');
    expect(velocityLine(undefined).warn).toBe(true);
  });
});
