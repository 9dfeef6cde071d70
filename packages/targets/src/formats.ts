import type { TargetFields } from '@lamina/contracts';
import type { Crs } from '@lamina/site';
import { FOOT_M, pointAlong, type Geometry, type Target } from './targets';
import type { SurveyMeta } from './folder';

/** Context every format writes beside the targets. */
export interface ExportContext {
  siteName: string;
  crs: Crs;
  /** e.g. "GPR, 400 MHz, depth slices". */
  method: string;
  surveyDate: string | null;
  exportDate: string;
  /** The rest of site.json's `survey` block, when given. */
  survey?: SurveyMeta;
}

const ft = (m: number | null) => (m === null ? null : Math.round((m / FOOT_M) * 1e4) / 1e4);

/** The fixed property set of targets.geojson and the GeoPackage attribute table, with SQLite types. */
export const TARGET_FIELDS: readonly (readonly [keyof TargetFields, 'TEXT' | 'REAL'])[] = [
  ['id', 'TEXT'], ['depthTopM', 'REAL'], ['depthBottomM', 'REAL'], ['origin', 'TEXT'], ['class', 'TEXT'], ['pAboveGround', 'REAL'], ['strengthDb', 'REAL'],
  ['depthTopFt', 'REAL'], ['depthBottomFt', 'REAL'], ['depthUncertaintyM', 'REAL'], ['depthUncertaintyFt', 'REAL'],
  ['depthBottomUncertaintyM', 'REAL'], ['depthBottomUncertaintyFt', 'REAL'], ['kind', 'TEXT'], ['utilityType', 'TEXT'],
  ['apwaColour', 'TEXT'], ['apwaColourName', 'TEXT'], ['label', 'TEXT'], ['lengthM', 'REAL'], ['qualityLevel', 'TEXT'],
  ['method', 'TEXT'], ['surveyDate', 'TEXT'], ['operator', 'TEXT'], ['equipment', 'TEXT'], ['positioning', 'TEXT'], ['positioningAccuracyM', 'REAL'], ['exportDate', 'TEXT'], ['decision', 'TEXT'], ['note', 'TEXT'],
  ['reviewedAt', 'TEXT'], ['screenedOrigin', 'TEXT'], ['site', 'TEXT'],
];

/**
 * CI/ASCE 38-22 quality level of a target: "B" (designated by geophysical methods) only once a person
 * accepted it in review, and then still to be confirmed by the responsible professional; null for a
 * candidate nobody reviewed.
 */
export const qualityLevel = (t: Target): 'B' | null => (t.decision === 'accepted' ? 'B' : null);

/** Radar system and antenna serial as one text ("GX-1, antenna s/n 123"), null when neither is given. */
export function equipmentText(s: SurveyMeta | undefined): string | null {
  const parts = [s?.equipment, s?.antennaSerial ? `antenna s/n ${s.antennaSerial}` : undefined].filter((x): x is string => !!x);
  return parts.length ? parts.join(', ') : null;
}

/** The properties of one target, keyed as TARGET_FIELDS. */
export function targetProperties(t: Target, ctx: ExportContext): TargetFields {
  return {
    id: t.id,
    depthTopM: t.depthTopM,
    depthBottomM: t.depthBottomM,
    origin: t.origin,
    class: t.class,
    pAboveGround: t.pAboveGround,
    strengthDb: t.strengthDb,
    depthTopFt: ft(t.depthTopM),
    depthBottomFt: ft(t.depthBottomM),
    depthUncertaintyM: t.depthUncertaintyM,
    depthUncertaintyFt: ft(t.depthUncertaintyM),
    depthBottomUncertaintyM: t.depthBottomUncertaintyM,
    depthBottomUncertaintyFt: ft(t.depthBottomUncertaintyM),
    kind: t.kind,
    utilityType: t.utilityType,
    apwaColour: t.apwaColour,
    apwaColourName: t.apwaColourName,
    label: t.label,
    lengthM: t.lengthM,
    qualityLevel: qualityLevel(t),
    method: ctx.method,
    surveyDate: ctx.surveyDate,
    operator: ctx.survey?.operator ?? null,
    equipment: equipmentText(ctx.survey),
    positioning: ctx.survey?.positioning?.method ?? null,
    positioningAccuracyM: ctx.survey?.positioning?.accuracyM ?? null,
    exportDate: ctx.exportDate,
    decision: t.decision,
    note: t.note,
    reviewedAt: t.reviewedAt,
    screenedOrigin: t.screenedOrigin,
    site: ctx.siteName,
  };
}

// ---------- GeoJSON (RFC 7946) ----------
// The file is JSON.stringify(collection, null, 1) + '\n', written in parts: a feature sits two levels deep,
// so its own indented text gets two more spaces per line (JSON escapes every newline inside strings).

/** Start of targets.geojson, up to the features. */
export const GEOJSON_HEAD = '{\n "type": "FeatureCollection",\n "features": [';

/** The text of feature `index` in targets.geojson (with its leading comma after the first). */
export function geoJsonFeature(t: Target, ctx: ExportContext, index: number): string {
  const f = {
    type: 'Feature',
    id: t.id,
    geometry: t.wgs84,
    properties: { ...targetProperties(t, ctx), centroid: t.centroidLonLat, ...(t.outlineWgs84 ? { outline: t.outlineWgs84 } : {}), ...(t.vertexDepthsM ? { vertexDepthsM: t.vertexDepthsM } : {}) },
  };
  return `${index > 0 ? ',' : ''}\n  ${JSON.stringify(f, null, 1).replace(/\n/g, '\n  ')}`;
}

/** End of targets.geojson after `count` features. */
export const geoJsonTail = (count: number): string => `${count > 0 ? '\n ' : ''}]\n}\n`;

/** RFC 7946 FeatureCollection (WGS84 lon/lat, no crs member). */
export function targetsGeoJson(targets: Target[], ctx: ExportContext): string {
  return GEOJSON_HEAD + targets.map((t, i) => geoJsonFeature(t, ctx, i)).join('') + geoJsonTail(targets.length);
}

// ---------- WKT geometry (site CRS) ----------
const c2 = (p: number[]) => `${fmt(p[0]!)} ${fmt(p[1]!)}`;
const fmt = (v: number) => String(Math.round(v * 1e6) / 1e6);
export function geometryWkt(g: Geometry): string {
  switch (g.type) {
    case 'Point':
      return `POINT (${c2(g.coordinates)})`;
    case 'LineString':
      return `LINESTRING (${g.coordinates.map(c2).join(', ')})`;
    case 'Polygon':
      return `POLYGON (${g.coordinates.map((r) => `(${r.map(c2).join(', ')})`).join(', ')})`;
    case 'MultiPolygon':
      return `MULTIPOLYGON (${g.coordinates.map((pl) => `(${pl.map((r) => `(${r.map(c2).join(', ')})`).join(', ')})`).join(', ')})`;
  }
}

// ---------- CSV (RFC 4180) ----------
export const CSV_COLUMNS = [
  'id', 'kind', 'utility_type', 'apwa_colour', 'depth_top_m', 'depth_bottom_m', 'depth_top_ft', 'depth_bottom_ft',
  'depth_uncertainty_m', 'depth_uncertainty_ft', 'class', 'p_above_ground', 'strength_db', 'x', 'y', 'lon', 'lat', 'length_m', 'quality_level',
  'decision', 'note', 'survey_date', 'operator', 'positioning_accuracy_m', 'crs', 'wkt',
] as const;

const csvCell = (v: string | number | null): string => {
  if (v === null) return '';
  const s = String(v);
  return /[",\r\n]/.test(s) ? `"${s.replace(/"/g, '""')}"` : s;
};

/** The header line of targets.csv (CRLF-terminated, as every row). */
export const csvHead = (): string => CSV_COLUMNS.join(',') + '\r\n';

/** One row of targets.csv. */
export function csvRow(t: Target, ctx: ExportContext): string {
  const crsName = ctx.crs.code ?? ctx.crs.proj4;
  return (
    [
      t.id, t.kind, t.utilityType, t.apwaColour, t.depthTopM, t.depthBottomM, ft(t.depthTopM), ft(t.depthBottomM),
      t.depthUncertaintyM, ft(t.depthUncertaintyM), t.class, t.pAboveGround, t.strengthDb, fmt(t.centroidXY[0]), fmt(t.centroidXY[1]),
      round8(t.centroidLonLat[0]), round8(t.centroidLonLat[1]), t.lengthM, qualityLevel(t), t.decision, t.note, ctx.surveyDate, ctx.survey?.operator ?? null, ctx.survey?.positioning?.accuracyM ?? null, crsName, geometryWkt(t.site),
    ].map(csvCell).join(',') + '\r\n'
  );
}

export function targetsCsv(targets: Target[], ctx: ExportContext): string {
  return csvHead() + targets.map((t) => csvRow(t, ctx)).join('');
}
const round8 = (v: number) => Math.round(v * 1e8) / 1e8;

// ---------- DXF (R12 ASCII) ----------
/** AutoCAD colour index for each APWA colour (ACI 1 red, 2 yellow, 3 green, 5 blue, 6 magenta, 7 white, 8 grey, 30 orange; 221 a pink). */
const ACI: Record<string, number> = { red: 1, orange: 30, yellow: 2, blue: 5, purple: 6, green: 3, pink: 221, white: 7, grey: 8 };

export function dxfLayer(t: Target): string {
  const type = (t.utilityType ?? 'unknown').toUpperCase().replace(/[^A-Z0-9]+/g, '_');
  return t.decision === 'accepted' ? `LAMINA_${type}` : `LAMINA_CANDIDATE_${type}`;
}

/** AutoCAD colour index of a target's layer (a function of the utility type, as the layer name is). */
export const dxfColour = (t: Target): number => ACI[t.apwaColourName ?? 'grey'] ?? 8;

/** DXF group lines (code, value), each CRLF-terminated. */
function dxfGroups(emit: (g: (code: number, value: string | number) => void) => void): string {
  const out: string[] = [];
  emit((code, value) => out.push(String(code), typeof value === 'number' ? num(value) : value));
  return out.join('\r\n') + '\r\n';
}

/** HEADER and TABLES sections (the LAYER table: name to colour, in order of first use) and the ENTITIES start. */
export function dxfHead(layers: ReadonlyMap<string, number>, ctx: ExportContext): string {
  return dxfGroups((g) => {
    // 999: DXF comment groups (readers skip them): what the drawing is, and the survey it comes from
    for (const c of dxfComments(ctx)) g(999, c);
    g(0, 'SECTION'); g(2, 'HEADER'); g(9, '$ACADVER'); g(1, 'AC1009');
    g(9, '$INSUNITS'); g(70, ctx.crs.units === 'm' ? 6 : 2);
    g(0, 'ENDSEC');
    g(0, 'SECTION'); g(2, 'TABLES'); g(0, 'TABLE'); g(2, 'LAYER'); g(70, layers.size);
    for (const [name, colour] of layers) {
      g(0, 'LAYER'); g(2, name); g(70, 0); g(62, colour); g(6, 'CONTINUOUS');
    }
    g(0, 'ENDTAB'); g(0, 'ENDSEC');
    g(0, 'SECTION'); g(2, 'ENTITIES');
  });
}

/** The comment lines at the top of targets.dxf: site, method, survey metadata, export time. */
export function dxfComments(ctx: ExportContext): string[] {
  const s = ctx.survey;
  const oneLine = (v: string) => v.replace(/[\r\n]+/g, ' ');
  return [
    `Lamina targets of site ${ctx.siteName}; ${ctx.method}; exported ${ctx.exportDate}`,
    ...(ctx.surveyDate ? [`surveyed ${ctx.surveyDate}${s?.endDate ? ` to ${s.endDate}` : ''}${s?.operator ? ` by ${s.operator}` : ''}${s?.client ? ` for ${s.client}` : ''}`] : []),
    ...(equipmentText(s) ? [`equipment: ${equipmentText(s)}`] : []),
    ...(s?.positioning?.method ? [`positioning: ${s.positioning.method}${s.positioning.accuracyM !== undefined ? `, stated accuracy ${s.positioning.accuracyM} m` : ''}`] : []),
    'Candidates (LAMINA_CANDIDATE_*) are not reviewed; radar finds are not a locate.',
  ].map(oneLine);
}

/** The entities of one target: its POLYLINE or POINT and its TEXT label. */
export function dxfEntities(t: Target, ctx: ExportContext): string {
  const mpu = ctx.crs.metresPerUnit;
  const textH = 0.25 / mpu;
  const layer = dxfLayer(t);
  const colour = dxfColour(t);
  const z = -t.depthTopM / mpu;
  return dxfGroups((g) => {
    if (t.kind === 'linear' && t.site.type === 'LineString') {
      g(0, 'POLYLINE'); g(8, layer); g(62, colour); g(66, 1); g(10, 0); g(20, 0); g(30, z); g(70, 8);
      t.site.coordinates.forEach((p, i) => {
        const zi = -(t.vertexDepthsM?.[i] ?? t.depthTopM) / mpu;
        g(0, 'VERTEX'); g(8, layer); g(10, p[0]!); g(20, p[1]!); g(30, zi); g(70, 32);
      });
      g(0, 'SEQEND'); g(8, layer);
    } else {
      g(0, 'POINT'); g(8, layer); g(62, colour); g(10, t.centroidXY[0]); g(20, t.centroidXY[1]); g(30, z);
    }
    const at = t.kind === 'linear' && t.site.type === 'LineString' ? pointAlong(t.site.coordinates, 0.5) : t.centroidXY;
    const label = `${t.id} ${t.utilityType ?? 'unknown'} top ${t.depthTopM.toFixed(2)} m (${(t.depthTopM / FOOT_M).toFixed(2)} ft)${t.depthUncertaintyM !== null ? ` +-${t.depthUncertaintyM.toFixed(2)} m` : ''}`;
    g(0, 'TEXT'); g(8, layer); g(62, colour); g(10, at[0] + textH / 2); g(20, at[1] + textH / 2); g(30, z); g(40, textH); g(1, label);
  });
}

/** End of the ENTITIES section and of the file. */
export const dxfTail = (): string => dxfGroups((g) => {
  g(0, 'ENDSEC'); g(0, 'EOF');
});

/** Adds a target's layer to `layers` (name to colour, in order of first use). */
export function addDxfLayer(layers: Map<string, number>, t: Target): void {
  const name = dxfLayer(t);
  if (!layers.has(name)) layers.set(name, dxfColour(t));
}

/**
 * R12 DXF in the site CRS: one layer per utility type, a 3D POLYLINE (VERTEX ... SEQEND) along each
 * linear target's centreline, a POINT at each compact target's centroid, and a TEXT label with the depth.
 * Z is the negative depth of the top (the ground surface is Z = 0), in the site CRS's unit; polyline
 * vertices carry their own depth (`Target.vertexDepthsM`), so a sloping pipe slopes.
 */
export function targetsDxf(targets: Target[], ctx: ExportContext): string {
  const layers = new Map<string, number>();
  for (const t of targets) addDxfLayer(layers, t);
  return dxfHead(layers, ctx) + targets.map((t) => dxfEntities(t, ctx)).join('') + dxfTail();
}

const num = (v: number) => {
  const s = Number.isInteger(v) ? v.toFixed(1) : String(Math.round(v * 1e6) / 1e6);
  return s === '-0.0' ? '0.0' : s;
};
