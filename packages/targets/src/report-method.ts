/**
 * The written sections of report.html that are generated from the run's own records: the method
 * statement (run.json's recipe, slices.json's gridding, velocity.json's model), the limitations (survey
 * directions, depth reached, ground not covered, near-surface zone) and the velocity summary with its
 * appendix of fits. Everything here is read from the folder; nothing is assumed about the site.
 */
import type { RunInfo, SlicesInfo, VelocityInfo } from './folder';
import { esc, isObj } from './text';

const n = (v: unknown, d = 2): string => (typeof v === 'number' && Number.isFinite(v) ? String(Number(v.toFixed(d))) : '–');

/** Plain names of the recipe's steps, in the words of the trade. */
const STEP_NAMES: Record<string, string> = {
  timeZero: 'Time-zero correction',
  dewow: 'Dewow (removal of the low-frequency wow)',
  bandpass: 'Band-pass filter',
  gain: 'Gain',
  backgroundRemoval: 'Background removal',
  airEvents: 'Removal of air-wave (above-ground) events',
  migration: 'Migration',
  envelope: 'Envelope (instantaneous amplitude)',
};

/** Bearings (degrees, 0-180 from grid north, clockwise) of the survey lines, grouped within 10 degrees. */
export function lineDirections(lines: number[][][]): { bearingDeg: number; lines: number }[] {
  const groups: { sum: number; lines: number; ref: number }[] = [];
  for (const l of lines) {
    const a = l[0]!;
    const b = l[l.length - 1]!;
    if (a[0] === b[0] && a[1] === b[1]) continue;
    const bearing = (((Math.atan2(b[0]! - a[0]!, b[1]! - a[1]!) * 180) / Math.PI) % 180 + 180) % 180;
    const g = groups.find((q) => Math.min(Math.abs(q.ref - bearing), 180 - Math.abs(q.ref - bearing)) <= 10);
    if (g) {
      // average on the half circle about the group's first bearing
      const d = bearing - g.ref > 90 ? bearing - 180 : g.ref - bearing > 90 ? bearing + 180 : bearing;
      g.sum += d;
      g.lines++;
    } else groups.push({ sum: bearing, lines: 1, ref: bearing });
  }
  return groups.map((g) => ({ bearingDeg: ((g.sum / g.lines) % 180 + 180) % 180, lines: g.lines })).sort((x, y) => y.lines - x.lines);
}

function paramText(params: Record<string, unknown>, result?: Record<string, unknown>): string {
  const parts = Object.entries(params)
    .filter(([, v]) => v !== undefined && v !== null && typeof v !== 'object')
    .map(([k, v]) => `${esc(k)} ${esc(typeof v === 'number' ? n(v, 4) : v)}`);
  if (result && typeof result.linesCleaned === 'number' && typeof result.lines === 'number') {
    parts.push(
      result.linesCleaned > 0
        ? `ran on ${n(result.linesCleaned, 0)} of ${n(result.lines, 0)} lines (migration at the speed of light, the foci of ${n(result.foci, 0)} plan points and air-velocity hyperbola apexes masked, demigrated and subtracted before slicing${typeof result.steepEvents === 'number' && result.steepEvents > 0 ? `; before that, the part of ${n(result.steepEvents, 0)} air waves steeper than the dip limit taken out along their own moveout (summed over lines)` : ''})`
        : 'did not run (no above-ground object of the plan near a line and no air-velocity hyperbola)',
    );
  }
  if (result && typeof result.method === 'string') parts.push(`applied as ${esc(result.method)}${typeof result.reason === 'string' ? ` (${esc(result.reason)})` : ''}`);
  return parts.join(', ');
}

export interface MethodInput {
  run: RunInfo;
  slices: SlicesInfo | undefined;
  velocity: VelocityInfo;
  /** Survey lines in the site CRS (for their directions). */
  lines: number[][][];
}

/** The method statement: data, processing in order, velocity, depth slices and gridding, screening. */
export function methodStatement(m: MethodInput): string {
  const { run, slices, velocity } = m;
  const traces = run.lines.reduce((a, l) => a + (l.traces ?? 0), 0);
  const lengthM = run.lines.reduce((a, l) => a + (l.lengthM ?? 0), 0);
  const ant = run.site.antenna ?? {};
  const dirs = lineDirections(m.lines);
  const g: Record<string, unknown> = { ...(slices?.gridding ?? {}) };
  const mpu = run.site.crs.metresPerUnit;
  const thick = slices?.slices.map((s) => s.bottomM - s.topM).sort((a, b) => a - b) ?? [];
  const model: Record<string, unknown> = isObj(velocity.raw.model) ? { ...velocity.raw.model } : {};
  const layers = Array.isArray(model.layers) ? model.layers.filter(isObj) : [];
  const items: string[] = [];
  items.push(
    `<b>Data.</b> ${run.lines.length} survey lines, ${traces} traces${lengthM > 0 ? `, ${n(lengthM, 1)} m of line` : ''}, antenna ${ant.frequencyMHz !== undefined ? `${n(ant.frequencyMHz, 0)} MHz` : 'frequency not given'}${ant.separationM !== undefined ? ` (transmitter-receiver separation ${n(ant.separationM, 3)} m)` : ''}. ` +
      (dirs.length ? `Line direction${dirs.length > 1 ? 's' : ''}: ${dirs.map((d) => `${n(d.bearingDeg, 0)}° from grid north (${d.lines} lines)`).join('; ')}. ` : '') +
      (typeof g.lineSpacing === 'number' ? `Line spacing ${n(g.lineSpacing * mpu, 2)} m, trace spacing ${n(Number(g.traceSpacing) * mpu, 3)} m.` : ''),
  );
  if (run.recipeSteps?.length) {
    items.push(`<b>Processing</b>, in this order, on every line:<ol>${run.recipeSteps.map((s) => `<li>${esc(STEP_NAMES[s.step] ?? s.step)}${paramText(s.params, s.result) ? `: ${paramText(s.params, s.result)}` : ''}</li>`).join('')}</ol>`);
  }
  items.push(
    `<b>Velocity.</b> Fitted from diffraction hyperbolas (apex, velocity and object radius together); site velocity ${n(velocity.velocityMPerNs, 4)} m/ns, relative permittivity K ${n(velocity.permittivity, 2)}; ` +
      (layers.length > 1 ? `a layered model of ${layers.length} layers.` : 'one velocity for the whole depth range.') +
      ' Depths are converted from two-way time with this model.',
  );
  if (slices) {
    const top = Math.min(...slices.slices.map((s) => s.topM));
    const bottom = Math.max(...slices.slices.map((s) => s.bottomM));
    items.push(
      `<b>Depth slices.</b> ${slices.slices.length} slices from ${n(top)} to ${n(bottom)} m${thick.length ? `, ${n(thick[thick.length >> 1], 3)} m thick (median)` : ''}, on ${n((slices.cellSize ?? 0) * mpu, 3)} m cells. ` +
        (typeof g.method === 'string' ? `Gridding: ${esc(g.method)}${typeof g.power === 'number' ? ` (power ${n(g.power)}` : ' ('}, up to ${esc(g.maxPoints ?? '–')} traces, search radius ${n(Number(g.radius) * mpu)} m along the lines and ${n(Number(g.radiusAcross ?? g.radius) * mpu)} m across)${typeof g.mode === 'string' ? `; slice value: ${esc(g.mode)} of the envelope over the slice` : ''}.` : ''),
    );
  }
  items.push(
    '<b>Screening and classes.</b> Each slice is scored against its own noise level; anomalies are classed utility, structure, layer, clutter or above-ground. Anomalies that line up with a mapped wall, fence, post, column, tree or overhead object at the air-wave distance, move away from it with depth at the air-wave rate, or repeat at post spacing are flagged above-ground, with the evidence listed below. Targets are the utility and structure anomalies not flagged, plus any accepted in review.',
  );
  return `<ul class="method">${items.map((i) => `<li>${i}</li>`).join('')}</ul>`;
}

export interface LimitsInput extends MethodInput {
  /** Deepest bottom of a subsurface (not flagged) anomaly, m; undefined when there is none. */
  deepestAnomalyM: number | undefined;
}

/** The limitations of this survey, from what the folder records. */
export function limitations(m: LimitsInput): string {
  const { run, slices } = m;
  const items: string[] = [];
  const dirs = lineDirections(m.lines);
  if (dirs.length <= 1) {
    items.push(
      `The lines run in one direction${dirs[0] ? ` (${n(dirs[0].bearingDeg, 0)}° from grid north)` : ''}. A pipe or cable running along the lines crosses none of them and can be missed or read as a layer; a second set of lines at right angles is the usual remedy (common practice).`,
    );
  } else {
    items.push(`The lines run in ${dirs.length} directions (${dirs.map((d) => `${n(d.bearingDeg, 0)}°`).join(', ')}); features at other angles are still crossed obliquely.`);
  }
  if (slices?.slices.length) {
    const bottom = Math.max(...slices.slices.map((s) => s.bottomM));
    items.push(
      m.deepestAnomalyM !== undefined
        ? `The slices reach ${n(bottom)} m; the deepest anomaly found ends at ${n(m.deepestAnomalyM)} m. Nothing below is a finding of absence: penetration depends on the soil (clay and salt water absorb the signal), and small or deep objects may give no visible reflection.`
        : `The slices reach ${n(bottom)} m and no subsurface anomaly was found in them. That is not a finding of absence: penetration depends on the soil, and small or deep objects may give no visible reflection.`,
    );
    const cells = slices.width * slices.height;
    const valid = Math.max(0, ...slices.slices.map((s) => s.stats?.validCount ?? 0));
    if (cells > 0 && valid > 0) {
      const empty = 1 - valid / cells;
      items.push(
        `${n(100 * empty, 0)} % of the gridded rectangle (${slices.width} × ${slices.height} cells) has no data: it lies beyond the gridding radius of every trace. Nothing is known there, nor outside the surveyed area.`,
      );
    }
  }
  if (run.nearSurfaceM !== undefined) {
    items.push(`The top ${n(run.nearSurfaceM)} m lies in the direct- and ground-wave zone of the antenna: shallow objects there are only reported when they cross several lines and continue deeper.`);
  }
  items.push('Above-ground reflections are screened only against the objects in the site plan (plan.geojson); an unmapped wall, vehicle, fence or person near the antenna can still produce an anomaly that looks buried.');
  items.push('Depths use one velocity model for the site; where the soil varies, depths vary with it beyond the stated uncertainty.');
  return `<ul class="limits">${items.map((i) => `<li>${i}</li>`).join('')}</ul>`;
}

/** A fit of velocity.json as the report shows it. */
interface FitRow {
  line: unknown;
  trace: unknown;
  t0Ns: unknown;
  depthM: unknown;
  velocityMPerNs: unknown;
  uncertaintyMPerNs: unknown;
  permittivity: unknown;
  radiusM: unknown;
  radiusResolved: unknown;
  origin: unknown;
  flags?: unknown;
}

/**
 * Whether a fit is marked in the appendix, and why: not used by the model (origin other than
 * subsurface: air, implausible, ...), flagged (its flags: a subsurface fit with flags serves the model only
 * as velocity.json's site note says) or further than three times the site spread from the site velocity.
 */
export function fitMark(h: FitRow, velocity: VelocityInfo): string {
  if (h.origin !== 'subsurface') return `not used (${String(h.origin ?? 'unknown')})`;
  if (Array.isArray(h.flags) && h.flags.length > 0) return `flagged: ${h.flags.map(String).join(', ')}`;
  const v = Number(h.velocityMPerNs);
  const spread = velocity.spreadMPerNs;
  if (spread !== undefined && spread > 0 && Number.isFinite(v) && Math.abs(v - velocity.velocityMPerNs) > 3 * spread) return 'outlier (beyond 3 × the site spread)';
  return '';
}

/** What the site velocity's own uncertainty rests on, in words for the report (velocity.json `uncertaintyMPerNs`). */
function uncertaintyBasis(velocity: VelocityInfo): string {
  const objects = velocity.raw.site.objectCount;
  const fits = velocity.fitCount ?? 0;
  if (fits === 0) return 'the site value itself: assumed, so the range of common soils';
  const on = objects !== undefined ? ` on ${objects} object${objects === 1 ? '' : 's'}` : '';
  return `the site value itself, from ${fits} fit${fits === 1 ? '' : 's'}${on}: the standard error of their median, each object at least a fifth of v uncertain`;
}

/** The velocity summary: the model, the spread, the fits counted by origin (the fits themselves go to the appendix). */
export function velocitySummary(velocity: VelocityInfo): { summary: string; appendix: string } {
  const vr = velocity.raw;
  const fits = (Array.isArray(vr.hyperbolas) ? vr.hyperbolas.filter(isObj) : []) as unknown as FitRow[];
  const byOrigin = new Map<string, number>();
  for (const h of fits) byOrigin.set(String(h.origin ?? 'unknown'), (byOrigin.get(String(h.origin ?? 'unknown')) ?? 0) + 1);
  const marks = fits.map((h) => fitMark(h, velocity));
  const outliers = marks.filter((x) => x.startsWith('outlier')).length;
  const model: Record<string, unknown> = isObj(vr.model) ? { ...vr.model } : {};
  const layers = Array.isArray(model.layers) ? model.layers.filter(isObj) : [];
  const moisture: Record<string, unknown> | undefined = isObj(vr.site) && isObj(vr.site.moisture) ? { ...vr.site.moisture } : undefined;
  const summary =
    `<table><tr><th>Site velocity</th><td class="n">${velocity.velocityMPerNs.toFixed(4)} m/ns</td><th>Permittivity K</th><td class="n">${n(velocity.permittivity, 2)}</td></tr>` +
    `<tr><th>Spread</th><td class="n">${velocity.spreadMPerNs !== undefined ? `${velocity.spreadMPerNs.toFixed(4)} m/ns (${n((100 * velocity.spreadMPerNs) / velocity.velocityMPerNs, 1)} %)` : 'not given'}</td><th>Hyperbola fits</th><td>${fits.length}${fits.length ? `: ${[...byOrigin].map(([o, c]) => `${c} ${esc(o)}`).join(', ')}; ${outliers} outlier${outliers === 1 ? '' : 's'}` : ''}</td></tr>` +
    (velocity.uncertaintyMPerNs !== undefined
      ? `<tr><th>Site velocity uncertainty</th><td class="n">± ${velocity.uncertaintyMPerNs.toFixed(4)} m/ns (${n((100 * velocity.uncertaintyMPerNs) / velocity.velocityMPerNs, 1)} %)</td><td colspan="2">${uncertaintyBasis(velocity)}; with the spread, in every target's depth uncertainty</td></tr>`
      : '') +
    (isObj(vr.site) && typeof vr.site.note === 'string' ? `<tr><th>Note</th><td colspan="3">${esc(vr.site.note)}</td></tr>` : '') +
    (moisture ? `<tr><th>Moisture (estimate)</th><td colspan="3">${n(moisture.volumetricWaterContent, 3)} volumetric, ${esc(moisture.method)}. ${esc(moisture.caution)}</td></tr>` : '') +
    '</table>' +
    (layers.length ? `<table><tr><th>Layer top (m)</th><th>bottom (m)</th><th>v (m/ns)</th><th>K</th></tr>${layers.map((l) => `<tr><td class="n">${n(l.topM)}</td><td class="n">${n(l.bottomM)}</td><td class="n">${n(l.velocityMPerNs, 4)}</td><td class="n">${n(l.permittivity)}</td></tr>`).join('')}</table>` : '') +
    (fits.length ? '<p>Every fit is listed in the appendix; fits the model did not use and outliers are marked there.</p>' : '<p>No hyperbola fits.</p>');
  const appendix = fits.length
    ? `<table class="fits"><tr><th>Line</th><th>Trace</th><th>t0 (ns)</th><th>Depth (m)</th><th>v (m/ns)</th><th>± (m/ns)</th><th>K</th><th>Radius (m)</th><th>Origin</th><th>Mark</th></tr>${fits
        .map(
          (h, i) =>
            `<tr${marks[i] ? ' class="marked"' : ''}><td>${esc(h.line)}</td><td class="n">${esc(h.trace)}</td><td class="n">${n(h.t0Ns)}</td><td class="n">${n(h.depthM)}</td><td class="n">${n(h.velocityMPerNs, 4)}</td><td class="n">${n(h.uncertaintyMPerNs, 4)}</td><td class="n">${n(h.permittivity)}</td><td class="n">${h.radiusResolved === true ? n(h.radiusM, 3) : '–'}</td><td>${esc(h.origin)}</td><td>${esc(marks[i])}</td></tr>`,
        )
        .join('')}</table>`
    : '';
  return { summary, appendix };
}
