import { describe, expect, it } from 'vitest';
import { checkSiteJson, InputProblems, jsonPath } from '../src';

const good = {
  name: 'yard',
  crs: 'EPSG:32617',
  antenna: { frequencyMHz: 400, separationM: 0.16, gpsOffset: { alongM: 0.3 } },
  plan: 'plan.geojson',
  lines: [{ file: 'lines/l01.sgy' }, { file: 'lines/l02.sgy', start: [1, 2], end: [3, 4], id: 'l2' }, { file: 'lines/l03.sgy', positions: 'lines/l03.csv' }],
  recipe: { anything: ['goes', 1] },
};

describe('site.json schema', () => {
  it('accepts the documented shape and defaults the gps offset', () => {
    const r = checkSiteJson(good);
    expect(r.problems).toEqual([]);
    expect(r.value?.antenna.gpsOffset).toEqual({ alongM: 0.3, acrossM: 0 });
    expect(r.value?.recipe).toEqual({ anything: ['goes', 1] });
  });

  it('reports every problem with its JSON path', () => {
    const r = checkSiteJson({
      ...good,
      antenna: { frequencyMHz: 'high', separationM: -1 },
      lines: [{ file: 'a.sgy', start: [0, 'y'], end: [1, 1] }, { start: [0, 0] }],
      extra: true,
    });
    const paths = r.problems.map((p) => p.path).sort();
    expect(paths).toEqual(['antenna.frequencyMHz', 'antenna.separationM', 'extra', 'lines[0].start[1]', 'lines[1].end', 'lines[1].file'].sort());
    expect(r.problems.find((p) => p.path === 'lines[1].file')?.message).toBe('missing: expected the path of a SEG-Y file');
  });

  it('thrown as one InputError naming file, first path and the count', () => {
    const r = checkSiteJson({ name: 'x' });
    const e = new InputProblems('site/site.json', r.problems);
    expect(e.name).toBe('InputError');
    expect(e.file).toBe('site/site.json');
    expect(e.field).toBe('crs');
    expect(e.message).toMatch(/^site\/site\.json: crs: missing: expected an EPSG code .* \(2 more problems: antenna: .*; lines: missing: expected an array of lines\)$/);
    expect(e.problems).toHaveLength(3);
  });

  it('formats JSON paths', () => {
    expect(jsonPath(['lines', 2, 'start', 0])).toBe('lines[2].start[0]');
    expect(jsonPath(['features', 0, 'properties', 'a b'])).toBe('features[0].properties["a b"]');
    expect(jsonPath([])).toBe('(top level)');
  });
});
