import type { Hyperbola, RadargramLine } from './data';
import { depthAtVerticalTimeNs, hyperbolaTimes, verticalTwoWayTimeNs, type LayerVelocities } from '@lamina/velocity/physics';

export interface RadargramView {
  line: RadargramLine;
  /** nTraces * nSamples, trace-major. */
  data: Float32Array;
  metresPerUnit: number;
  layers: LayerVelocities['layers'];
  velocity: number;
  separationM: number;
  hyperbolas: Hyperbola[];
  /** Decimated trace index nearest the selected anomaly. */
  markTrace?: number;
  unit: 'm' | 'ft';
}

/** Cumulative distance (m) along the line at each decimated trace. */
export function alongLine(line: RadargramLine, metresPerUnit: number): Float64Array {
  const d = new Float64Array(line.nTraces);
  for (let i = 1; i < line.nTraces; i++) {
    const dx = (line.x[i]! - line.x[i - 1]!) * metresPerUnit;
    const dy = (line.y[i]! - line.y[i - 1]!) * metresPerUnit;
    d[i] = d[i - 1]! + Math.hypot(dx, dy);
  }
  return d;
}

const FT = 0.3048;

/**
 * Draw a processed radargram (grey, symmetric clip at the 98th percentile of |amplitude|), its time
 * axis (ns, left), depth axis from the velocity model (right), distance along the line (bottom), the
 * fitted hyperbolas of this line (velocity.json) with their apexes, and the trace nearest the anomaly.
 */
export function drawRadargram(canvas: HTMLCanvasElement, v: RadargramView): void {
  const ctx = canvas.getContext('2d')!;
  const W = canvas.width;
  const H = canvas.height;
  const m = { l: 44, r: 46, t: 8, b: 28 };
  const pw = W - m.l - m.r;
  const ph = H - m.t - m.b;
  const { nTraces, nSamples, dtNs } = v.line;
  const t0 = v.line.timeZeroNs ?? 0;
  ctx.fillStyle = '#fff';
  ctx.fillRect(0, 0, W, H);

  // amplitude clip: 98th percentile of |a| on a sample of the data
  const step = Math.max(1, Math.floor(v.data.length / 50_000));
  const abs: number[] = [];
  for (let i = 0; i < v.data.length; i += step) {
    const a = Math.abs(v.data[i]!);
    if (Number.isFinite(a)) abs.push(a);
  }
  abs.sort((a, b) => a - b);
  const clip = abs[Math.floor(abs.length * 0.98)] || 1;

  const img = ctx.createImageData(pw, ph);
  for (let py = 0; py < ph; py++) {
    const s = Math.min(nSamples - 1, Math.floor((py / ph) * nSamples));
    for (let px = 0; px < pw; px++) {
      const tr = Math.min(nTraces - 1, Math.floor((px / pw) * nTraces));
      const a = v.data[tr * nSamples + s]!;
      const g = Number.isFinite(a) ? Math.max(0, Math.min(255, Math.round(128 + (a / clip) * 127))) : 255;
      const j = (py * pw + px) * 4;
      img.data[j] = g;
      img.data[j + 1] = g;
      img.data[j + 2] = g;
      img.data[j + 3] = 255;
    }
  }
  ctx.putImageData(img, m.l, m.t);

  const dist = alongLine(v.line, v.metresPerUnit);
  const total = dist[nTraces - 1] || 1;
  const tMax = nSamples * dtNs;
  const xOfTrace = (tr: number) => m.l + ((tr + 0.5) / nTraces) * pw;
  const yOfTime = (tNs: number) => m.t + ((tNs + t0) / tMax) * ph; // tNs after time-zero

  // hyperbolas of this line
  const traceStep = v.line.traceStep ?? 1;
  for (const h of v.hyperbolas) {
    const apex = Math.min(nTraces - 1, Math.max(0, Math.round(h.trace / traceStep)));
    const xs = Float64Array.from(dist, (d) => d - dist[apex]!);
    const ts = hyperbolaTimes(xs, h.t0Ns, h.velocityMPerNs, h.origin === 'above-ground' ? 0 : v.separationM, undefined, h.radiusM ?? 0);
    ctx.strokeStyle = h.origin === 'above-ground' ? '#d01c8b' : '#00a0d0';
    ctx.lineWidth = 2;
    ctx.beginPath();
    let pen = false;
    for (let i = 0; i < nTraces; i++) {
      const y = yOfTime(ts[i]!);
      if (y > m.t + ph) {
        pen = false;
        continue;
      }
      if (pen) ctx.lineTo(xOfTrace(i), y);
      else ctx.moveTo(xOfTrace(i), y);
      pen = true;
    }
    ctx.stroke();
    ctx.fillStyle = '#ffcc00';
    ctx.strokeStyle = '#000';
    ctx.lineWidth = 1;
    ctx.beginPath();
    ctx.arc(xOfTrace(apex), yOfTime(h.t0Ns), 5, 0, Math.PI * 2);
    ctx.fill();
    ctx.stroke();
  }
  if (v.markTrace !== undefined) {
    ctx.strokeStyle = 'rgba(255,80,0,0.8)';
    ctx.setLineDash([4, 3]);
    ctx.beginPath();
    ctx.moveTo(xOfTrace(v.markTrace), m.t);
    ctx.lineTo(xOfTrace(v.markTrace), m.t + ph);
    ctx.stroke();
    ctx.setLineDash([]);
  }

  // axes
  ctx.fillStyle = '#222';
  ctx.strokeStyle = '#222';
  ctx.font = '10px sans-serif';
  ctx.strokeRect(m.l, m.t, pw, ph);
  ctx.textAlign = 'right';
  const tTick = niceStep(tMax / 6);
  for (let t = 0; t <= tMax - t0; t += tTick) {
    const y = yOfTime(t);
    ctx.fillText(`${+t.toFixed(1)}`, m.l - 4, y + 3);
    ctx.beginPath();
    ctx.moveTo(m.l - 3, y);
    ctx.lineTo(m.l, y);
    ctx.stroke();
  }
  ctx.save();
  ctx.translate(10, m.t + ph / 2);
  ctx.rotate(-Math.PI / 2);
  ctx.textAlign = 'center';
  ctx.fillText('two-way time (ns)', 0, 0);
  ctx.restore();

  const unitK = v.unit === 'ft' ? 1 / FT : 1;
  // velocity.json without a model: one layer at the site velocity
  const model: LayerVelocities = { layers: v.layers.length ? v.layers : [{ topM: 0, bottomM: Infinity, velocityMPerNs: v.velocity }] };
  const dMax = depthAtVerticalTimeNs(model, tMax - t0) * unitK;
  const dTick = niceStep(dMax / 6);
  ctx.textAlign = 'left';
  for (let d = 0; d <= dMax; d += dTick) {
    const y = yOfTime(verticalTwoWayTimeNs(model, d / unitK));
    ctx.fillText(`${+d.toFixed(2)}`, m.l + pw + 4, y + 3);
    ctx.beginPath();
    ctx.moveTo(m.l + pw, y);
    ctx.lineTo(m.l + pw + 3, y);
    ctx.stroke();
  }
  ctx.save();
  ctx.translate(W - 6, m.t + ph / 2);
  ctx.rotate(Math.PI / 2);
  ctx.textAlign = 'center';
  ctx.fillText(`depth (${v.unit})`, 0, 0);
  ctx.restore();

  ctx.textAlign = 'center';
  const xTick = niceStep(total / 5);
  for (let d = 0; d <= total; d += xTick) {
    let i = 0;
    while (i < nTraces - 1 && dist[i]! < d) i++;
    const x = xOfTrace(i);
    ctx.fillText(`${+d.toFixed(1)}`, x, m.t + ph + 12);
  }
  ctx.fillText(`distance along ${v.line.id} (m)`, m.l + pw / 2, H - 3);
}

function niceStep(raw: number): number {
  if (!(raw > 0)) return 1;
  const p = 10 ** Math.floor(Math.log10(raw));
  const f = raw / p;
  return (f < 1.5 ? 1 : f < 3.5 ? 2 : f < 7.5 ? 5 : 10) * p;
}

/** Nearest decimated trace of any line to a lon/lat point: [line index, trace index, metres]. */
export function nearestTrace(lines: RadargramLine[], lon: number, lat: number): [number, number, number] | undefined {
  let best: [number, number, number] | undefined;
  const k = Math.cos((lat * Math.PI) / 180) * 111_320;
  for (let li = 0; li < lines.length; li++) {
    const l = lines[li]!;
    for (let i = 0; i < l.lon.length; i++) {
      const d = Math.hypot((l.lon[i]! - lon) * k, (l.lat[i]! - lat) * 110_574);
      if (!best || d < best[2]) best = [li, i, d];
    }
  }
  return best;
}
