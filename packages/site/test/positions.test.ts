import { describe, expect, it } from 'vitest';
import {
  applyGpsOffset,
  checkPositions,
  lineDirections,
  lineGeometry,
  parsePositionsCsv,
  positionsFromFixes,
  positionsFromHeaders,
  positionsFromStartEnd,
  resolveCrs,
  US_SURVEY_FOOT_M,
} from '../src';

const utm = resolveCrs('EPSG:32617');
const ft = resolveCrs('EPSG:2264');
const f64 = (a: number[]) => Float64Array.from(a);

describe('positions from start/end', () => {
  it('spaces traces evenly, first at start and last at end', () => {
    const p = positionsFromStartEnd([500000, 3900000], [500030, 3900040], 11);
    expect(p.x[0]).toBe(500000);
    expect(p.y[10]).toBe(3900040);
    // 3-4-5 triangle: 50 m over 10 steps
    const g = lineGeometry(p, utm.metresPerUnit);
    expect(g.lengthM).toBeCloseTo(50, 9);
    expect(g.traceSpacingM).toBeCloseTo(5, 9);
    expect(g.azimuthDeg).toBeCloseTo((Math.atan2(3, 4) * 180) / Math.PI, 9);
  });
});

describe('positions CSV', () => {
  it('reads headerless rows, header rows in any order, tabs, comments and CRLF', () => {
    expect(parsePositionsCsv('1,10,20\n5,14,20\n', 'a.csv').map((f) => [f.trace, f.x, f.y])).toEqual([[1, 10, 20], [5, 14, 20]]);
    const b = parsePositionsCsv('# from the logger\r\nY\tX\tTrace\r\n\r\n20\t10\t1\r\n24\t10\t5\r\n', 'b.csv');
    expect(b.map((f) => [f.trace, f.x, f.y, f.line])).toEqual([[1, 10, 20, 4], [5, 10, 24, 5]]);
    expect(parsePositionsCsv('trace,easting,northing,quality\n3,1.5,2.5,4\n', 'c.csv')[0]).toMatchObject({ trace: 3, x: 1.5, y: 2.5 });
  });

  it('interpolates sparse fixes by trace number and holds the ends', () => {
    const fixes = parsePositionsCsv('trace,x,y\n8,110,200\n3,100,200\n', 'f.csv');
    const p = positionsFromFixes(fixes, 10, 'f.csv');
    expect(Array.from(p.x)).toEqual([100, 100, 100, 102, 104, 106, 108, 110, 110, 110]);
    expect(Array.from(p.y)).toEqual(new Array(10).fill(200));
  });

  it('names the CSV line of a bad value', () => {
    expect(() => parsePositionsCsv('1,2,3\n2,x,3\n', 'p.csv')).toThrow('p.csv: line 2: expected a number in column x, found "x"');
    expect(() => positionsFromFixes(parsePositionsCsv('1,2,3\n11,2,3\n', 'p.csv'), 10, 'p.csv')).toThrow('p.csv: line 2: expected a trace number from 1 to 10');
  });
});

describe('positions from trace headers', () => {
  const z = new Float64Array(3);
  it('takes CDP X/Y, else source, else group', () => {
    expect(positionsFromHeaders({ sourceX: f64([1, 2, 3]), sourceY: z, cdpX: f64([4, 5, 6]), cdpY: z }, 'a.sgy').from).toBe('cdp');
    expect(positionsFromHeaders({ sourceX: f64([1, 2, 3]), sourceY: z, cdpX: z, cdpY: z }, 'a.sgy').from).toBe('source');
    const g = positionsFromHeaders({ sourceX: z, sourceY: z, cdpX: z, cdpY: z, groupX: f64([7, 8, 9]), groupY: z }, 'a.sgy');
    expect([g.from, ...g.x]).toEqual(['group', 7, 8, 9]);
  });
  it('refuses all-zero coordinates and angular units', () => {
    expect(() => positionsFromHeaders({ sourceX: z, sourceY: z, cdpX: z, cdpY: z }, 'a.sgy')).toThrow(/^a\.sgy: trace headers: expected trace coordinates, found CDP X\/Y/);
    // SEG-Y rev 1/2 trace header bytes 89-90: 2 = seconds of arc, 3 = decimal degrees, 4 = DMS.
    for (const u of [2, 3, 4]) expect(() => positionsFromHeaders({ sourceX: f64([1, 2, 3]), sourceY: z, coordUnits: u }, 'a.sgy')).toThrow(/coordinate units/);
    expect(positionsFromHeaders({ sourceX: f64([1, 2, 3]), sourceY: z, coordUnits: Int16Array.from([1, 0, 1]) }, 'a.sgy').from).toBe('source');
  });
});

describe('gps offset', () => {
  it('moves fixes back along and left across the direction of travel', () => {
    // Eastward line: the fix is 0.5 m ahead and 0.2 m to the right (south) of the antenna midpoint.
    const p = positionsFromStartEnd([1000, 2000], [1010, 2000], 21);
    applyGpsOffset(p, 0.5, 0.2, 1);
    for (let t = 0; t < 21; t++) {
      expect(p.x[t]).toBeCloseTo(1000 + t * 0.5 - 0.5, 9);
      expect(p.y[t]).toBeCloseTo(2000.2, 9);
    }
  });

  it('converts metres to US survey feet', () => {
    const p = positionsFromStartEnd([0, 0], [0, 100], 11); // northward, feet
    applyGpsOffset(p, 1, 0, ft.metresPerUnit);
    expect(p.y[5]).toBeCloseTo(50 - 1 / US_SURVEY_FOOT_M, 9);
    expect(p.x[5]).toBeCloseTo(0, 9);
  });

  it('follows a curved line: an across offset changes the radius of a circle', () => {
    // Counter-clockwise circle of radius 20 m: right of travel points outward, so a fix 0.3 m to the right
    // of the midpoint means the midpoint circle has radius 19.7 m.
    const n = 400;
    const x = new Float64Array(n);
    const y = new Float64Array(n);
    for (let t = 0; t < n; t++) {
      const a = (t / n) * Math.PI;
      x[t] = 20 * Math.cos(a);
      y[t] = 20 * Math.sin(a);
    }
    const p = applyGpsOffset({ x, y }, 0, 0.3, 1);
    for (let t = 5; t < n - 5; t++) expect(Math.hypot(p.x[t] as number, p.y[t] as number)).toBeCloseTo(19.7, 3);
  });

  it('directions bridge a stop in the line', () => {
    const d = lineDirections(f64([0, 1, 1, 1, 2]), f64([0, 0, 0, 0, 0]), 0.5);
    expect(Array.from(d.x)).toEqual([1, 1, 1, 1, 1]);
  });
});

describe('position checks', () => {
  it('passes a normal line, a short stop and a local grid near the origin', () => {
    checkPositions(positionsFromStartEnd([500000, 3900000], [500050, 3900000], 500), utm, 'l.sgy');
    const stop = positionsFromStartEnd([0, 0], [50, 0], 500);
    for (let t = 1; t < 20; t++) stop.x[t] = 0; // 4% of the line standing still at the start
    checkPositions(stop, resolveCrs('+proj=tmerc +lat_0=35 +lon_0=-81 +k=1 +x_0=0 +y_0=0 +ellps=GRS80 +units=m'), 'l.sgy');
  });
  it('names each fault', () => {
    const p = positionsFromStartEnd([500000, 3900000], [500050, 3900000], 100);
    p.y[41] = Number.NaN;
    expect(() => checkPositions(p, utm, 'l.sgy')).toThrow(/^l\.sgy: expected finite trace positions, found \(500020\.7070\d*, NaN\) at trace 42$/);
    expect(() => checkPositions({ x: f64([5]), y: f64([5]) }, utm, 'l.sgy')).toThrow('l.sgy: expected a line of at least 2 traces, found 1');
    // GPS at 1 Hz written into every trace at 20 traces/s: runs of 20 identical positions.
    const x = new Float64Array(100).map((_, t) => 500000 + Math.floor(t / 20));
    expect(() => checkPositions({ x, y: new Float64Array(100).fill(3900000) }, utm, 'l.sgy')).toThrow(/found 95 of 100 traces repeating the previous position \(longest run 20 traces, 1\.\.20\)/);
  });
});

describe('line geometry', () => {
  it('reports metres for a line in US survey feet', () => {
    const g = lineGeometry(positionsFromStartEnd([2000000, 600000], [2000000, 600100], 101), ft.metresPerUnit);
    expect(g.lengthM).toBeCloseTo(100 * US_SURVEY_FOOT_M, 9);
    expect(g.traceSpacingM).toBeCloseTo(US_SURVEY_FOOT_M, 9);
    expect(g.direction).toEqual([0, 1]);
    expect(g.azimuthDeg).toBe(0);
    expect(g.bbox).toEqual([2000000, 600000, 2000000, 600100]);
  });
});
