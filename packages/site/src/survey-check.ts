import { join } from 'node:path';
import { C_M_PER_NS } from '@lamina/constants';
import { medianHigh } from '@lamina/stats';
import { InputError } from '@lamina/errors';
import { pointFromWgs84, pointToWgs84, INTERNATIONAL_FOOT_M, US_SURVEY_FOOT_M } from './crs';
import { AREA_OF_USE } from './crs-area';
import { linePositions, lineTraces, shownPath } from './load';
import { defaultOpenSegy, type OpenSegy } from './segy';
import type { Crs, LineSource, PlanFeature, Position, Site } from './types';


export interface SurveyCheckOptions {
  /**
   * Largest gap between parts of one survey, and between the survey and the plan, metres. A GPR site is a
   * yard, a car park or a floor walked in lines a metre or less apart; parts a kilometre apart are two
   * sites (one grid across the gap spends nearly all its cells on nothing), and a line that far away is
   * almost always a unit or CRS slip. The same limit as `checkPlanNearSurvey`. Common practice, no source.
   * @default 1000
   */
  maxGapM?: number;
  /**
   * Margin around the area of use of the site CRS, degrees. PROJ's areas of use are the intended extent;
   * projects that cross a zone edge commonly stay in one zone a little past it. Common practice, no source.
   * @default 1
   */
  areaMarginDeg?: number;
  /**
   * Largest step between consecutive traces, metres. Traces are shot by a survey wheel or a timer at
   * centimetres to decimetres apart; GPS fixes at 1 Hz move about 1.5 m at walking pace (1.5 m/s) and
   * repeated positions between fixes are refused separately. A step over 5 m is a GPS jump, a pause
   * with the antenna carried, or a unit slip. Common practice, no source. @default 5
   */
  maxStepM?: number;
  /** Positions kept for `lines[].thinned`: one point every this many metres (and the last). @default 0.1 */
  thinM?: number;
  /** Overrides `site.sampleIntervalNs` for files that do not carry an interval. */
  sampleIntervalNs?: number;
  /** SEG-Y opener. @default openSegy from @lamina/radar-data */
  open?: OpenSegy;
}

/** What the headers of a line say, without its samples. */
export interface LineFacts {
  id: string;
  /** The SEG-Y file as shown in messages. */
  file: string;
  /** The traces of the file the line uses. */
  nTraces: number;
  nSamples: number;
  dtNs: number;
  /** [minX, minY, maxX, maxY], site CRS units. */
  bbox: [number, number, number, number];
  /** Median distance between consecutive traces, m. */
  stepM: number;
  /** Positions about `thinM` apart (first and last kept), `[x0, y0, ...]` in site CRS units. */
  thinned: Float64Array;
}

export interface SurveyCheck {
  lines: LineFacts[];
  /** Extent of all lines, site CRS units. */
  bbox: [number, number, number, number];
  /** The plan features near the survey (those screening uses). */
  plan: PlanFeature[];
  /** One line each: plan features left out because they lie far from the survey. */
  warnings: string[];
}

/** Where a line's positions come from, for messages: the file and field a user would fix. */
function positionsWhere(site: Site, src: LineSource): { file: string; field?: string } {
  const p = src.position;
  if (p.kind === 'csv') return { file: shownPath(p.file) };
  if (p.kind === 'startEnd') return { file: shownPath(join(site.dir, 'site.json')), field: `lines[${src.index ?? site.lines.indexOf(src)}]` };
  return { file: shownPath(src.file), field: 'trace headers (X/Y coordinates)' };
}

const fmt = (v: number, d = 4): string => String(Number(v.toFixed(d)));
const km = (m: number): string => (m >= 10000 ? `${Math.round(m / 1000)} km` : m >= 1000 ? `${(m / 1000).toFixed(1)} km` : `${Math.round(m)} m`);

/** Is lon/lat inside an area of use [w, s, e, n] widened by `margin` degrees (west > east crosses 180)? */
export function insideArea(lon: number, lat: number, area: readonly [number, number, number, number], margin: number): boolean {
  if (!(Number.isFinite(lon) && Number.isFinite(lat))) return false;
  const [w, s, e, n] = area;
  if (lat < s - margin || lat > n + margin) return false;
  if (e - w + 2 * margin >= 360) return true;
  const l = ((lon - (w - margin)) % 360 + 360) % 360;
  const span = ((e - w) % 360 + 360) % 360 + 2 * margin;
  return l <= span;
}

/** The area of use of the site CRS (from PROJ, see crs-area.ts), or undefined for a proj4 string or a code without one. */
export function areaOfUse(crs: Crs): readonly [number, number, number, number] | undefined {
  if (!crs.code) return undefined;
  return AREA_OF_USE[Number(crs.code.replace(/^EPSG:/, ''))];
}

/**
 * Name the usual slip that would bring a wrong position (x, y) to where it belongs (`fits`), as
 * "; looks like ..." for a message, or '' when none does.
 */
export function likelyCause(x: number, y: number, crs: Crs, fits: (x: number, y: number) => boolean): string {
  const tryFit = (f: () => [number, number]): boolean => {
    try {
      const [a, b] = f();
      return Number.isFinite(a) && Number.isFinite(b) && fits(a, b);
    } catch {
      return false;
    }
  };
  if (!crs.isGeographic && Math.abs(x) <= 180 && Math.abs(y) <= 90) {
    if (tryFit(() => pointFromWgs84(crs, x, y))) return '; looks like degrees (longitude, latitude) in a projected CRS: reproject them';
    if (Math.abs(x) <= 90 && tryFit(() => pointFromWgs84(crs, y, x))) return '; looks like degrees (latitude, longitude) in a projected CRS: reproject them';
  }
  for (const k of [10, 100, 1000, 10000]) {
    if (fits(x * k, y * k)) return `; looks like the coordinate scalar applied twice (the values are ${k} times too small)`;
    if (fits(x / k, y / k)) return `; looks like the coordinate scalar not applied or of the wrong sign (the values are ${k} times too large)`;
  }
  const units: [string, number][] = [['metres', 1], ['feet', INTERNATIONAL_FOOT_M], ['US survey feet', US_SURVEY_FOOT_M]];
  const own = units.find(([, m]) => m === crs.metresPerUnit)?.[0] ?? crs.units;
  for (const [name, m] of units) {
    // values in `name` read as site CRS units: the CRS value is v * m / metresPerUnit
    const k = m / crs.metresPerUnit;
    if (Math.abs(k - 1) > 1e-3 && fits(x * k, y * k)) return `; looks like ${name} read as ${own}`;
  }
  if (fits(y, x)) return '; looks like x and y swapped';
  return '';
}

interface Stepped {
  median: number;
  max: number;
  at: number;
}

function steps(x: Float64Array, y: Float64Array, mpu: number): Stepped {
  const n = x.length;
  let max = 0;
  let at = 0;
  // 2000 steps are plenty for a median
  const stride = Math.max(1, Math.floor((n - 1) / 2000));
  const sample: number[] = [];
  for (let t = 1; t < n; t++) {
    const d = Math.hypot((x[t] as number) - (x[t - 1] as number), (y[t] as number) - (y[t - 1] as number)) * mpu;
    if (d > max) {
      max = d;
      at = t;
    }
    if (t % stride === 0) sample.push(d);
  }
  return { median: sample.length ? medianHigh(sample) : 0, max, at };
}

function bboxGap(a: readonly number[], b: readonly number[]): number {
  const dx = Math.max((a[0] as number) - (b[2] as number), 0, (b[0] as number) - (a[2] as number));
  const dy = Math.max((a[1] as number) - (b[3] as number), 0, (b[1] as number) - (a[3] as number));
  return Math.hypot(dx, dy);
}

function* vertices(f: PlanFeature): Generator<Position> {
  const g = f.geometry;
  if (g.type === 'Point') yield g.coordinates;
  else if (g.type === 'LineString') yield* g.coordinates;
  else if (g.type === 'Polygon' || g.type === 'MultiLineString') for (const r of g.coordinates) yield* r;
  else for (const p of g.coordinates) for (const r of p) yield* r;
}

/**
 * Check what the positions of a site mean, from its trace headers, CSVs and site.json only (no samples),
 * before any processing: every trace inside the area of use of the site CRS, a trace spacing a radar can
 * use (median at most one wavelength in air at the antenna frequency; no step over `maxStepM`), every
 * line within `maxGapM` of the rest of the survey and the plan near it. Each failure is an `InputError`
 * naming the file, the traces and the likely cause. Plan features far from the survey are dropped from
 * the returned plan with a warning; a plan with none near is refused (a wrong CRS or lon/lat order).
 */
export async function checkSurvey(site: Site, options: SurveyCheckOptions = {}): Promise<SurveyCheck> {
  const mpu = site.crs.metresPerUnit;
  const maxGap = (options.maxGapM ?? 1000) / mpu;
  const margin = options.areaMarginDeg ?? 1;
  const maxStepM = options.maxStepM ?? 5;
  const thin = (options.thinM ?? 0.1) / mpu;
  const area = areaOfUse(site.crs);
  const open = options.open ?? defaultOpenSegy();
  const dt = options.sampleIntervalNs ?? site.sampleIntervalNs;
  // One wavelength in air. Zero-offset data alias a dip theta unless the spacing is below v / (4 f sin theta)
  // (spatial Nyquist for two-way paths); at c / f even events at the speed of light alias above 14.5
  // degrees, and events in the ground (v < c) at less: every hyperbola flank a velocity fit or migration
  // needs is aliased, so the positions are more likely wrong than the survey that coarse.
  const maxMedianM = C_M_PER_NS / (site.antenna.frequencyMHz / 1000);
  const areaText = area ? `lon ${area[0]}..${area[2]}, lat ${area[1]}..${area[3]}` : '';
  const inArea = (x: number, y: number): boolean => {
    if (!area) return true;
    const [lon, lat] = pointToWgs84(site.crs, x, y);
    return insideArea(lon, lat, area, margin);
  };

  const lines: LineFacts[] = [];
  const wheres: { file: string; field?: string; first: number }[] = [];
  const inside: boolean[] = [];
  const areaFailures: ((fits: (x: number, y: number) => boolean) => InputError)[] = [];
  for (const src of site.lines) {
    const reader = await open(src.file, { name: shownPath(src.file), ...(dt !== undefined ? { sampleIntervalNs: dt } : {}) });
    let x: Float64Array;
    let y: Float64Array;
    let first: number;
    let facts: Pick<LineFacts, 'nSamples' | 'dtNs'>;
    try {
      ({ x, y } = await linePositions(site, src, reader));
      first = lineTraces(site, src, reader.nTraces).first;
      facts = { nSamples: reader.nSamples, dtNs: reader.dtNs };
    } finally {
      await reader.close();
    }
    const n = x.length;
    const where = positionsWhere(site, src);
    const whereOpt = where.field !== undefined ? { field: where.field } : {};
    const traces = (a: number, b: number): string => (a === b ? `trace ${first + a + 1}` : `traces ${first + a + 1}..${first + b + 1}`);

    let outside = false;
    if (area) {
      let out0 = -1;
      let out1 = -1;
      let count = 0;
      for (let t = 0; t < n; t++) {
        if (!inArea(x[t] as number, y[t] as number)) {
          if (out0 < 0) out0 = t;
          out1 = t;
          count++;
        }
      }
      if (count > 0) {
        outside = true;
        const [px, py] = [x[out0] as number, y[out0] as number];
        const [lon, lat] = pointToWgs84(site.crs, px, py);
        const at = Number.isFinite(lon) && Number.isFinite(lat) ? `lon ${fmt(lon, 3)}, lat ${fmt(lat, 3)}` : 'no longitude/latitude';
        // thrown once every line is read, so the cause can be judged against the lines that are inside
        areaFailures.push(
          (fits) =>
            new InputError(
              where.file,
              `expected positions inside the area of use of ${site.crs.code} (${areaText}, from PROJ, with a ${margin}° margin), found ${count} of ${n} traces outside (${traces(out0, out1)}; the first at (${fmt(px)}, ${fmt(py)}), ${at})${likelyCause(px, py, site.crs, fits)}`,
              whereOpt,
            ),
        );
      }
    }

    const s = steps(x, y, mpu);
    if (outside) {
      // its area error comes first
    } else if (s.median > maxMedianM) {
      const hint = s.median * 0.3048 <= maxMedianM && site.crs.units === 'm' ? '; feet read as metres?' : s.median / 10 <= maxMedianM ? '; a coordinate scalar applied wrongly?' : '';
      throw new InputError(
        where.file,
        `expected a median trace spacing of at most one wavelength in air at ${site.antenna.frequencyMHz} MHz (${fmt(maxMedianM, 3)} m; coarser sampling aliases every hyperbola flank steeper than 15 degrees), found a median of ${fmt(s.median, 3)} m over ${traces(0, n - 1)}${hint}`,
        whereOpt,
      );
    }
    else if (s.max > maxStepM) {
      throw new InputError(
        where.file,
        `expected consecutive traces at most ${maxStepM} m apart, found ${fmt(s.max, 2)} m between ${traces(s.at - 1, s.at)} (median spacing ${fmt(s.median, 3)} m): a GPS jump or a pause? split the line or fix its positions`,
        whereOpt,
      );
    }

    let minX = Infinity, minY = Infinity, maxX = -Infinity, maxY = -Infinity;
    const kept: number[] = [];
    let lx = NaN, ly = NaN;
    for (let t = 0; t < n; t++) {
      const px = x[t] as number;
      const py = y[t] as number;
      if (px < minX) minX = px;
      if (px > maxX) maxX = px;
      if (py < minY) minY = py;
      if (py > maxY) maxY = py;
      if (!(Math.hypot(px - lx, py - ly) < thin) || t === n - 1) {
        kept.push(px, py);
        lx = px;
        ly = py;
      }
    }
    lines.push({ id: src.id, file: shownPath(src.file), nTraces: n, ...facts, bbox: [minX, minY, maxX, maxY], stepM: s.median, thinned: Float64Array.from(kept) });
    wheres.push({ ...where, first });
    inside.push(!outside);
  }
  if (areaFailures.length > 0) {
    const box: [number, number, number, number] = [Infinity, Infinity, -Infinity, -Infinity];
    lines.forEach((l, i) => {
      if (!inside[i]) return;
      box[0] = Math.min(box[0], l.bbox[0]);
      box[1] = Math.min(box[1], l.bbox[1]);
      box[2] = Math.max(box[2], l.bbox[2]);
      box[3] = Math.max(box[3], l.bbox[3]);
    });
    const nearInside = (px: number, py: number): boolean => bboxGap([px, py, px, py], box) <= maxGap;
    // the cause that brings the traces near the lines inside the area, else one that brings them inside it
    const nearOrInside = (px: number, py: number): boolean => (box[0] <= box[2] ? nearInside(px, py) : inArea(px, py));
    const err = (areaFailures[0] as (fits: (x: number, y: number) => boolean) => InputError)(nearOrInside);
    throw /looks like/.test(err.detail) ? err : (areaFailures[0] as (fits: (x: number, y: number) => boolean) => InputError)(inArea);
  }

  // Parts of the survey: lines whose extents come within maxGap of each other (union-find).
  const parent = lines.map((_, i) => i);
  const root = (i: number): number => {
    while (parent[i] !== i) i = parent[i] = parent[parent[i] as number] as number;
    return i;
  };
  const order = lines.map((_, i) => i).sort((a, b) => (lines[a] as LineFacts).bbox[0] - (lines[b] as LineFacts).bbox[0]);
  for (let p = 0; p < order.length; p++) {
    const a = lines[order[p] as number] as LineFacts;
    for (let q = p + 1; q < order.length; q++) {
      const b = lines[order[q] as number] as LineFacts;
      if (b.bbox[0] - a.bbox[2] > maxGap) break;
      if (bboxGap(a.bbox, b.bbox) <= maxGap) parent[root(order[p] as number)] = root(order[q] as number);
    }
  }
  const weight = new Map<number, number>();
  lines.forEach((l, i) => weight.set(root(i), (weight.get(root(i)) ?? 0) + l.nTraces));
  let main = -1;
  for (const [r, w] of weight) if (main < 0 || w > (weight.get(main) as number)) main = r;
  const mainBox: [number, number, number, number] = [Infinity, Infinity, -Infinity, -Infinity];
  lines.forEach((l, i) => {
    if (root(i) !== main) return;
    mainBox[0] = Math.min(mainBox[0], l.bbox[0]);
    mainBox[1] = Math.min(mainBox[1], l.bbox[1]);
    mainBox[2] = Math.max(mainBox[2], l.bbox[2]);
    mainBox[3] = Math.max(mainBox[3], l.bbox[3]);
  });
  const nearMain = (x: number, y: number): boolean => bboxGap([x, y, x, y], mainBox) <= maxGap;
  const away = lines.map((_, i) => i).filter((i) => root(i) !== main);
  if (away.length > 0) {
    const l = lines[away[0] as number] as LineFacts;
    const w = wheres[away[0] as number] as { file: string; field?: string; first: number };
    const cx = l.thinned[0] as number;
    const cy = l.thinned[1] as number;
    const others = lines.length - away.length;
    throw new InputError(
      w.file,
      `expected line ${l.id} within ${km(maxGap * mpu)} of the rest of the survey (${others} line${others === 1 ? '' : 's'}), found traces ${w.first + 1}..${w.first + l.nTraces} ${km(bboxGap(l.bbox, mainBox) * mpu)} away (first at (${fmt(cx)}, ${fmt(cy)}))${likelyCause(cx, cy, site.crs, nearMain)}${away.length > 1 ? `; ${away.length - 1} more line${away.length > 2 ? 's' : ''} lie as far away` : ''}`,
      w.field !== undefined ? { field: w.field } : {},
    );
  }

  // The plan: features near the survey are kept; a plan with none near is in the wrong CRS or order.
  const warnings: string[] = [];
  let plan = site.plan;
  if (plan.length > 0) {
    const planName = shownPath(site.planFile ?? join(site.dir, 'plan.geojson'));
    const gaps = plan.map((f) => {
      let best = Infinity;
      for (const v of vertices(f)) best = Math.min(best, bboxGap([v[0], v[1], v[0], v[1]], mainBox));
      return best;
    });
    plan = plan.filter((_, i) => (gaps[i] as number) <= maxGap);
    if (plan.length === 0) {
      const nearest = Math.min(...gaps);
      throw new InputError(
        planName,
        // the wording of checkPlanNearSurvey (lamina info)
        `expected plan features near the survey lines (within ${maxGap * mpu} m), found the nearest ${Number.isFinite(nearest) ? `${((nearest * mpu) / 1000).toFixed(1)} km` : 'an unmeasurable distance'} away; is the plan in WGS84 lon/lat order (RFC 7946)?`,
      );
    }
    const far = site.plan.filter((_, i) => (gaps[i] as number) > maxGap);
    if (far.length > 0) {
      const names = far.slice(0, 5).map((f) => f.id).join(', ') + (far.length > 5 ? ` and ${far.length - 5} more` : '');
      warnings.push(`${planName}: plan feature${far.length === 1 ? '' : 's'} ${names} lie${far.length === 1 ? 's' : ''} more than ${km(maxGap * mpu)} from the survey lines; left out of the screening`);
    }
  }
  const bbox: [number, number, number, number] = [Infinity, Infinity, -Infinity, -Infinity];
  for (const l of lines) {
    bbox[0] = Math.min(bbox[0], l.bbox[0]);
    bbox[1] = Math.min(bbox[1], l.bbox[1]);
    bbox[2] = Math.max(bbox[2], l.bbox[2]);
    bbox[3] = Math.max(bbox[3], l.bbox[3]);
  }
  return { lines, bbox, plan, warnings };
}
