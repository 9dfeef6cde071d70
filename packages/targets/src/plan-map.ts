/**
 * The plan-view map of report.html: an SVG drawn in the site CRS (x east, y north, in the CRS's plan
 * units) with the survey lines, the site plan, targets (accepted solid in their APWA colour, candidates
 * dashed), anomalies flagged above-ground, a scale bar, a north arrow (true north: grid convergence
 * included), grid ticks with coordinates and a frame. One function, no I/O: the report gathers the
 * geometry as the targets stream past and calls `planMapSvg` once per depth range.
 */
import { esc } from './text';

export type Ring = number[][];

/** A drawable shape in site-CRS coordinates. */
export type Shape = { type: 'point'; at: number[] } | { type: 'line'; path: number[][] } | { type: 'area'; rings: Ring[] };

export interface MapTarget {
  id: string;
  shape: Shape;
  /** Stroke colour (APWA hex of the utility type, or a neutral colour when the type is unknown). */
  colour: string;
  decision: 'accepted' | 'candidate';
  depthTopM: number;
  depthBottomM: number;
}

export interface MapFlagged {
  id: string;
  shape: Shape;
  depthTopM: number;
  depthBottomM: number;
}

export interface MapPlanFeature {
  id: string;
  kind: string;
  shape: Shape;
}

export interface MapLayers {
  /** Survey lines as polylines (site CRS). */
  lines: number[][][];
  plan: MapPlanFeature[];
  targets: MapTarget[];
  flagged: MapFlagged[];
}

export interface MapFrame {
  /** [minX, minY, maxX, maxY] in site-CRS plan units: what the map shows. */
  bbox: [number, number, number, number];
  /** Metres per plan unit of the CRS. */
  metresPerUnit: number;
  /** Name of the plan unit, as printed on the scale bar and the ticks ("m", "US survey ft", "ft"). */
  unitName: string;
  /** Bearing of true north from grid north at the site, degrees clockwise (grid convergence, sign included). */
  northDeg: number;
}

export interface PlanMapOptions {
  /** Width of the drawing in SVG units (printed as mm by the report's CSS). @default 180 */
  widthMm?: number;
  /** Title above the map. @default '' */
  title?: string;
}

/** Neutral stroke for targets whose utility type is not known (not an APWA colour). */
export const UNTYPED_COLOUR = '#222222';

const MARGIN = { left: 14, right: 4, top: 4, bottom: 14 };

const r2 = (v: number) => Math.round(v * 100) / 100;

/** 1, 2 or 5 times a power of ten, the largest not above x. */
export function niceStep(x: number): number {
  if (!(x > 0) || !Number.isFinite(x)) return 1;
  const p = 10 ** Math.floor(Math.log10(x));
  const m = x / p;
  return (m >= 5 ? 5 : m >= 2 ? 2 : 1) * p;
}

/** Whether a depth range [top, bottom] overlaps the map's range (null: every depth). */
export const inRange = (top: number, bottom: number, range: [number, number] | null): boolean => range === null || (bottom >= range[0] && top <= range[1]);

/**
 * The SVG of one plan map. Map units: one SVG unit = 1 mm on paper at `widthMm`; the CRS-to-paper scale
 * is written on the root element as `data-mm-per-unit`, and the scale bar carries `data-length` (plan
 * units) so a reader (or a test) can check the bar against the CRS distance it claims. Each target is one
 * element of class `target` with `data-id` and `data-decision`; each flagged anomaly one of class `flagged`.
 */
export function planMapSvg(frame: MapFrame, layers: MapLayers, range: [number, number] | null, options: PlanMapOptions = {}): string {
  const widthMm = options.widthMm ?? 180;
  const [x0, y0, x1, y1] = frame.bbox;
  const spanX = Math.max(x1 - x0, 1e-9);
  const spanY = Math.max(y1 - y0, 1e-9);
  const plotW = widthMm - MARGIN.left - MARGIN.right;
  // Tall sites: cap the height at 1.3 x the width (fits an A4 or letter page with its caption).
  const scale = Math.min(plotW / spanX, (1.3 * plotW) / spanY);
  const plotH = spanY * scale;
  const w = plotW + MARGIN.left + MARGIN.right;
  const h = plotH + MARGIN.top + MARGIN.bottom;
  const px = (x: number) => r2(MARGIN.left + (x - x0) * scale);
  const py = (y: number) => r2(MARGIN.top + (y1 - y) * scale);
  const pts = (path: number[][]) => path.map((p) => `${px(p[0]!)},${py(p[1]!)}`).join(' ');
  const d = (rings: Ring[]) => rings.map((r) => `M${pts(r).replace(/ /g, 'L')}Z`).join('');

  const shapeSvg = (s: Shape, attrs: string, pointRadius = 1.1): string => {
    switch (s.type) {
      case 'point':
        return `<circle cx="${px(s.at[0]!)}" cy="${py(s.at[1]!)}" r="${pointRadius}" ${attrs}/>`;
      case 'line':
        return `<polyline points="${pts(s.path)}" fill="none" ${attrs}/>`;
      case 'area':
        return `<path d="${d(s.rings)}" fill-rule="evenodd" ${attrs}/>`;
    }
  };

  const out: string[] = [];
  out.push(`<svg xmlns="http://www.w3.org/2000/svg" class="plan-map" viewBox="0 0 ${r2(w)} ${r2(h)}" width="${r2(w)}mm" height="${r2(h)}mm" data-mm-per-unit="${scale}" data-bbox="${frame.bbox.join(' ')}" data-range="${range ? range.join(' ') : 'all'}" font-family="sans-serif" font-size="2.6">`);
  if (options.title) out.push(`<title>${esc(options.title)}</title>`);
  out.push(`<defs><clipPath id="plot"><rect x="${MARGIN.left}" y="${MARGIN.top}" width="${r2(plotW)}" height="${r2(plotH)}"/></clipPath></defs>`);
  out.push(`<rect x="${MARGIN.left}" y="${MARGIN.top}" width="${r2(plotW)}" height="${r2(plotH)}" fill="#fff" stroke="none"/>`);

  // grid ticks and labels (plan units of the CRS)
  const step = niceStep(Math.max(spanX, spanY) / 5);
  const ticks: string[] = [];
  const label = (v: number) => (step >= 1 ? v.toFixed(0) : v.toFixed(Math.min(3, Math.ceil(-Math.log10(step)))));
  for (let x = Math.ceil(x0 / step) * step; x <= x1 + 1e-9; x += step) {
    ticks.push(`<line x1="${px(x)}" y1="${r2(MARGIN.top + plotH)}" x2="${px(x)}" y2="${r2(MARGIN.top + plotH + 1.5)}"/><line x1="${px(x)}" y1="${MARGIN.top}" x2="${px(x)}" y2="${r2(MARGIN.top + plotH)}" stroke="#e4e4e4" stroke-width="0.15"/>`);
    ticks.push(`<text x="${px(x)}" y="${r2(MARGIN.top + plotH + 4)}" text-anchor="middle" stroke="none" fill="#333">${label(x)}</text>`);
  }
  for (let y = Math.ceil(y0 / step) * step; y <= y1 + 1e-9; y += step) {
    ticks.push(`<line x1="${r2(MARGIN.left - 1.5)}" y1="${py(y)}" x2="${MARGIN.left}" y2="${py(y)}"/><line x1="${MARGIN.left}" y1="${py(y)}" x2="${r2(MARGIN.left + plotW)}" y2="${py(y)}" stroke="#e4e4e4" stroke-width="0.15"/>`);
    ticks.push(`<text x="${r2(MARGIN.left - 2)}" y="${py(y)}" text-anchor="end" dominant-baseline="middle" stroke="none" fill="#333" transform="rotate(-90 ${r2(MARGIN.left - 2)} ${py(y)})" dx="${0}">${label(y)}</text>`);
  }
  out.push(`<g class="grid" stroke="#555" stroke-width="0.2">${ticks.join('')}</g>`);

  out.push(`<g clip-path="url(#plot)">`);
  // site plan (above-ground objects)
  out.push(`<g class="plan">${layers.plan.map((f) => shapeSvg(f.shape, planStyle(f.kind), 0.9).replace('/>', ` data-id="${esc(f.id)}" data-kind="${esc(f.kind)}"/>`)).join('')}</g>`);
  // survey lines
  out.push(`<g class="survey-lines" stroke="#7fb3d5" stroke-width="0.15" fill="none">${layers.lines.map((l) => `<polyline points="${pts(l)}"/>`).join('')}</g>`);
  // flagged anomalies: grey hatch-like dotted outline
  const flagged = layers.flagged.filter((a) => inRange(a.depthTopM, a.depthBottomM, range));
  out.push(`<g class="flagged-layer">${flagged.map((a) => shapeSvg(a.shape, `class="flagged" data-id="${esc(a.id)}" stroke="#888" stroke-width="0.35" stroke-dasharray="0.4 0.6" fill="${a.shape.type === 'area' ? '#bbbbbb55' : 'none'}"`, 0.9)).join('')}</g>`);
  // targets: candidates dashed and lighter, accepted solid, on top
  const targets = layers.targets.filter((t) => inRange(t.depthTopM, t.depthBottomM, range)).sort((a, b) => (a.decision === b.decision ? 0 : a.decision === 'candidate' ? -1 : 1));
  out.push(`<g class="target-layer">${targets.map((t) => shapeSvg(t.shape, targetStyle(t), 1.2)).join('')}</g>`);
  out.push(`</g>`);
  out.push(`<rect x="${MARGIN.left}" y="${MARGIN.top}" width="${r2(plotW)}" height="${r2(plotH)}" fill="none" stroke="#000" stroke-width="0.3"/>`);

  // scale bar: a nice length near a quarter of the plot width, in plan units
  const barUnits = niceStep(spanX / 4);
  const barMm = barUnits * scale;
  const bx = MARGIN.left + 3;
  const by = MARGIN.top + plotH - 4;
  const metres = barUnits * frame.metresPerUnit;
  const barLabel = frame.unitName === 'm' ? `${fmt(barUnits)} m` : `${fmt(barUnits)} ${frame.unitName} (${fmt(metres)} m)`;
  out.push(
    `<g class="scale-bar" data-length="${barUnits}" data-length-m="${metres}"><rect x="${r2(bx - 1)}" y="${r2(by - 4.5)}" width="${r2(barMm + 2 + barLabel.length * 1.5)}" height="7" fill="#fff" fill-opacity="0.85"/>` +
      `<line x1="${r2(bx)}" y1="${r2(by)}" x2="${r2(bx + barMm)}" y2="${r2(by)}" stroke="#000" stroke-width="0.6"/>` +
      `<line x1="${r2(bx)}" y1="${r2(by - 1.2)}" x2="${r2(bx)}" y2="${r2(by + 1.2)}" stroke="#000" stroke-width="0.3"/><line x1="${r2(bx + barMm)}" y1="${r2(by - 1.2)}" x2="${r2(bx + barMm)}" y2="${r2(by + 1.2)}" stroke="#000" stroke-width="0.3"/>` +
      `<text x="${r2(bx + barMm + 1.5)}" y="${r2(by + 0.9)}">${esc(barLabel)}</text></g>`,
  );
  // north arrow (true north), top right
  const nx = MARGIN.left + plotW - 7;
  const ny = MARGIN.top + 9;
  out.push(
    `<g class="north-arrow" data-north-deg="${r2(frame.northDeg)}" transform="translate(${r2(nx)} ${r2(ny)}) rotate(${r2(frame.northDeg)})"><circle r="5.5" fill="#fff" fill-opacity="0.85" stroke="none"/>` +
      `<path d="M0,-4.5L2,2.5L0,1.2L-2,2.5Z" fill="#000"/><text y="-5.6" text-anchor="middle" font-size="2.8" font-weight="bold">N</text></g>`,
  );
  out.push('</svg>');
  return out.join('');
}

function targetStyle(t: MapTarget): string {
  const base = `class="target" data-id="${esc(t.id)}" data-decision="${t.decision}" stroke="${t.colour}"`;
  const fill = t.shape.type === 'area' ? `fill="${t.colour}" fill-opacity="${t.decision === 'accepted' ? 0.35 : 0.15}"` : t.shape.type === 'point' ? `fill="${t.colour}"` : '';
  return t.decision === 'accepted' ? `${base} stroke-width="0.8" ${fill}` : `${base} stroke-width="0.6" stroke-dasharray="1.4 0.8" ${fill}`;
}

function planStyle(kind: string): string {
  switch (kind) {
    case 'building':
      return 'fill="#d9d9d9" stroke="#666" stroke-width="0.25"';
    case 'wall':
      return 'stroke="#444" stroke-width="0.7"';
    case 'fence':
      return 'stroke="#444" stroke-width="0.3" stroke-dasharray="1.2 0.6"';
    case 'overhead':
      return 'stroke="#8a5a00" stroke-width="0.35" stroke-dasharray="3 1 0.5 1" fill="#8a5a00"';
    default:
      return 'stroke="#444" stroke-width="0.3" fill="#777"';
  }
}

const fmt = (v: number) => (Number.isInteger(v) ? String(v) : String(Number(v.toPrecision(4))));

/** The legend of the plan maps, as HTML (printed once under the first map). */
export function planMapLegend(utilityColours: { name: string; hex: string; label: string }[]): string {
  const sw = (svg: string) => `<svg viewBox="0 0 12 6" width="12mm" height="6mm" style="flex:none">${svg}</svg>`;
  const items = [
    [sw('<line x1="1" y1="3" x2="11" y2="3" stroke="#222" stroke-width="0.8"/>'), 'accepted target (solid, in its APWA colour)'],
    [sw('<line x1="1" y1="3" x2="11" y2="3" stroke="#222" stroke-width="0.6" stroke-dasharray="1.4 0.8"/>'), 'candidate target, not reviewed (dashed)'],
    [sw('<path d="M2,1H10V5H2Z" stroke="#888" stroke-width="0.35" stroke-dasharray="0.4 0.6" fill="#bbbbbb55"/>'), 'flagged as an above-ground (air-wave) reflection: not a target'],
    [sw('<line x1="1" y1="3" x2="11" y2="3" stroke="#7fb3d5" stroke-width="0.4"/>'), 'survey line'],
    [sw('<path d="M2,1H10V5H2Z" fill="#d9d9d9" stroke="#666" stroke-width="0.25"/>'), 'building'],
    [sw('<line x1="1" y1="3" x2="11" y2="3" stroke="#444" stroke-width="0.3" stroke-dasharray="1.2 0.6"/>'), 'fence (dashed) or wall (solid)'],
    [sw('<line x1="1" y1="3" x2="11" y2="3" stroke="#8a5a00" stroke-width="0.35" stroke-dasharray="3 1 0.5 1"/>'), 'overhead object'],
  ];
  const colours = utilityColours.map((c) => [sw(`<line x1="1" y1="3" x2="11" y2="3" stroke="${c.hex}" stroke-width="1.2"/>`), `${esc(c.label)} (${esc(c.name)})`]);
  return `<ul class="legend">${[...items, ...colours].map(([s, t]) => `<li>${s} ${t}</li>`).join('')}</ul>`;
}
