/**
 * Writes the bad-input corpus of the site package: one folder per case under test/bad/, and cases.json
 * with the exact message each case must give. The messages below are written by hand from the format's
 * rules (docs/site-format.md), not captured from a run. Regenerate from the repo root with
 *   pnpm exec tsx packages/site/test/bad/generate.ts
 * `<dir>` in a message stands for the case folder as shown relative to the working folder.
 *
 * Kinds: `site` (loadSite on the folder), `line` (loadSite, then readLine on every line), `info`
 * (loadSite, then summarizeSite: what `lamina info` does), `plan`
 * (the folder's plan.geojson under `crs`), `csv` (the folder's positions.csv for `nTraces` traces).
 */
import { mkdirSync, readdirSync, rmSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { tinySegy } from '../tiny-segy';

const here = import.meta.dirname;

interface Case {
  name: string;
  kind: 'site' | 'line' | 'info' | 'plan' | 'csv';
  files: Record<string, string | Buffer>;
  error: string;
  crs?: string;
  nTraces?: number;
}

const E0 = 500000;
const N0 = 3900000;
const good = {
  name: 'bad-input case',
  crs: 'EPSG:32617',
  antenna: { frequencyMHz: 400, separationM: 0.16 },
  sampleIntervalNs: 0.1,
  lines: [{ file: '../_shared/l01.sgy' }],
};
const site = (patch: Record<string, unknown>): string => JSON.stringify({ ...good, ...patch }, null, 2);
const ramp = (n: number, a: number, step: number): number[] => Array.from({ length: n }, (_, i) => a + i * step);
const segy = (x: number[], y: number[], extra: Partial<Parameters<typeof tinySegy>[0]> = {}): Buffer =>
  tinySegy({ nSamples: 16, dtNs: 0.1, sourceX: x, sourceY: y, ...extra });

const KINDS = 'building, wall, fence, post, tree, column, overhead, other';
const fc = (...features: unknown[]): string => JSON.stringify({ type: 'FeatureCollection', features }, null, 1);
const feat = (kind: string | undefined, geometry: unknown, props: Record<string, unknown> = {}): unknown => ({
  type: 'Feature',
  properties: kind === undefined ? props : { kind, ...props },
  geometry,
});
const lon0 = -81;
const lat0 = 35.2;
const sq = (d: number): number[][] => [[lon0, lat0], [lon0 + d, lat0], [lon0 + d, lat0 + d], [lon0, lat0 + d], [lon0, lat0]];

const cases: Case[] = [
  // --- site.json ---
  { name: 'site-json-syntax', kind: 'site', files: { 'site.json': '{\n  "name": "x",\n}\n' }, error: '<dir>/site.json: line 3: expected valid JSON, found a syntax error (Expected double-quoted property name in JSON at position 17)' },
  { name: 'site-not-object', kind: 'site', files: { 'site.json': '[1, 2]' }, error: '<dir>/site.json: (top level): expected a JSON object, found an array' },
  { name: 'site-null', kind: 'site', files: { 'site.json': 'null\n' }, error: '<dir>/site.json: (top level): expected a JSON object, found null' },
  { name: 'site-missing-manifest', kind: 'site', files: { 'readme.txt': 'no site.json here\n' }, error: '<dir>/site.json: expected a site manifest, found no readable site.json in <dir>' },
  { name: 'site-missing-name', kind: 'site', files: { 'site.json': JSON.stringify({ ...good, name: undefined }) }, error: '<dir>/site.json: name: missing: expected a site name' },
  { name: 'site-empty-name', kind: 'site', files: { 'site.json': site({ name: '' }) }, error: '<dir>/site.json: name: expected a site name, found an empty string' },
  { name: 'site-negative-frequency', kind: 'site', files: { 'site.json': site({ antenna: { frequencyMHz: -400, separationM: 0.16 } }) }, error: '<dir>/site.json: antenna.frequencyMHz: expected the centre frequency in MHz > 0, found -400' },
  { name: 'site-frequency-string', kind: 'site', files: { 'site.json': site({ antenna: { frequencyMHz: '400', separationM: 0.16 } }) }, error: '<dir>/site.json: antenna.frequencyMHz: expected the centre frequency in MHz, found "400"' },
  { name: 'site-missing-antenna', kind: 'site', files: { 'site.json': site({ antenna: undefined }) }, error: '<dir>/site.json: antenna: missing: expected object' },
  { name: 'site-negative-separation', kind: 'site', files: { 'site.json': site({ antenna: { frequencyMHz: 400, separationM: -0.1 } }) }, error: '<dir>/site.json: antenna.separationM: expected a separation >= 0 m, found -0.1' },
  { name: 'site-unknown-key', kind: 'site', files: { 'site.json': site({ sampleInterval: 0.1 }) }, error: '<dir>/site.json: sampleInterval: unknown key (misspelt, or not part of the format)' },
  { name: 'site-zero-interval', kind: 'site', files: { 'site.json': site({ sampleIntervalNs: 0 }) }, error: '<dir>/site.json: sampleIntervalNs: expected a sample interval in ns > 0, found 0' },
  { name: 'site-no-lines', kind: 'site', files: { 'site.json': site({ lines: [] }) }, error: '<dir>/site.json: lines: expected at least one line, found none' },
  { name: 'site-lines-not-array', kind: 'site', files: { 'site.json': site({ lines: 'l01.sgy' }) }, error: '<dir>/site.json: lines: expected an array of lines, found "l01.sgy"' },
  { name: 'site-start-without-end', kind: 'site', files: { 'site.json': site({ lines: [{ file: '../_shared/l01.sgy', start: [E0, N0] }] }) }, error: '<dir>/site.json: lines[0].end: missing: "start" and "end" go together (traces are spaced evenly from start to end)' },
  { name: 'site-two-position-sources', kind: 'site', files: { 'site.json': site({ lines: [{ file: '../_shared/l01.sgy', start: [E0, N0], end: [E0 + 10, N0], positions: 'p.csv' }] }) }, error: '<dir>/site.json: lines[0].positions: expected one position source, found both "positions" and "start"/"end"' },
  { name: 'site-start-equals-end', kind: 'site', files: { 'site.json': site({ lines: [{ file: '../_shared/l01.sgy', start: [E0, N0], end: [E0, N0] }] }) }, error: `<dir>/site.json: lines[0].end: expected an end different from start, found both at [${E0}, ${N0}]` },
  { name: 'site-start-not-pair', kind: 'site', files: { 'site.json': site({ lines: [{ file: '../_shared/l01.sgy', start: [E0], end: [E0 + 10, N0] }] }) }, error: '<dir>/site.json: lines[0].start: expected [x, y] in site CRS units, found an array' },
  { name: 'site-missing-line-file', kind: 'site', files: { 'site.json': site({ lines: [{ file: '../_shared/l01.sgy' }, { file: 'lines/l02.sgy' }] }) }, error: '<dir>/site.json: lines[1].file: expected a SEG-Y file, found no file at <dir>/lines/l02.sgy' },
  { name: 'site-missing-positions-csv', kind: 'site', files: { 'site.json': site({ lines: [{ file: '../_shared/l01.sgy', positions: 'l01.csv' }] }) }, error: '<dir>/site.json: lines[0].positions: expected a positions CSV, found no file at <dir>/l01.csv' },
  { name: 'site-missing-plan', kind: 'site', files: { 'site.json': site({ plan: 'plan.geojson' }) }, error: '<dir>/site.json: plan: expected a plan GeoJSON, found no file at <dir>/plan.geojson' },
  { name: 'site-traces-not-whole', kind: 'site', files: { 'site.json': site({ lines: [{ file: '../_shared/l01.sgy', traces: [0, 2.5] }] }) }, error: '<dir>/site.json: lines[0].traces[1]: expected a trace index (a whole number >= 0), found 2.5' },
  { name: 'site-traces-reversed', kind: 'site', files: { 'site.json': site({ lines: [{ file: '../_shared/l01.sgy', traces: [7, 7] }] }) }, error: '<dir>/site.json: lines[0].traces: expected last > first (a line needs at least 2 traces), found [7,7]' },
  { name: 'line-traces-beyond-file', kind: 'line', files: { 'site.json': site({ lines: [{ file: 'l.sgy', traces: [10, 20] }] }), 'l.sgy': segy(ramp(20, E0, 0.5), new Array<number>(20).fill(N0)) }, error: '<dir>/site.json: lines[0].traces: expected trace indices within 0..19 (<dir>/l.sgy has 20 traces), found [10, 20]' },
  { name: 'site-duplicate-line-id', kind: 'site', files: { 'site.json': site({ lines: [{ file: '../_shared/l01.sgy', id: 'a' }, { file: '../_shared/l01.sgy', id: 'a' }] }) }, error: '<dir>/site.json: lines[1].id: expected a unique line id, found "a" again (as lines[0]); set "id"' },
  { name: 'site-bad-line-id', kind: 'site', files: { 'site.json': site({ lines: [{ file: '../_shared/l01.sgy', id: 'line 1/a' }] }) }, error: '<dir>/site.json: lines[0].id: expected a line id of letters, digits, ".", "_" or "-" (it becomes a file name), found "line 1/a"' },
  { name: 'site-unknown-crs', kind: 'site', files: { 'site.json': site({ crs: 'EPSG:999999' }) }, error: '<dir>/site.json: crs: unknown CRS EPSG:999999: not in the bundled EPSG registry (proj4-list); give its proj4 string instead (e.g. from `projinfo EPSG:999999 -o PROJ -q`)' },
  { name: 'site-geographic-crs', kind: 'site', files: { 'site.json': site({ crs: 'EPSG:4326' }) }, error: '<dir>/site.json: crs: expected a projected CRS (trace positions are gridded in metres or feet), found the geographic CRS EPSG:4326; use e.g. the UTM zone of the site' },
  { name: 'site-crs-number', kind: 'site', files: { 'site.json': site({ crs: 32617 }) }, error: '<dir>/site.json: crs: expected an EPSG code ("EPSG:32617") or a proj4 string, found 32617' },
  { name: 'site-crs-words', kind: 'site', files: { 'site.json': site({ crs: 'UTM zone 17' }) }, error: '<dir>/site.json: crs: expected an EPSG code like "EPSG:32617" or a proj4 string starting with "+proj=", found "UTM zone 17"' },
  { name: 'site-crs-bad-units', kind: 'site', files: { 'site.json': site({ crs: '+proj=utm +zone=17 +datum=WGS84 +units=ch' }) }, error: '<dir>/site.json: crs: expected linear units m, us-ft or ft, found +units=ch' },
  {
    name: 'site-several-problems',
    kind: 'site',
    files: { 'site.json': site({ name: 7, antenna: { frequencyMHz: 0, separationM: 0.16 }, crs: 'EPSG:999999' }) },
    error:
      '<dir>/site.json: name: expected a site name, found 7 (2 more problems: crs: unknown CRS EPSG:999999: not in the bundled EPSG registry (proj4-list); give its proj4 string instead (e.g. from `projinfo EPSG:999999 -o PROJ -q`); antenna.frequencyMHz: expected the centre frequency in MHz > 0, found 0)',
  },
  // --- plan.geojson ---
  { name: 'plan-no-kind', kind: 'plan', files: { 'plan.geojson': fc(feat(undefined, { type: 'Point', coordinates: [lon0, lat0] }, { name: 'post' })) }, error: `<dir>/plan.geojson: features[0].properties.kind: missing: expected one of ${KINDS}` },
  { name: 'plan-unknown-kind', kind: 'plan', files: { 'plan.geojson': fc(feat('shed', { type: 'Polygon', coordinates: [sq(1e-4)] })) }, error: `<dir>/plan.geojson: features[0].properties.kind: found "shed": expected one of ${KINDS}` },
  { name: 'plan-fence-polygon', kind: 'plan', files: { 'plan.geojson': fc(feat('fence', { type: 'Polygon', coordinates: [sq(1e-4)] })) }, error: '<dir>/plan.geojson: features[0].geometry.type: expected LineString for kind "fence", found Polygon' },
  { name: 'plan-building-point', kind: 'plan', files: { 'plan.geojson': fc(feat('building', { type: 'Point', coordinates: [lon0, lat0] })) }, error: '<dir>/plan.geojson: features[0].geometry.type: expected Polygon or MultiPolygon for kind "building", found Point' },
  { name: 'plan-post-line', kind: 'plan', files: { 'plan.geojson': fc(feat('post', { type: 'LineString', coordinates: [[lon0, lat0], [lon0 + 1e-4, lat0]] })) }, error: '<dir>/plan.geojson: features[0].geometry.type: expected Point for kind "post", found LineString' },
  {
    name: 'plan-self-intersecting',
    kind: 'plan',
    files: { 'plan.geojson': fc(feat('building', { type: 'Polygon', coordinates: [[[lon0, lat0], [lon0 + 2e-4, lat0 + 2e-4], [lon0 + 2e-4, lat0], [lon0, lat0 + 2e-4], [lon0, lat0]]] })) },
    error: '<dir>/plan.geojson: features[0].geometry.coordinates: expected a simple footprint, found a self-intersection near [-80.9999000, 35.2001000]',
  },
  { name: 'plan-latitude-range', kind: 'plan', files: { 'plan.geojson': fc(feat('tree', { type: 'Point', coordinates: [lon0, 95] })) }, error: '<dir>/plan.geojson: features[0].geometry.coordinates[1]: expected a latitude in [-90, 90], found 95' },
  {
    name: 'plan-projected-coordinates',
    kind: 'plan',
    files: { 'plan.geojson': fc(feat('column', { type: 'Point', coordinates: [E0, N0] })) },
    error: `<dir>/plan.geojson: features[0].geometry.coordinates[0]: expected a longitude in [-180, 180], found ${E0} (these look like projected coordinates; RFC 7946 GeoJSON is WGS84 lon/lat) (1 more problem: features[0].geometry.coordinates[1]: expected a latitude in [-90, 90], found ${N0} (these look like projected coordinates; RFC 7946 GeoJSON is WGS84 lon/lat))`,
  },
  {
    name: 'plan-open-ring',
    kind: 'plan',
    files: { 'plan.geojson': fc(feat('building', { type: 'Polygon', coordinates: [sq(1e-4).slice(0, 4).concat([[lon0, lat0 + 2e-4]])] })) },
    error: `<dir>/plan.geojson: features[0].geometry.coordinates[0][4]: expected a closed ring (last position equal to the first), found [${lon0}, ${lat0}] ... [${lon0}, ${lat0 + 2e-4}]`,
  },
  { name: 'plan-short-ring', kind: 'plan', files: { 'plan.geojson': fc(feat('building', { type: 'Polygon', coordinates: [[[lon0, lat0], [lon0 + 1e-4, lat0], [lon0, lat0]]] })) }, error: '<dir>/plan.geojson: features[0].geometry.coordinates[0]: expected a closed ring of at least 4 positions' },
  { name: 'plan-line-one-point', kind: 'plan', files: { 'plan.geojson': fc(feat('wall', { type: 'LineString', coordinates: [[lon0, lat0]] })) }, error: '<dir>/plan.geojson: features[0].geometry.coordinates: expected a line of at least 2 positions' },
  { name: 'plan-not-collection', kind: 'plan', files: { 'plan.geojson': JSON.stringify(feat('tree', { type: 'Point', coordinates: [lon0, lat0] })) }, error: '<dir>/plan.geojson: type: expected "FeatureCollection", found "Feature" (1 more problem: features: expected an array of features, found undefined)' },
  { name: 'plan-null-geometry', kind: 'plan', files: { 'plan.geojson': fc(feat('tree', null)) }, error: '<dir>/plan.geojson: features[0].geometry: expected a geometry object, found null' },
  { name: 'plan-geometry-collection', kind: 'plan', files: { 'plan.geojson': fc(feat('other', { type: 'GeometryCollection', geometries: [] })) }, error: '<dir>/plan.geojson: features[0].geometry.type: expected a geometry type Point or LineString or Polygon or MultiLineString or MultiPolygon for kind "other", found "GeometryCollection"' },
  {
    name: 'plan-duplicate-id',
    kind: 'plan',
    files: { 'plan.geojson': fc({ ...(feat('post', { type: 'Point', coordinates: [lon0, lat0] }) as object), id: 'p1' }, { ...(feat('post', { type: 'Point', coordinates: [lon0 + 1e-5, lat0] }) as object), id: 'p1' }) },
    error: '<dir>/plan.geojson: features[1].id: expected a unique feature id, found "p1" again (first at features[0].id)',
  },
  { name: 'plan-negative-height', kind: 'plan', files: { 'plan.geojson': fc(feat('wall', { type: 'LineString', coordinates: [[lon0, lat0], [lon0 + 1e-4, lat0]] }, { heightM: -2 })) }, error: '<dir>/plan.geojson: features[0].properties.heightM: expected a height > 0 m, found -2' },
  { name: 'plan-post-spacing-on-wall', kind: 'plan', files: { 'plan.geojson': fc(feat('wall', { type: 'LineString', coordinates: [[lon0, lat0], [lon0 + 1e-4, lat0]] }, { postSpacingM: 2.5 })) }, error: '<dir>/plan.geojson: features[0].properties.postSpacingM: expected postSpacingM only on a fence, found it on kind "wall"' },
  {
    name: 'plan-crs-member',
    kind: 'plan',
    files: { 'plan.geojson': JSON.stringify({ type: 'FeatureCollection', crs: { type: 'name', properties: { name: 'urn:ogc:def:crs:EPSG::32617' } }, features: [] }) },
    error: '<dir>/plan.geojson: crs: expected WGS84 lon/lat (RFC 7946 has no "crs" member), found a crs named "urn:ogc:def:crs:EPSG::32617"',
  },
  { name: 'plan-coordinate-string', kind: 'plan', files: { 'plan.geojson': fc(feat('tree', { type: 'Point', coordinates: ['-81', lat0] })) }, error: '<dir>/plan.geojson: features[0].geometry.coordinates[0]: expected a number, found "-81"' },
  // --- positions CSV (20 traces, EPSG:32617) ---
  { name: 'csv-non-numeric', kind: 'csv', nTraces: 20, files: { 'positions.csv': `trace,x,y\n1,${E0},${N0}\n20,abc,${N0}\n` }, error: '<dir>/positions.csv: line 3: expected a number in column x, found "abc"' },
  { name: 'csv-nan', kind: 'csv', nTraces: 20, files: { 'positions.csv': `1,${E0},${N0}\n20,${E0 + 10},NaN\n` }, error: '<dir>/positions.csv: line 2: expected a number in column y, found "NaN"' },
  { name: 'csv-unknown-trace', kind: 'csv', nTraces: 20, files: { 'positions.csv': `trace,x,y\n1,${E0},${N0}\n25,${E0 + 10},${N0}\n` }, error: '<dir>/positions.csv: line 3: expected a trace number from 1 to 20 (the line has 20 traces), found 25' },
  { name: 'csv-trace-zero', kind: 'csv', nTraces: 20, files: { 'positions.csv': `0,${E0},${N0}\n19,${E0 + 10},${N0}\n` }, error: '<dir>/positions.csv: line 1: expected a trace number from 1 to 20 (the line has 20 traces), found 0' },
  { name: 'csv-duplicate-trace', kind: 'csv', nTraces: 20, files: { 'positions.csv': `trace,x,y\n1,${E0},${N0}\n10,${E0 + 5},${N0}\n10,${E0 + 6},${N0}\n20,${E0 + 10},${N0}\n` }, error: '<dir>/positions.csv: line 4: expected each trace number once, found trace 10 again (first on line 3)' },
  { name: 'csv-fractional-trace', kind: 'csv', nTraces: 20, files: { 'positions.csv': `1,${E0},${N0}\n2.5,${E0 + 1},${N0}\n` }, error: '<dir>/positions.csv: line 2: expected an integer trace number, found 2.5' },
  { name: 'csv-bad-header', kind: 'csv', nTraces: 20, files: { 'positions.csv': `a,b,c\n1,${E0},${N0}\n` }, error: '<dir>/positions.csv: line 1: expected a header naming columns trace, x and y (or rows of numbers trace,x,y), found "a,b,c"' },
  { name: 'csv-short-row', kind: 'csv', nTraces: 20, files: { 'positions.csv': `trace,x,y\n1,${E0},${N0}\n20,${E0 + 10}\n` }, error: '<dir>/positions.csv: line 3: expected 3 columns (trace,x,y), found 2' },
  { name: 'csv-empty', kind: 'csv', nTraces: 20, files: { 'positions.csv': 'trace,x,y\n' }, error: '<dir>/positions.csv: expected rows of trace,x,y, found none' },
  { name: 'csv-degrees', kind: 'csv', nTraces: 20, files: { 'positions.csv': `trace,x,y\n1,-80.84312,35.22101\n20,-80.84301,35.22103\n` }, error: '<dir>/positions.csv: expected CSV positions in the projected site CRS EPSG:32617 (m), found values that look like degrees (x -80.84312..-80.84301, y 35.22101..35.22103); reproject them' },
  { name: 'csv-constant', kind: 'csv', nTraces: 20, files: { 'positions.csv': `trace,x,y\n1,${E0},${N0}\n20,${E0},${N0}\n` }, error: `<dir>/positions.csv: expected CSV positions that move along the line, found all 20 traces at (${E0}, ${N0})` },
  { name: 'csv-off-the-globe', kind: 'csv', nTraces: 20, files: { 'positions.csv': `trace,x,y\n1,50000000,${N0}\n20,50000010,${N0}\n` }, error: `<dir>/positions.csv: expected CSV positions inside the site CRS EPSG:32617, found (50000000, ${N0}) at trace 1, which has no longitude/latitude there; check the CRS` },
  { name: 'csv-single-fix', kind: 'csv', nTraces: 20, files: { 'positions.csv': `7,${E0},${N0}\n` }, error: `<dir>/positions.csv: expected CSV positions that move along the line, found all 20 traces at (${E0}, ${N0})` },
];

// --- lines read through the SEG-Y reader (20 traces of 16 samples unless said) ---
const lineCase = (name: string, seg: Buffer, error: string, line: Record<string, unknown> = {}): Case => ({
  name,
  kind: 'line',
  files: { 'site.json': site({ lines: [{ file: 'l01.sgy', ...line }] }), 'l01.sgy': seg },
  error,
});
const z20 = new Array<number>(20).fill(0);
cases.push(
  lineCase('line-zero-coordinates', segy(z20, z20), '<dir>/l01.sgy: trace headers: expected trace coordinates, found CDP X/Y (bytes 181-188), source X/Y (73-80) and group X/Y (81-88) all zero; give "start" and "end" or a "positions" CSV for this line in site.json'),
  lineCase('line-constant-coordinates', segy(new Array<number>(20).fill(E0), new Array<number>(20).fill(N0)), `<dir>/l01.sgy: trace header bytes 73-80 (source X/Y): expected trace header source X/Y coordinates that move along the line, found all 20 traces at (${E0}, ${N0})`),
  lineCase(
    'line-degree-coordinates',
    segy(ramp(20, -80.8431, 0.0001), new Array<number>(20).fill(35.221), { scalar: -10000 }),
    '<dir>/l01.sgy: trace header bytes 73-80 (source X/Y): expected trace header source X/Y coordinates in the projected site CRS EPSG:32617 (m), found values that look like degrees (x -80.8431..-80.8412, y 35.221..35.221); reproject them',
  ),
  lineCase('line-angular-units', segy(ramp(20, E0, 0.5), new Array<number>(20).fill(N0), { coordUnits: 3 }), '<dir>/l01.sgy: trace header bytes 89-90 (coordinate units): expected trace coordinates in the projected site CRS (coordinate units 1 = length), found coordinate units 3 (decimal degrees) at trace 1; reproject the positions or give a positions CSV'),
  lineCase('line-one-trace', segy([E0], [N0]), '<dir>/l01.sgy: expected a line of at least 2 traces, found 1'),
  lineCase(
    'line-repeated-positions',
    segy(Array.from({ length: 60 }, (_, i) => E0 + Math.floor(i / 20) * 10), new Array<number>(60).fill(N0)),
    '<dir>/l01.sgy: trace header bytes 73-80 (source X/Y): expected trace header source X/Y coordinates that change from trace to trace, found 57 of 60 traces repeating the previous position (longest run 20 traces, 1..20); give the real fixes in a "positions" CSV (interpolated by trace number) or "start"/"end"',
  ),
  lineCase('line-cdp-only-degrees', segy(z20, z20, { cdpX: ramp(20, -80.8431, 0.0001), cdpY: new Array<number>(20).fill(35.221), scalar: -10000 }), '<dir>/l01.sgy: trace header bytes 181-188 (CDP X/Y): expected trace header CDP X/Y coordinates in the projected site CRS EPSG:32617 (m), found values that look like degrees (x -80.8431..-80.8412, y 35.221..35.221); reproject them'),
  lineCase('line-start-end-degrees', segy(z20, z20), '<dir>/site.json: lines[0]: expected start/end positions in the projected site CRS EPSG:32617 (m), found values that look like degrees (x -80.8431..-80.843, y 35.221..35.2211); reproject them', { start: [-80.8431, 35.221], end: [-80.843, 35.2211] }),
);

// --- whole-site summary (lamina info) ---
// A post 5 km north of the survey: (500000, 3905000) in EPSG:32617 is lat 35.2881629404, lon -81 by cs2cs.
cases.push({
  name: 'plan-far-from-survey',
  kind: 'info',
  files: {
    'site.json': site({ plan: 'plan.geojson' }),
    'plan.geojson': fc(feat('post', { type: 'Point', coordinates: [-81, 35.2881629404] })),
  },
  error: '<dir>/plan.geojson: expected plan features near the survey lines (within 1000 m), found the nearest 5.0 km away; is the plan in WGS84 lon/lat order (RFC 7946)?',
});

// Case folders are rewritten from scratch; the generator, cases.json and README stay.
for (const e of readdirSync(here, { withFileTypes: true })) if (e.isDirectory()) rmSync(join(here, e.name), { recursive: true });
mkdirSync(join(here, '_shared'));
writeFileSync(join(here, '_shared/l01.sgy'), segy(ramp(20, E0, 0.5), new Array<number>(20).fill(N0)));
const names = new Set<string>();
for (const c of cases) {
  if (names.has(c.name)) throw new Error(`duplicate case ${c.name}`);
  names.add(c.name);
  const dir = join(here, c.name);
  mkdirSync(dir);
  for (const [f, body] of Object.entries(c.files)) writeFileSync(join(dir, f), body);
}
const list = cases.map((c) => ({
  name: c.name,
  kind: c.kind,
  ...(c.kind === 'plan' ? { input: `${c.name}/plan.geojson`, crs: c.crs ?? 'EPSG:32617' } : {}),
  ...(c.kind === 'csv' ? { input: `${c.name}/positions.csv`, crs: c.crs ?? 'EPSG:32617', nTraces: c.nTraces } : {}),
  ...(c.kind === 'site' || c.kind === 'line' || c.kind === 'info' ? { input: c.name } : {}),
  error: c.error,
}));
writeFileSync(join(here, 'cases.json'), JSON.stringify({ about: 'Bad inputs of @lamina/site; see generate.ts. <dir> = the case folder relative to the working folder.', cases: list }, null, 1) + '\n');
console.log(`${cases.length} cases`);
