import { toWgs84 } from './crs';
import { shownPath, summarizeLine, type ReadLineOptions } from './load';
import { checkPlanNearSurvey, PLAN_KINDS } from './plan';
import type { PlanKind, Site } from './types';

/** One line in a site summary (what `lamina info` prints). */
export interface LineInfo {
  id: string;
  file: string;
  positionSource: 'headers' | 'startEnd' | 'csv';
  traces: number;
  samples: number;
  dtNs: number;
  /** Record length, ns (`samples * dtNs`). */
  recordNs: number;
  lengthM: number;
  traceSpacingM: number;
  azimuthDeg: number;
  /** First and last trace positions, CRS units. */
  start: [number, number];
  end: [number, number];
}

export interface SiteSummary {
  name: string;
  dir: string;
  crs: { input: string; code?: string; proj4: string; units: string; metresPerUnit: number };
  antenna: Site['antenna'];
  sampleIntervalNs?: number;
  lines: LineInfo[];
  totalTraces: number;
  totalLengthM: number;
  /** Extent of all trace positions: [minX, minY, maxX, maxY] in CRS units and [minLon, minLat, maxLon, maxLat]. */
  extent: { crs: [number, number, number, number]; wgs84: [number, number, number, number] };
  plan: { features: number; byKind: Record<PlanKind, number> };
}

export interface SummarizeOptions extends ReadLineOptions {
  /** Called after each line, for a progress bar. */
  onLine?: (done: number, total: number) => void;
}

/**
 * Summarise a loaded site from trace headers and positions only (no samples are read): every line is
 * opened, so a bad line file fails here with its own message.
 */
export async function summarizeSite(site: Site, options: SummarizeOptions = {}): Promise<SiteSummary> {
  const lines: LineInfo[] = [];
  const crsBox: [number, number, number, number] = [Infinity, Infinity, -Infinity, -Infinity];
  const geoBox: [number, number, number, number] = [Infinity, Infinity, -Infinity, -Infinity];
  let totalTraces = 0;
  let totalLengthM = 0;
  for (const src of site.lines) {
    const s = await summarizeLine(site, src, options);
    const g = s.geometry;
    const n = s.nTraces;
    lines.push({
      id: s.id,
      file: s.file,
      positionSource: s.positionSource,
      traces: n,
      samples: s.nSamples,
      dtNs: s.dtNs,
      recordNs: s.nSamples * s.dtNs,
      lengthM: g.lengthM,
      traceSpacingM: g.traceSpacingM,
      azimuthDeg: g.azimuthDeg,
      start: [s.x[0] as number, s.y[0] as number],
      end: [s.x[n - 1] as number, s.y[n - 1] as number],
    });
    totalTraces += n;
    totalLengthM += g.lengthM;
    crsBox[0] = Math.min(crsBox[0], g.bbox[0]);
    crsBox[1] = Math.min(crsBox[1], g.bbox[1]);
    crsBox[2] = Math.max(crsBox[2], g.bbox[2]);
    crsBox[3] = Math.max(crsBox[3], g.bbox[3]);
    // Every position, not the box corners: a projected box is not a lon/lat box.
    const { lon, lat } = toWgs84(site.crs, s.x, s.y);
    for (let i = 0; i < n; i++) {
      geoBox[0] = Math.min(geoBox[0], lon[i] as number);
      geoBox[1] = Math.min(geoBox[1], lat[i] as number);
      geoBox[2] = Math.max(geoBox[2], lon[i] as number);
      geoBox[3] = Math.max(geoBox[3], lat[i] as number);
    }
    options.onLine?.(lines.length, site.lines.length);
  }
  if (site.planFile) checkPlanNearSurvey(site.plan, crsBox, site.crs.metresPerUnit, shownPath(site.planFile));
  const byKind = Object.fromEntries(PLAN_KINDS.map((k) => [k, 0])) as Record<PlanKind, number>;
  for (const f of site.plan) byKind[f.kind]++;
  const { input, code, proj4, units, metresPerUnit } = site.crs;
  return {
    name: site.name,
    dir: site.dir,
    crs: { input, ...(code !== undefined ? { code } : {}), proj4, units, metresPerUnit },
    antenna: site.antenna,
    ...(site.sampleIntervalNs !== undefined ? { sampleIntervalNs: site.sampleIntervalNs } : {}),
    lines,
    totalTraces,
    totalLengthM,
    extent: { crs: crsBox, wgs84: geoBox },
    plan: { features: site.plan.length, byKind },
  };
}
