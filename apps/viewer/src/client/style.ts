import type { StyleSpecification, LayerSpecification, SourceSpecification, ExpressionSpecification } from 'maplibre-gl';

/** Colours of our own for the site layers. */
export const ORIGIN_COLOURS = { subsurface: '#00a6a6', 'above-ground': '#d01c8b' } as const;
export const PLAN_COLOURS = { building: '#8d99ae', wall: '#3d405b', fence: '#6c757d', post: '#3d405b', tree: '#2d6a4f', column: '#5f0f40', overhead: '#e76f51', other: '#adb5bd', lines: '#1d3557', forecast: '#d01c8b' };

/** Layer groups the user toggles, each a set of maplibre layer ids (the slice raster is deck.gl). */
export const LAYER_GROUPS: { id: string; label: string; layers: string[] }[] = [
  { id: 'slice', label: 'Depth slice', layers: [] },
  { id: 'lines', label: 'Survey lines', layers: ['survey-lines', 'survey-lines-hit', 'survey-line-open'] },
  { id: 'buildings', label: 'Buildings', layers: ['plan-buildings'] },
  { id: 'walls', label: 'Walls', layers: ['plan-walls'] },
  { id: 'fences', label: 'Fences', layers: ['plan-fences'] },
  { id: 'points', label: 'Posts, trees, columns', layers: ['plan-points'] },
  { id: 'overhead', label: 'Overhead (cables, beams)', layers: ['plan-overhead-line', 'plan-overhead-point'] },
  { id: 'other', label: 'Other plan features', layers: ['plan-other-fill', 'plan-other-line'] },
  { id: 'anomalies', label: 'Anomalies', layers: ['anomalies-fill', 'anomalies-line', 'anomalies-point'] },
  { id: 'forecast', label: 'Air-wave forecast (this depth)', layers: ['forecast-line', 'forecast-point'] },
  { id: 'targets', label: 'Accepted targets', layers: ['targets-line', 'targets-point'] },
  { id: 'candidates', label: 'Candidate targets (not reviewed)', layers: ['candidates-line', 'candidates-point'] },
];

const kind = (k: string | string[]): ExpressionSpecification =>
  Array.isArray(k) ? ['in', ['get', 'kind'], ['literal', k]] : ['==', ['get', 'kind'], k];
const isLine: ExpressionSpecification = ['in', ['geometry-type'], ['literal', ['LineString', 'MultiLineString']]];
const isPoly: ExpressionSpecification = ['in', ['geometry-type'], ['literal', ['Polygon', 'MultiPolygon']]];
const isPoint: ExpressionSpecification = ['in', ['geometry-type'], ['literal', ['Point', 'MultiPoint']]];
/** The anomaly selected in the panel or the queue (maplibre feature state). */
const selected: ExpressionSpecification = ['boolean', ['feature-state', 'selected'], false];
export const SELECTED_COLOUR = '#ffb000';
/** A target accepted in review (targets.geojson `decision`); every other target is a candidate. */
const accepted: ExpressionSpecification = ['==', ['get', 'decision'], 'accepted'];

/** APWA colour of `utilityType` as a maplibre expression. */
export function utilityColour(apwa: Record<string, { hex: string }>): ExpressionSpecification {
  const pairs = Object.entries(apwa).flatMap(([k, v]) => [k, v.hex]);
  return ['match', ['coalesce', ['get', 'utilityType'], 'unknown'], ...pairs, apwa.unknown?.hex ?? '#9e9e9e'] as unknown as ExpressionSpecification;
}

/** Opacity of anomalies: strong when their depth range meets the current slice, scaled by confidence. */
export function anomalyOpacity(topM: number, bottomM: number, base: number): ExpressionSpecification {
  const conf: ExpressionSpecification = ['max', 0.15, ['min', 1, ['to-number', ['coalesce', ['get', 'confidence'], 0.5]]]];
  const inDepth: ExpressionSpecification = ['all', ['<=', ['to-number', ['get', 'depthTopM']], bottomM], ['>=', ['to-number', ['get', 'depthBottomM']], topM]];
  return ['case', ['boolean', ['feature-state', 'selected'], false], 1, inDepth, ['*', base, conf], base * 0.15];
}

/** Forecast loci of the current slice: by `slice`/`band`/`sliceIndex`, else by depth overlap. */
export function forecastFilter(index: number, band: number, topM: number, bottomM: number): ExpressionSpecification {
  return [
    'case',
    ['has', 'slice'], ['==', ['to-number', ['get', 'slice']], index],
    ['has', 'sliceIndex'], ['==', ['to-number', ['get', 'sliceIndex']], index],
    ['has', 'band'], ['==', ['to-number', ['get', 'band']], band],
    ['has', 'topM'], ['all', ['<', ['to-number', ['get', 'topM']], bottomM], ['>', ['to-number', ['get', 'bottomM']], topM]],
    ['has', 'depthM'], ['all', ['>=', ['to-number', ['get', 'depthM']], topM], ['<', ['to-number', ['get', 'depthM']], bottomM]],
    true,
  ];
}

export function siteSources(): Record<string, SourceSpecification> {
  const src = (): SourceSpecification => ({ type: 'geojson', data: { type: 'FeatureCollection', features: [] } });
  return { plan: src(), lines: src(), anomalies: src(), forecast: src(), targets: src(), cursor: src() };
}

export function siteLayers(apwa: Record<string, { hex: string }>): LayerSpecification[] {
  const originColour: ExpressionSpecification = ['match', ['coalesce', ['get', 'origin'], 'subsurface'], 'above-ground', ORIGIN_COLOURS['above-ground'], ORIGIN_COLOURS.subsurface];
  return [
    { id: 'plan-other-fill', type: 'fill', source: 'plan', filter: ['all', kind('other'), isPoly], paint: { 'fill-color': PLAN_COLOURS.other, 'fill-opacity': 0.35 } },
    { id: 'plan-other-line', type: 'line', source: 'plan', filter: ['all', kind('other'), isLine], paint: { 'line-color': PLAN_COLOURS.other, 'line-width': 2 } },
    { id: 'survey-lines', type: 'line', source: 'lines', paint: { 'line-color': PLAN_COLOURS.lines, 'line-width': 1, 'line-opacity': 0.7 } },
    // the line open in the line browser, and a wide invisible copy of the lines to click on
    { id: 'survey-line-open', type: 'line', source: 'lines', filter: ['==', ['get', 'id'], ''], paint: { 'line-color': '#f4a261', 'line-width': 4 } },
    { id: 'survey-lines-hit', type: 'line', source: 'lines', paint: { 'line-color': '#000', 'line-width': 10, 'line-opacity': 0 } },
    { id: 'anomalies-fill', type: 'fill', source: 'anomalies', filter: isPoly, paint: { 'fill-color': originColour, 'fill-opacity': anomalyOpacity(-1e9, 1e9, 0.3) } },
    { id: 'anomalies-line', type: 'line', source: 'anomalies', filter: ['any', isPoly, isLine], paint: { 'line-color': ['case', selected, SELECTED_COLOUR, originColour], 'line-width': ['case', selected, 4, 2], 'line-opacity': anomalyOpacity(-1e9, 1e9, 1) } },
    { id: 'anomalies-point', type: 'circle', source: 'anomalies', filter: isPoint, paint: { 'circle-color': originColour, 'circle-radius': 7, 'circle-opacity': anomalyOpacity(-1e9, 1e9, 1), 'circle-stroke-color': ['case', selected, SELECTED_COLOUR, '#000'], 'circle-stroke-width': ['case', selected, 3, 1] } },
    { id: 'forecast-line', type: 'line', source: 'forecast', filter: isLine, paint: { 'line-color': PLAN_COLOURS.forecast, 'line-width': 2, 'line-dasharray': [2, 2] } },
    { id: 'forecast-point', type: 'circle', source: 'forecast', filter: isPoint, paint: { 'circle-color': 'rgba(0,0,0,0)', 'circle-radius': 6, 'circle-stroke-color': PLAN_COLOURS.forecast, 'circle-stroke-width': 2 } },
    // targets.geojson: accepted in review (solid) apart from candidates nobody reviewed (dashed, thinner)
    { id: 'targets-line', type: 'line', source: 'targets', filter: ['all', accepted, ['any', isLine, isPoly]], paint: { 'line-color': utilityColour(apwa), 'line-width': 5 } },
    { id: 'targets-point', type: 'circle', source: 'targets', filter: ['all', accepted, isPoint], paint: { 'circle-color': utilityColour(apwa), 'circle-radius': 6, 'circle-stroke-color': '#000', 'circle-stroke-width': 1.5 } },
    { id: 'candidates-line', type: 'line', source: 'targets', filter: ['all', ['!', accepted], ['any', isLine, isPoly]], paint: { 'line-color': utilityColour(apwa), 'line-width': 3, 'line-dasharray': [2, 1.5] } },
    { id: 'candidates-point', type: 'circle', source: 'targets', filter: ['all', ['!', accepted], isPoint], paint: { 'circle-color': 'rgba(0,0,0,0)', 'circle-radius': 6, 'circle-stroke-color': utilityColour(apwa), 'circle-stroke-width': 2 } },
    { id: 'plan-walls', type: 'line', source: 'plan', filter: kind('wall'), paint: { 'line-color': PLAN_COLOURS.wall, 'line-width': 4 } },
    { id: 'plan-fences', type: 'line', source: 'plan', filter: kind('fence'), paint: { 'line-color': PLAN_COLOURS.fence, 'line-width': 2, 'line-dasharray': [3, 1.5] } },
    { id: 'plan-overhead-line', type: 'line', source: 'plan', filter: ['all', kind('overhead'), isLine], paint: { 'line-color': PLAN_COLOURS.overhead, 'line-width': 2, 'line-dasharray': [0.5, 1.5] } },
    { id: 'plan-overhead-point', type: 'circle', source: 'plan', filter: ['all', kind('overhead'), isPoint], paint: { 'circle-color': 'rgba(0,0,0,0)', 'circle-radius': 5, 'circle-stroke-color': PLAN_COLOURS.overhead, 'circle-stroke-width': 2 } },
    {
      id: 'plan-points',
      type: 'circle',
      source: 'plan',
      filter: kind(['post', 'tree', 'column']),
      paint: { 'circle-color': ['match', ['get', 'kind'], 'tree', PLAN_COLOURS.tree, 'column', PLAN_COLOURS.column, PLAN_COLOURS.post], 'circle-radius': ['match', ['get', 'kind'], 'tree', 7, 4], 'circle-stroke-color': '#fff', 'circle-stroke-width': 1 },
    },
    {
      id: 'plan-buildings',
      type: 'fill-extrusion',
      source: 'plan',
      filter: kind('building'),
      // flat in 2D (a plan), extruded by `buildingHeight` in 3D
      paint: { 'fill-extrusion-color': PLAN_COLOURS.building, 'fill-extrusion-height': 0, 'fill-extrusion-opacity': 0.85 },
    },
    // where the line browser's cursor is on the ground
    { id: 'cursor-point', type: 'circle', source: 'cursor', paint: { 'circle-color': '#f4a261', 'circle-radius': 6, 'circle-stroke-color': '#000', 'circle-stroke-width': 2 } },
  ];
}

/** Building extrusion: their height in 3D, none in 2D. */
export function buildingHeight(mode: '2d' | '3d'): ExpressionSpecification | number {
  return mode === '3d' ? ['to-number', ['coalesce', ['get', 'heightM'], 3]] : 0;
}

/** The offline style: a plain background and the site's own layers; no glyphs, sprites or tiles. */
export function offlineStyle(apwa: Record<string, { hex: string }>): StyleSpecification {
  return {
    version: 8,
    sources: siteSources(),
    layers: [{ id: 'background', type: 'background', paint: { 'background-color': '#eef0ea' } }, ...siteLayers(apwa)],
  };
}

/** Our sources and layers laid over a basemap style (first of ours above every basemap layer). */
export function overBasemap(base: StyleSpecification, apwa: Record<string, { hex: string }>): StyleSpecification {
  return { ...base, sources: { ...base.sources, ...siteSources() }, layers: [...base.layers, ...siteLayers(apwa)] };
}

/** The deck.gl slice layer goes just below the first of these present. */
export const SLICE_BEFORE_ID = 'survey-lines';
