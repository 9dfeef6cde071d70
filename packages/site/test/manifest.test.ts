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

  it('a line context must hold the line\'s own traces', () => {
    const line = (l: object) => checkSiteJson({ ...good, lines: [{ file: 'a.sgy', ...l }] }).problems;
    expect(line({ traces: [10, 20], context: [0, 40] })).toEqual([]);
    for (const bad of [{ traces: [10, 20], context: [12, 40] }, { traces: [10, 20], context: [0, 19] }, { context: [0, 40] }]) {
      expect(line(bad).map((p) => p.path), JSON.stringify(bad)).toEqual(['lines[0].context']);
    }
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

describe('site.json survey block (issue 14, part 2)', () => {
  const survey = {
    date: '2026-11-30',
    endDate: '2026-12-01T16:30:00+01:00',
    operator: 'A. Crew',
    client: 'Invented Works Ltd',
    equipment: 'cart radar, 400 MHz shielded antenna',
    antennaSerial: 'SN-0042',
    positioning: { method: 'RTK GNSS', accuracyM: 0.03 },
    groundConditions: 'dry gravel, overcast',
    notes: 'south-east corner blocked by a skip',
  };

  it('accepts the documented block', () => {
    const r = checkSiteJson({ ...good, survey });
    expect(r.problems).toEqual([]);
    expect(r.value?.survey).toEqual(survey);
  });

  it('refuses dates that are not ISO 8601 calendar dates, unknown keys and a non-positive accuracy, each with its path', () => {
    // ISO 8601-1:2019 calendar date YYYY-MM-DD; 2026 is not a leap year, so 2026-02-29 does not exist.
    for (const date of ['30/11/2026', '2026-11-31', '2026-02-29', '2026-13-01', 'yesterday', '']) {
      const r = checkSiteJson({ ...good, survey: { ...survey, date } });
      expect(r.problems.map((p) => p.path), date).toContain('survey.date');
    }
    expect(checkSiteJson({ ...good, survey: { ...survey, date: '2024-02-29' } }).problems).toEqual([]); // a leap day
    const r = checkSiteJson({ ...good, survey: { date: '2026-11-30', crew: 'x', positioning: { method: 'GNSS', accuracyM: 0 } } });
    expect(r.problems.map((p) => p.path).sort()).toEqual(['survey.crew', 'survey.positioning.accuracyM'].sort());
    expect(checkSiteJson({ ...good, survey: { operator: 'x' } }).problems.map((p) => p.path)).toEqual(['survey.date']);
  });
});
