import { CAUTIONS } from '@lamina/constants';
import type { Dropped, Target } from './targets';
import { FOOT_M } from './targets';
import type { ExportContext } from './formats';
import type { AnomalyFeature, RunInfo, SlicesInfo, VelocityInfo } from './folder';
import type { Thumbnail } from './thumbnails';
import { APWA_COLOURS, UTILITY_TYPES } from './apwa';
import { planMapLegend, planMapSvg, UNTYPED_COLOUR, type MapFlagged, type MapTarget } from './plan-map';
import { fromWgs84, mapDepthRanges, mapFrame, shapeOf, type MapBackground } from './report-map';
import { limitations, methodStatement, velocitySummary } from './report-method';
import { esc } from './text';

const f = (v: number | null | undefined, d = 2) => (v === null || v === undefined || !Number.isFinite(v) ? '–' : v.toFixed(d));

export interface ReportInput {
  run: RunInfo;
  velocity: VelocityInfo;
  targets: Target[];
  dropped: Dropped[];
  anomalies: AnomalyFeature[];
  thumbnails: Thumbnail[];
  ctx: ExportContext;
  unmatchedDecisions: number;
  /** slices.json (the method statement, limitations and map depth ranges); undefined without slices. */
  slices?: SlicesInfo;
  /** Survey lines and site plan in the site CRS, for the plan maps; no maps without it. */
  background?: MapBackground;
}

function evidenceRows(a: AnomalyFeature): string {
  const ev = a.properties.evidence;
  const passed = ev.filter((e) => e.passed);
  const shown = (passed.length ? passed : ev).slice(0, 6);
  if (!shown.length) return '<em>no evidence recorded</em>';
  const rest = (passed.length ? passed.length : ev.length) - shown.length;
  return (
    '<ul>' +
    shown
      .map((e) => {
        const m = typeof e.measured === 'number' ? f(e.measured, 3) : esc(JSON.stringify(e.measured ?? null));
        const x = typeof e.expected === 'number' ? f(e.expected, 3) : esc(JSON.stringify(e.expected ?? null));
        const t = typeof e.tolerance === 'number' ? ` ± ${f(e.tolerance, 3)}` : '';
        return `<li><b>${esc(e.test)}</b>${e.featureId ? ` (${esc(e.featureId)})` : ''}: measured ${m}, expected ${x}${t} ${esc(e.units ?? '')} — ${e.passed ? 'passed' : 'not passed'}${e.detail ? `<br><span class="detail">${esc(e.detail)}</span>` : ''}</li>`;
      })
      .join('') +
    (rest > 0 ? `<li>… and ${rest} more</li>` : '') +
    '</ul>'
  );
}

/** What report.html needs besides the per-target rows. */
export type ReportPage = Omit<ReportInput, 'targets' | 'dropped' | 'anomalies'>;

/**
 * The per-target parts of report.html, built as targets and dropped anomalies pass: the rows (HTML, or
 * any encoding of it such as UTF-8 bytes, `R`) of the targets sorted by `byTargetId` and of the anomalies
 * flagged above-ground in input order, the ids of the rejected ones and the number of anomalies.
 */
export interface ReportRows<R> {
  targets: R[];
  flagged: R[];
  rejectedIds: string[];
  anomalyCount: number;
  /** Anomalies left out by class (clutter, layer) or as echoes. @default 0 */
  notTargetClass?: number;
  /** Targets accepted in review (quality level B); the others are candidates. @default 0 */
  acceptedCount?: number;
  /** Shapes of the targets and of the flagged anomalies for the plan maps (`mapItems`). @default [] */
  mapTargets?: MapTarget[];
  mapFlagged?: MapFlagged[];
  /** Deepest bottom of a subsurface anomaly, m (for the limitations). */
  deepestAnomalyM?: number;
}

/** A target as the plan maps draw it. */
export function mapTargetOf(t: Target): MapTarget | null {
  const shape = shapeOf(t.site);
  return shape ? { id: t.id, shape, colour: t.apwaColour && t.apwaColour !== '#ffffff' ? t.apwaColour : UNTYPED_COLOUR, decision: t.decision, depthTopM: t.depthTopM, depthBottomM: t.depthBottomM } : null;
}

/** An anomaly flagged above-ground as the plan maps draw it (its geometry is WGS84: brought into the site CRS). */
export function mapFlaggedOf(d: Dropped, crs: import('@lamina/site').Crs): MapFlagged | null {
  const shape = shapeOf(d.anomaly.geometry, fromWgs84(crs));
  return shape ? { id: d.id, shape, depthTopM: d.anomaly.properties.depthTopM, depthBottomM: d.anomaly.properties.depthBottomM } : null;
}

/** Rows of the site table from site.json's survey block (nothing when it has none). */
function surveyRows(s: RunInfo['site']['survey'], date: string | null): string {
  const rows: [string, string | undefined][] = [
    ['Survey date', date ? `${date}${s?.endDate ? ` to ${s.endDate}` : ''}` : undefined],
    ['Operator / crew', s?.operator],
    ['Client', s?.client],
    ['Equipment', [s?.equipment, s?.antennaSerial ? `antenna s/n ${s.antennaSerial}` : undefined].filter(Boolean).join(', ') || undefined],
    ['Positioning', s?.positioning?.method ? `${s.positioning.method}${s.positioning.accuracyM !== undefined ? `, stated horizontal accuracy ${s.positioning.accuracyM} m` : ''}` : undefined],
    ['Ground conditions', s?.groundConditions],
    ['Notes', s?.notes],
  ];
  return rows
    .filter((r): r is [string, string] => r[1] !== undefined && r[1] !== '')
    .map(([k, v]) => `<tr><th>${k}</th><td>${esc(v)}</td></tr>`)
    .join('\n');
}

/** The plan maps: all depths, then one per depth range of the slices; with the legend. */
function planMaps(page: ReportPage, rows: ReportRows<unknown>): string {
  const { run, background } = page;
  if (!background) return '<p>No survey lines in the folder: no plan map.</p>';
  const frame = mapFrame(run.site.crs, run.site.extentSite, background);
  if (!frame) return '<p>The survey has no plan extent: no plan map.</p>';
  const layers = { lines: background.lines, plan: background.plan, targets: rows.mapTargets ?? [], flagged: rows.mapFlagged ?? [] };
  const ranges: ([number, number] | null)[] = [null, ...mapDepthRanges(page.slices?.slices ?? [])];
  const used = new Set(layers.targets.map((t) => t.colour));
  const colours = UTILITY_TYPES.filter((u) => used.has(APWA_COLOURS[u].hex)).map((u) => ({ name: APWA_COLOURS[u].name, hex: APWA_COLOURS[u].hex, label: u }));
  const crsName = run.site.crs.code ?? 'site CRS';
  return ranges
    .map((r, i) => {
      const title = r ? `Depth ${f(r[0])}–${f(r[1])} m` : 'All depths';
      const count = layers.targets.filter((t) => r === null || (t.depthBottomM >= r[0] && t.depthTopM <= r[1])).length;
      return `<figure class="map"><figcaption><b>${title}</b>: ${count} target${count === 1 ? '' : 's'}; coordinates in ${esc(crsName)} (${esc(frame.unitName)}).</figcaption>${planMapSvg(frame, layers, r, { title })}${i === 0 ? planMapLegend(colours) : ''}</figure>`;
    })
    .join('');
}

/** Order of the target table. */
export const byTargetId = (a: { id: string }, b: { id: string }): number => a.id.localeCompare(b.id);

/** The row of a target in the target table. */
export function reportTargetRow(t: Target): string {
  return `<tr><td>${esc(t.id)}</td><td>${t.kind}</td><td>${t.apwaColour ? `<span class="swatch" style="background:${t.apwaColour}"></span> ${esc(t.utilityType)} (${esc(t.apwaColourName)})` : esc(t.utilityType ?? '–')}</td><td class="n">${f(t.depthTopM)} (${f(t.depthTopM / FOOT_M)})</td><td class="n">${f(t.depthBottomM)} (${f(t.depthBottomM / FOOT_M)})</td><td class="n">${f(t.depthUncertaintyM)}</td><td class="n">${f(t.lengthM, 1)}</td><td>${esc(t.class ?? '–')}</td><td class="n">${f(t.pAboveGround)}</td><td class="n">${f(t.centroidXY[0], 2)}, ${f(t.centroidXY[1], 2)}</td><td>${t.decision}${t.screenedOrigin !== t.origin ? ' (relabelled subsurface)' : ''}${t.label ? `; ${esc(t.label)}` : ''}${t.note ? `; ${esc(t.note)}` : ''}</td></tr>`;
}

/** The row of an anomaly flagged above-ground (by screening or in review), with its evidence. */
export function reportFlaggedRow(d: Dropped): string {
  return `<tr><td>${esc(d.id)}</td><td class="n">${f(d.anomaly.properties.depthTopM)}–${f(d.anomaly.properties.depthBottomM)}</td><td class="n">${f(typeof d.anomaly.properties.pAboveGround === 'number' ? d.anomaly.properties.pAboveGround : d.anomaly.properties.confidence)}</td><td>${d.reason === 'relabelled above-ground' ? '<b>relabelled above-ground in review</b>' : ''}${evidenceRows(d.anomaly)}</td></tr>`;
}

/** report.html in order, page parts as strings and rows as given (joined, they are the file). */
export function* reportParts<R>(page: ReportPage, rows: ReportRows<R>): Generator<string | R> {
  const { run, velocity, thumbnails, ctx } = page;
  const s = run.site;
  const traces = run.lines.reduce((a, l) => a + (l.traces ?? 0), 0);
  const lengthM = run.lines.reduce((a, l) => a + (l.lengthM ?? 0), 0);
  const ext = s.extentSite;
  const mpu = s.crs.metresPerUnit;
  const unit = s.crs.units === 'm' ? 'm' : s.crs.units === 'us-ft' ? 'US survey ft' : 'ft';
  const vel = velocitySummary(velocity);
  const methodInput = { run, slices: page.slices, velocity, lines: page.background?.lines ?? [] };

  const cautions = `<section class="cautions"><h2>Cautions</h2><ul>${CAUTIONS.map((c) => `<li>${esc(c)}</li>`).join('')}</ul></section>`;
  yield `<!doctype html>
<html lang="en"><head><meta charset="utf-8"><title>Lamina report: ${esc(s.name)}</title>
<meta name="viewport" content="width=device-width, initial-scale=1">
<style>
body { font: 13px/1.4 system-ui, sans-serif; margin: 2em auto; max-width: 60em; color: #111; }
h1 { font-size: 1.6em; margin-bottom: 0.2em; } h2 { font-size: 1.2em; border-bottom: 1px solid #999; margin-top: 1.6em; }
table { border-collapse: collapse; width: 100%; margin: 0.5em 0; } th, td { border: 1px solid #bbb; padding: 2px 5px; text-align: left; vertical-align: top; }
th { background: #eee; } td.n { text-align: right; font-variant-numeric: tabular-nums; }
.cautions { border: 2px solid #c00; padding: 0.3em 1em; background: #fff4f4; } .cautions h2 { border: none; color: #a00; }
.thumbs { display: flex; flex-wrap: wrap; gap: 8px; } figure { margin: 0; text-align: center; } figure img { image-rendering: pixelated; border: 1px solid #888; background: repeating-conic-gradient(#ddd 0 25%, #fff 0 50%) 0 0 / 8px 8px; }
.swatch { display: inline-block; width: 0.9em; height: 0.9em; border: 1px solid #444; vertical-align: middle; }
.detail { color: #555; } ul { margin: 0.2em 0; padding-left: 1.2em; }
figure.map { margin: 0.8em 0; text-align: left; } figure.map svg { display: block; max-width: 100%; height: auto; } figure.map figcaption { margin-bottom: 0.3em; }
ul.legend { list-style: none; padding: 0; columns: 2; font-size: 0.9em; } ul.legend li { break-inside: avoid; display: flex; align-items: center; gap: 0.5em; } ul.legend svg { vertical-align: middle; }
ul.method > li, ul.limits > li { margin-bottom: 0.4em; } tr.marked td { color: #777; } h2.appendix { break-before: page; }
@media print { body { margin: 0; max-width: none; font-size: 10pt; } h2 { break-after: avoid; } tr, figure, .cautions { break-inside: avoid; } figure.map svg { max-height: 200mm; width: auto; } a { color: inherit; text-decoration: none; } }
@page { margin: 15mm; }
</style></head><body>
<h1>Lamina survey report: ${esc(s.name)}</h1>
<p>Exported ${esc(ctx.exportDate)}${run.createdAt ? `; processed ${esc(run.createdAt)}` : ''}${ctx.surveyDate ? `; surveyed ${esc(ctx.surveyDate)}` : ''}. Method: ${esc(ctx.method)}. Targets are candidates until a person accepts them in review; only accepted targets carry quality level B (CI/ASCE 38-22), to be confirmed by the responsible professional.</p>
${cautions}
<h2>Site</h2>
<table>
<tr><th>Site</th><td>${esc(s.name)}</td></tr>
<tr><th>Survey lines</th><td>${run.lines.length} lines, ${traces} traces${lengthM > 0 ? `, ${f(lengthM, 1)} m of line` : ''}</td></tr>
<tr><th>Extent (site CRS)</th><td>${ext ? `${f(ext[0], 2)}, ${f(ext[1], 2)} to ${f(ext[2], 2)}, ${f(ext[3], 2)} ${esc(unit)} (${f((ext[2] - ext[0]) * mpu, 1)} m × ${f((ext[3] - ext[1]) * mpu, 1)} m)` : '–'}</td></tr>
<tr><th>Extent (WGS84)</th><td>${s.extentWgs84 ? s.extentWgs84.map((v) => v.toFixed(7)).join(', ') + ' (west, south, east, north)' : '–'}</td></tr>
<tr><th>CRS</th><td>${esc(s.crs.code ?? 'custom')} — <code>${esc(s.crs.proj4)}</code>; plan units ${esc(unit)} (${mpu} m)</td></tr>
${surveyRows(run.site.survey, ctx.surveyDate)}
<tr><th>Antenna</th><td>${s.antenna?.frequencyMHz !== undefined ? `${s.antenna.frequencyMHz} MHz` : '–'}${s.antenna?.separationM !== undefined ? `, separation ${f(s.antenna.separationM, 3)} m` : ''}</td></tr>
</table>
<h2>Plan</h2>
${planMaps(page, rows as ReportRows<unknown>)}
<h2>Method</h2>
${methodStatement(methodInput)}
<h2>Limitations</h2>
${limitations({ ...methodInput, deepestAnomalyM: rows.deepestAnomalyM })}
<h2>Velocity</h2>
${vel.summary}
<h2>Depth slices</h2>
${thumbnails.length ? `<p>Grey levels from each slice's 2nd (black) to 98th (white) percentile; north up; checkered = no data.</p><div class="thumbs">${thumbnails.map((t) => `<figure><img src="${t.dataUri}" width="${t.width}" height="${t.height}" alt="slice ${t.band}"><figcaption>${f(t.topM)}–${f(t.bottomM)} m</figcaption></figure>`).join('')}</div>` : '<p>No slices.tif in the folder.</p>'}
<h2>Targets (${rows.targets.length})</h2>
<p>Subsurface anomalies classed utility or structure (or accepted in review), not rejected in review.${rows.notTargetClass ? ` ${rows.notTargetClass} anomalies classed clutter or layer, or echoes below another object, are in anomalies.geojson only.` : ''}${run.nearSurfaceM !== undefined ? ` Slices above ${f(run.nearSurfaceM)} m lie in the direct- and ground-wave zone: what is found only there is not a target unless it crosses several lines and continues deeper.` : ''} Depth ft = m / 0.3048 (international foot). Uncertainty (±): the velocity spread (z · dv / v), half the slice thickness and a quarter wavelength in the ground, added in quadrature. P(above-ground) is the screening's probability that the anomaly is an air-wave reflection. ${rows.targets.length - (rows.acceptedCount ?? 0)} of ${rows.targets.length} are candidates nobody has reviewed yet (no quality level); the ${rows.acceptedCount ?? 0} accepted in review carry quality level B in the sense of CI/ASCE 38-22, to be confirmed by the responsible professional.</p>
<table><tr><th>Id</th><th>Kind</th><th>Utility (APWA)</th><th>Top m (ft)</th><th>Bottom m (ft)</th><th>± m</th><th>Length m</th><th>Class</th><th>P(above-ground)</th><th>Position (${esc(unit)})</th><th>Review</th></tr>
`;
  yield* joined(rows.targets);
  yield `
</table>
<h2>Flagged as above-ground (${rows.flagged.length})</h2>
<p>Anomalies the air-wave screening (or the reviewer) attributes to reflections from objects above the ground; they are not in the target files.</p>
<table><tr><th>Id</th><th>Depth m</th><th>P(above-ground)</th><th>Why</th></tr>
`;
  yield* joined(rows.flagged);
  yield `
</table>
${rows.rejectedIds.length ? `<h2>Rejected in review (${rows.rejectedIds.length})</h2><p>${rows.rejectedIds.map(esc).join(', ')}</p>` : ''}
${page.unmatchedDecisions ? `<p>${page.unmatchedDecisions} review decision(s) match no anomaly of this run and were not applied.</p>` : ''}
${vel.appendix ? `<h2 class="appendix">Appendix: hyperbola fits</h2>${vel.appendix}` : ''}
${cautions}
<p class="detail">Generated by Lamina${run.toolVersion ? ` ${esc(run.toolVersion)}` : ''}. ${rows.anomalyCount} anomalies screened.</p>
</body></html>
`;
}

function* joined<R>(rows: R[]): Generator<string | R> {
  for (let i = 0; i < rows.length; i++) {
    if (i > 0) yield '\n';
    yield rows[i]!;
  }
}

export function reportHtml(r: ReportInput): string {
  const rows: ReportRows<string> = {
    targets: [...r.targets].sort(byTargetId).map(reportTargetRow),
    flagged: r.dropped.filter((d) => d.reason !== 'rejected' && d.reason !== 'class').map(reportFlaggedRow),
    rejectedIds: r.dropped.filter((d) => d.reason === 'rejected').map((d) => d.id),
    anomalyCount: r.anomalies.length,
    notTargetClass: r.dropped.filter((d) => d.reason === 'class').length,
    acceptedCount: r.targets.filter((t) => t.decision === 'accepted').length,
    mapTargets: r.targets.map(mapTargetOf).filter((m) => m !== null),
    mapFlagged: r.dropped.filter((d) => d.reason === 'above-ground' || d.reason === 'relabelled above-ground').map((d) => mapFlaggedOf(d, r.run.site.crs)).filter((m) => m !== null),
    deepestAnomalyM: deepest([...r.targets.map((t) => t.depthBottomM), ...r.dropped.filter((d) => d.reason === 'class').map((d) => d.anomaly.properties.depthBottomM)]),
  };
  return [...reportParts(r, rows)].join('');
}

/** The largest finite value, undefined when there is none. */
export function deepest(depths: number[]): number | undefined {
  let m = -Infinity;
  for (const d of depths) if (Number.isFinite(d) && d > m) m = d;
  return m > -Infinity ? m : undefined;
}
