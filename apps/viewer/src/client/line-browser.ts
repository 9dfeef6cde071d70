import type { GeoJSONSource, MapMouseEvent } from 'maplibre-gl';
import { depthAtVerticalTimeNs, verticalTwoWayTimeNs, type LayerVelocities } from '@lamina/velocity/physics';
import { getBytes, type Hyperbola, type RadargramLine } from './data';
import type { Folder } from './folder';
import type { MapView } from './map-view';
import { dataPicks, matchReadout, matchTimes, radiusThrough, traceAt, velocityThrough, type HandMatch, type MatchReadout } from './match';
import { h } from './panel';
import { alongLine } from './radargram';
import { $, FT, handle, report, state } from './state';

/** What the line browser shows; read by the browser tests through `window.__lamina.line`. */
export interface LineBrowserState {
  line: string | null;
  /** Stored-trace index marked from the map (hover), or null. */
  markedTrace: number | null;
  /** Visible window: stored traces [tr0, tr1), samples [s0, s1). */
  view: { tr0: number; tr1: number; s0: number; s1: number };
  gainDb: number;
  clipPercent: number;
  match: (HandMatch & MatchReadout & { source: 'hand' | 'fit' }) | null;
  /** Mean |amplitude| along the match within its aperture over the line's clip level (how well it lies on an event). */
  matchCoherence: number | null;
  /** ms: fetch + decode of the line's data, first draw, last draw. */
  timings: { fetchMs?: number; openMs?: number; drawMs?: number };
  /** Incremented after each draw. */
  frames: number;
}

export interface LineBrowser {
  open(id: string, markTrace?: number): Promise<void>;
  state: LineBrowserState;
}

const M = { l: 48, r: 50, t: 8, b: 30 };
// one 32-bit write per pixel: grey g, opaque (byte order of the host, little-endian in browsers)
const GREY = Uint32Array.from({ length: 256 }, (_, g) => ((255 << 24) | (g << 16) | (g << 8) | g) >>> 0);
const WHITE = GREY[255]!;
const HANDLE_PX = 8;

/**
 * The line browser under the map: any survey line's processed radargram (radargrams/<line>.f32) with
 * time, depth (site velocity model) and distance axes, gain and clip, wheel zoom and drag pan; the
 * cursor on the radargram is marked on the map and hovering the map near the open line marks its trace.
 * In match mode a click places a hyperbola apex and dragging its flank handle sets the velocity.
 */
export function createLineBrowser(folder: Folder, view: MapView): LineBrowser {
  const { run, velocity, rgIndex } = folder;
  const { map } = view;
  const mpu = run.site.crs.metresPerUnit ?? 1;
  const sep = run.site.antenna?.separationM ?? 0;
  const siteV = velocity?.site.velocityMPerNs ?? velocity?.model?.layers[0]?.velocityMPerNs ?? 0.1;
  const model: LayerVelocities = { layers: velocity?.model?.layers?.length ? velocity.model.layers : [{ topM: 0, bottomM: Infinity, velocityMPerNs: siteV }] };
  const root = $('line-browser');
  const canvas = $<HTMLCanvasElement>('lb-canvas');
  const sel = $<HTMLSelectElement>('lb-line');
  const gain = $<HTMLInputElement>('lb-gain');
  const clip = $<HTMLInputElement>('lb-clip');
  const radius = $<HTMLInputElement>('lb-radius');
  const matchMode = $<HTMLInputElement>('lb-match-mode');
  const readout = $('lb-readout');
  const cursorEl = $('lb-cursor');
  const msg = $('lb-msg');
  sel.replaceChildren(h('option', { value: '' }, `(${rgIndex.lines.length} lines)`), ...rgIndex.lines.map((l) => h('option', { value: l.id }, l.id)));

  const st: LineBrowserState = { line: null, markedTrace: null, view: { tr0: 0, tr1: 1, s0: 0, s1: 1 }, gainDb: 0, clipPercent: 98, match: null, matchCoherence: null, timings: {}, frames: 0 };
  let line: RadargramLine | undefined;
  let data: Float32Array | undefined;
  let along: Float64Array = new Float64Array(0);
  let absSorted: Float32Array | undefined;
  let hyps: Hyperbola[] = [];
  let cursor: { tr: number; s: number } | null = null;
  let flankX: number | null = null; // along-line offset of the flank handle from the apex, m
  const cache = new Map<string, Promise<Float32Array | undefined>>();
  const bytesOf = (l: RadargramLine) => {
    let p = cache.get(l.id);
    if (!p) {
      p = getBytes(l.file.includes('/') ? l.file : `radargrams/${l.file}`).then((b) => (b ? new Float32Array(b) : undefined));
      p.catch(() => cache.delete(l.id));
      cache.set(l.id, p);
      while (cache.size > 8) cache.delete(cache.keys().next().value!);
    }
    return p;
  };

  // plot geometry
  const pw = () => canvas.width - M.l - M.r;
  const ph = () => canvas.height - M.t - M.b;
  const xOfTr = (tr: number) => M.l + ((tr + 0.5 - st.view.tr0) / (st.view.tr1 - st.view.tr0)) * pw();
  const trOfX = (x: number) => st.view.tr0 + ((x - M.l) / pw()) * (st.view.tr1 - st.view.tr0) - 0.5;
  const t0 = () => line!.timeZeroNs ?? 0;
  const yOfS = (s: number) => M.t + ((s - st.view.s0) / (st.view.s1 - st.view.s0)) * ph();
  const sOfY = (y: number) => st.view.s0 + ((y - M.t) / ph()) * (st.view.s1 - st.view.s0);
  const yOfTime = (tNs: number) => yOfS((tNs + t0()) / line!.dtNs); // tNs after time-zero
  const timeOfY = (y: number) => sOfY(y) * line!.dtNs - t0();
  const alongOf = (tr: number) => {
    const a = Math.max(0, Math.min(along.length - 1, tr));
    const i = Math.floor(a);
    const j = Math.min(i + 1, along.length - 1);
    return along[i]! + (a - i) * (along[j]! - along[i]!);
  };

  const clipLevel = () => {
    if (!absSorted || !absSorted.length) return 1;
    return absSorted[Math.min(absSorted.length - 1, Math.floor((absSorted.length * st.clipPercent) / 100))] || 1;
  };

  let frameImg: ImageData | undefined;
  let framePx: Uint32Array | undefined;
  let colBase = new Int32Array(0);
  const draw = () => {
    if (!line || !data) return;
    const started = performance.now();
    const w = Math.max(200, Math.round(canvas.clientWidth || 800));
    if (canvas.width !== w) canvas.width = w;
    const ctx = canvas.getContext('2d')!;
    const W = canvas.width;
    const H = canvas.height;
    ctx.fillStyle = '#fff';
    ctx.fillRect(0, 0, W, H);
    const { nTraces, nSamples } = line;
    const k = 10 ** (st.gainDb / 20) / clipLevel();
    const PW = pw();
    const PH = ph();
    // the image and its 32-bit view are kept between frames (a drag redraws 60 times a second)
    if (!frameImg || frameImg.width !== PW || frameImg.height !== PH) {
      frameImg = ctx.createImageData(PW, PH);
      framePx = new Uint32Array(frameImg.data.buffer);
      colBase = new Int32Array(PW);
    }
    const img = frameImg;
    const px32 = framePx!;
    for (let px = 0; px < PW; px++) {
      const tr = Math.round(trOfX(M.l + px + 0.5));
      colBase[px] = tr >= 0 && tr < nTraces ? tr * nSamples : -1;
    }
    for (let py = 0; py < PH; py++) {
      const s = Math.floor(sOfY(M.t + py + 0.5));
      const row = py * PW;
      if (s < 0 || s >= nSamples) {
        px32.fill(WHITE, row, row + PW);
        continue;
      }
      for (let px = 0; px < PW; px++) {
        const base = colBase[px]!;
        if (base < 0) {
          px32[row + px] = WHITE;
          continue;
        }
        const a = data[base + s]!;
        const g = a === a ? Math.max(0, Math.min(255, Math.round(128 + a * k * 127))) : 255;
        px32[row + px] = GREY[g]!;
      }
    }
    ctx.putImageData(img, M.l, M.t);
    ctx.save();
    ctx.beginPath();
    ctx.rect(M.l, M.t, pw(), ph());
    ctx.clip();
    // automatic fits of this line, thin
    const stepT = line.traceStep ?? 1;
    for (const hy of hyps) {
      const apex = hy.trace / stepT;
      curve(ctx, { line: line.id, x0M: alongOf(apex), t0Ns: hy.t0Ns, velocityMPerNs: hy.velocityMPerNs, radiusM: hy.radiusM ?? 0 }, hy.origin === 'above-ground' ? '#d01c8b' : '#00a0d0', 1.2, [5, 3]);
    }
    if (st.match) {
      const colour = st.match.origin === 'above-ground' ? '#ff3cac' : st.match.origin === 'implausible' ? '#ff8800' : '#2ee6a6';
      curve(ctx, st.match, colour, 2.5, []);
      const ax = xOfTr(traceAt(along, st.match.x0M));
      const ay = yOfTime(st.match.t0Ns);
      dot(ctx, ax, ay, '#ffcc00');
      const fh = flankHandle();
      if (fh) dot(ctx, fh[0], fh[1], '#ffffff');
    }
    if (st.markedTrace !== null) vline(ctx, xOfTr(st.markedTrace), 'rgba(255,80,0,0.9)');
    if (!st.match && cursor) {
      const cx = xOfTr(cursor.tr);
      const cy = yOfS(cursor.s);
      ctx.strokeStyle = '#ffcc00';
      ctx.lineWidth = 2;
      tick(ctx, cx - 6, cy, cx + 6, cy);
      tick(ctx, cx, cy - 6, cx, cy + 6);
    }
    ctx.restore();
    axes(ctx);
    st.frames++;
    st.timings.drawMs = performance.now() - started;
  };

  const curve = (ctx: CanvasRenderingContext2D, m: HandMatch, colour: string, width: number, dash: number[]) => {
    const trA = Math.max(0, Math.floor(st.view.tr0) - 1);
    const trB = Math.min(line!.nTraces - 1, Math.ceil(st.view.tr1) + 1);
    const xs = new Float64Array(trB - trA + 1);
    for (let i = trA; i <= trB; i++) xs[i - trA] = along[i]! - m.x0M;
    const ts = matchTimes(m, xs, sep);
    ctx.strokeStyle = colour;
    ctx.lineWidth = width;
    ctx.setLineDash(dash);
    ctx.beginPath();
    let pen = false;
    for (let i = trA; i <= trB; i++) {
      const y = yOfTime(ts[i - trA]!);
      if (y > M.t + ph() + 50) {
        pen = false;
        continue;
      }
      if (pen) ctx.lineTo(xOfTr(i), y);
      else ctx.moveTo(xOfTr(i), y);
      pen = true;
    }
    ctx.stroke();
    ctx.setLineDash([]);
  };
  const dot = (ctx: CanvasRenderingContext2D, x: number, y: number, fill: string) => {
    ctx.fillStyle = fill;
    ctx.strokeStyle = '#000';
    ctx.lineWidth = 1.5;
    ctx.beginPath();
    ctx.arc(x, y, 5, 0, Math.PI * 2);
    ctx.fill();
    ctx.stroke();
  };
  const vline = (ctx: CanvasRenderingContext2D, x: number, colour: string) => {
    ctx.strokeStyle = colour;
    ctx.setLineDash([4, 3]);
    ctx.lineWidth = 1.5;
    ctx.beginPath();
    ctx.moveTo(x, M.t);
    ctx.lineTo(x, M.t + ph());
    ctx.stroke();
    ctx.setLineDash([]);
  };
  const flankHandle = (): [number, number] | null => {
    if (!st.match || flankX === null) return null;
    const x = st.match.x0M + flankX;
    const t = matchTimes(st.match, [flankX], sep)[0]!;
    return [xOfTr(traceAt(along, x)), yOfTime(t)];
  };

  const axes = (ctx: CanvasRenderingContext2D) => {
    const l = line!;
    ctx.fillStyle = '#222';
    ctx.strokeStyle = '#222';
    ctx.lineWidth = 1;
    ctx.font = '10px sans-serif';
    ctx.strokeRect(M.l, M.t, pw(), ph());
    const tA = timeOfY(M.t);
    const tB = timeOfY(M.t + ph());
    ctx.textAlign = 'right';
    const tStep = niceStep((tB - tA) / 6);
    for (let t = Math.ceil(tA / tStep) * tStep; t <= tB; t += tStep) {
      const y = yOfTime(t);
      ctx.fillText(`${+t.toFixed(1)}`, M.l - 4, y + 3);
      tick(ctx, M.l - 3, y, M.l, y);
    }
    rotated(ctx, 10, M.t + ph() / 2, -Math.PI / 2, 'two-way time (ns)');
    const unitK = state.unit === 'ft' ? 1 / FT : 1;
    const dA = Math.max(0, depthAtVerticalTimeNs(model, Math.max(0, tA))) * unitK;
    const dB = depthAtVerticalTimeNs(model, Math.max(0, tB)) * unitK;
    const dStep = niceStep((dB - dA) / 6);
    ctx.textAlign = 'left';
    for (let d = Math.ceil(dA / dStep) * dStep; d <= dB; d += dStep) {
      const y = yOfTime(verticalTwoWayTimeNs(model, d / unitK));
      ctx.fillText(`${+d.toFixed(2)}`, M.l + pw() + 4, y + 3);
      tick(ctx, M.l + pw(), y, M.l + pw() + 3, y);
    }
    rotated(ctx, canvas.width - 6, M.t + ph() / 2, Math.PI / 2, `depth (${state.unit}, site velocity model)`);
    ctx.textAlign = 'center';
    const xA = alongOf(st.view.tr0);
    const xB = alongOf(st.view.tr1 - 1);
    const xStep = niceStep((xB - xA) / 6);
    for (let d = Math.ceil(xA / xStep) * xStep; d <= xB; d += xStep) {
      const x = xOfTr(traceAt(along, d));
      ctx.fillText(`${+d.toFixed(1)}`, x, M.t + ph() + 12);
      tick(ctx, x, M.t + ph(), x, M.t + ph() + 3);
    }
    ctx.fillText(`distance along ${l.id} (m)`, M.l + pw() / 2, canvas.height - 4);
  };
  const tick = (ctx: CanvasRenderingContext2D, x0: number, y0: number, x1: number, y1: number) => {
    ctx.beginPath();
    ctx.moveTo(x0, y0);
    ctx.lineTo(x1, y1);
    ctx.stroke();
  };
  const rotated = (ctx: CanvasRenderingContext2D, x: number, y: number, a: number, text: string) => {
    ctx.save();
    ctx.translate(x, y);
    ctx.rotate(a);
    ctx.textAlign = 'center';
    ctx.fillText(text, 0, 0);
    ctx.restore();
  };

  let frame = 0;
  const requestDraw = () => {
    if (frame) return;
    frame = requestAnimationFrame(() => {
      frame = 0;
      try {
        draw();
      } catch (e) {
        report(e);
      }
    });
  };

  // map: the open line highlighted, the cursor's position, hover near the line marks its trace
  const setCursorOnMap = (tr: number | null) => {
    const src = map.getSource('cursor') as GeoJSONSource | undefined;
    if (!src) return;
    if (tr === null || !line) {
      void src.setData({ type: 'FeatureCollection', features: [] });
      return;
    }
    const i = Math.max(0, Math.min(line.nTraces - 1, Math.round(tr)));
    void src.setData({ type: 'FeatureCollection', features: [{ type: 'Feature', properties: {}, geometry: { type: 'Point', coordinates: [line.lon[i]!, line.lat[i]!] } }] });
  };
  map.on('mousemove', (e: MapMouseEvent) => {
    if (!line) return;
    const { lng, lat } = e.lngLat;
    const kx = Math.cos((lat * Math.PI) / 180) * 111_320;
    let best = -1;
    let bd = Infinity;
    for (let i = 0; i < line.lon.length; i++) {
      const d = Math.hypot((line.lon[i]! - lng) * kx, (line.lat[i]! - lat) * 110_574);
      if (d < bd) {
        bd = d;
        best = i;
      }
    }
    // "near": within 12 screen pixels, in metres at this zoom
    const mPerPx = (40_075_016.686 * Math.cos((lat * Math.PI) / 180)) / (512 * 2 ** map.getZoom());
    const next = best >= 0 && bd <= 12 * mPerPx ? best : null;
    if (next !== st.markedTrace) {
      st.markedTrace = next;
      requestDraw();
    }
  });
  const hoverLayers = ['survey-lines-hit'];
  for (const id of hoverLayers) {
    map.on('click', id, (e) => {
      // anomalies lie over lines: a click on an anomaly opens the anomaly (and its line) instead
      if (map.queryRenderedFeatures(e.point, { layers: ['anomalies-fill', 'anomalies-point', 'anomalies-line'].filter((l) => map.getLayer(l)) }).length) return;
      const f = e.features?.[0];
      if (f) void open(String(f.properties?.id)).catch(report);
    });
    map.on('mouseenter', id, () => (map.getCanvas().style.cursor = 'pointer'));
    map.on('mouseleave', id, () => (map.getCanvas().style.cursor = ''));
  }

  const open = async (id: string, markTrace?: number) => {
    const l = rgIndex.lines.find((x) => x.id === id);
    if (!l) throw new Error(`no radargram for line "${id}" in radargrams/index.json`);
    const started = performance.now();
    const d = await bytesOf(l);
    st.timings.fetchMs = performance.now() - started;
    if (!d || d.length < l.nTraces * l.nSamples) throw new Error(`${l.file} is missing or shorter than ${l.nTraces} x ${l.nSamples} samples`);
    const wasOpen = st.line === id;
    line = l;
    data = d;
    along = alongLine(l, mpu);
    // the clip level: percentiles of |a| on an even sample of the line
    const step = Math.max(1, Math.floor(d.length / 65_536));
    const abs = new Float32Array(Math.ceil(d.length / step));
    let n = 0;
    for (let i = 0; i < d.length; i += step) {
      const a = Math.abs(d[i]!);
      if (Number.isFinite(a)) abs[n++] = a;
    }
    absSorted = abs.subarray(0, n).sort();
    hyps = (velocity?.hyperbolas ?? []).filter((x) => x.line === id && !(x.flags && x.flags.length));
    st.line = id;
    if (!wasOpen) {
      st.view = { tr0: 0, tr1: l.nTraces, s0: 0, s1: l.nSamples };
      st.match = null;
      st.matchCoherence = null;
      flankX = null;
      cursor = null;
      updateReadout();
    }
    st.markedTrace = markTrace ?? null;
    sel.value = id;
    if (root.hidden) {
      root.hidden = false;
      map.resize(); // the map's box shrank
    }
    if (!wasOpen && map.getLayer('survey-line-open')) map.setFilter('survey-line-open', ['==', ['get', 'id'], id]);
    draw();
    st.timings.openMs = performance.now() - started;
  };

  // pointer on the radargram: pan, or match (place apex, drag the flank handle)
  let drag: { kind: 'pan' | 'flank' | 'apex'; x: number; y: number; view: LineBrowserState['view'] } | null = null;
  const local = (e: MouseEvent) => {
    const r = canvas.getBoundingClientRect();
    return [((e.clientX - r.left) * canvas.width) / r.width, ((e.clientY - r.top) * canvas.height) / r.height] as const;
  };
  canvas.addEventListener('mousedown', (e) => {
    if (!line) return;
    canvas.focus({ preventScroll: true });
    const [x, y] = local(e);
    if (matchMode.checked) {
      const fh = flankHandle();
      const ap = st.match ? [xOfTr(traceAt(along, st.match.x0M)), yOfTime(st.match.t0Ns)] : null;
      if (fh && Math.hypot(fh[0] - x, fh[1] - y) <= HANDLE_PX) drag = { kind: 'flank', x, y, view: { ...st.view } };
      else if (ap && Math.hypot(ap[0]! - x, ap[1]! - y) <= HANDLE_PX) drag = { kind: 'apex', x, y, view: { ...st.view } };
      else {
        placeApex(alongOf(trOfX(x)), timeOfY(y));
        drag = { kind: 'flank', x, y, view: { ...st.view } };
      }
    } else drag = { kind: 'pan', x, y, view: { ...st.view } };
    e.preventDefault();
  });
  window.addEventListener('mouseup', () => (drag = null));
  // the cursor's last place on the radargram stays (marked with a cross) for "Fit here"
  canvas.addEventListener('mouseleave', () => {
    setCursorOnMap(null);
    requestDraw();
  });
  canvas.addEventListener('keydown', (e) => {
    if (e.key === 'f') {
      e.preventDefault();
      void fitHere().catch((err) => (msg.textContent = (err as Error).message));
    }
  });
  window.addEventListener('mousemove', (e) => {
    if (!line) return;
    const [x, y] = local(e);
    if (e.target === canvas) {
      const tr = trOfX(x);
      cursor = { tr, s: sOfY(y) };
      const t = timeOfY(y);
      const dist = alongOf(tr);
      const unitK = state.unit === 'ft' ? 1 / FT : 1;
      cursorEl.textContent = `trace ${Math.round(Math.max(0, tr)) * (line.traceStep ?? 1)}, ${dist.toFixed(2)} m along, ${t.toFixed(2)} ns, depth ${(depthAtVerticalTimeNs(model, Math.max(0, t)) * unitK).toFixed(2)} ${state.unit}`;
      setCursorOnMap(tr);
      if (!st.match && !drag) requestDraw();
    }
    if (!drag) return;
    if (drag.kind === 'pan') {
      const dTr = ((x - drag.x) / pw()) * (drag.view.tr1 - drag.view.tr0);
      const dS = ((y - drag.y) / ph()) * (drag.view.s1 - drag.view.s0);
      st.view = { tr0: drag.view.tr0 - dTr, tr1: drag.view.tr1 - dTr, s0: drag.view.s0 - dS, s1: drag.view.s1 - dS };
    } else if (drag.kind === 'apex' && st.match) {
      placeApex(alongOf(trOfX(x)), timeOfY(y), true);
    } else if (drag.kind === 'flank' && st.match) {
      dragFlank(alongOf(trOfX(x)) - st.match.x0M, timeOfY(y), e.shiftKey);
    }
    requestDraw();
  });
  canvas.addEventListener(
    'wheel',
    (e) => {
      if (!line) return;
      e.preventDefault();
      const [x, y] = local(e);
      const f = Math.exp(e.deltaY * 0.0015);
      const tr = trOfX(x) + 0.5;
      const s = sOfY(y);
      const v = st.view;
      // shift: time only; alt: distance only
      const fx = e.shiftKey ? 1 : f;
      const fy = e.altKey ? 1 : f;
      st.view = { tr0: tr - (tr - v.tr0) * fx, tr1: tr + (v.tr1 - tr) * fx, s0: s - (s - v.s0) * fy, s1: s + (v.s1 - s) * fy };
      requestDraw();
    },
    { passive: false },
  );

  const placeApex = (x0M: number, t0Ns: number, keepVelocity = false) => {
    const v = keepVelocity && st.match ? st.match.velocityMPerNs : siteV;
    setMatch({ line: line!.id, x0M, t0Ns: Math.max(line!.dtNs, t0Ns), velocityMPerNs: v, radiusM: Number(radius.value) }, 'hand');
    if (!keepVelocity || flankX === null) flankX = Math.min(1, along[along.length - 1]! / 4);
  };
  /** The flank handle sets the velocity; with shift held, the radius at the velocity it has. */
  const dragFlank = (offsetM: number, timeNs: number, radiusToo = false) => {
    const m = st.match!;
    if (Math.abs(offsetM) < 1e-3) return;
    flankX = offsetM;
    if (radiusToo) {
      const r = radiusThrough(m.t0Ns, offsetM, timeNs, m.velocityMPerNs, sep);
      radius.value = String(Math.min(Number(radius.max), r));
      $('lb-radius-v').textContent = `${r.toFixed(2)} m`;
      setMatch({ ...m, radiusM: r }, 'hand');
    } else setMatch({ ...m, velocityMPerNs: velocityThrough(m.t0Ns, offsetM, timeNs, sep, m.radiusM) }, 'hand');
  };
  radius.addEventListener('input', () => {
    $('lb-radius-v').textContent = `${Number(radius.value).toFixed(2)} m`;
    if (st.match) {
      setMatch({ ...st.match, radiusM: Number(radius.value) }, st.match.source);
      requestDraw();
    }
  });
  const setMatch = (m: HandMatch, source: 'hand' | 'fit') => {
    st.match = { ...m, ...matchReadout(m, sep), source };
    st.matchCoherence = coherence(m);
    updateReadout();
  };
  /** Mean |a| along the curve over the aperture of the flank handle (or 1 m), over the clip level. */
  const coherence = (m: HandMatch): number | null => {
    if (!line || !data) return null;
    const half = Math.abs(flankX ?? 1) || 1;
    const a = traceAt(along, m.x0M - half);
    const b = traceAt(along, m.x0M + half);
    let sum = 0;
    let n = 0;
    const xs = [0];
    for (let tr = Math.ceil(a); tr <= Math.floor(b); tr++) {
      xs[0] = along[tr]! - m.x0M;
      const t = matchTimes(m, xs, sep)[0]!;
      const s = Math.round((t + t0()) / line.dtNs);
      if (s < 0 || s >= line.nSamples) continue;
      // the strongest |a| within a sample of the curve (the curve is drawn to the sample grid)
      let best = 0;
      for (let k = -1; k <= 1; k++) best = Math.max(best, Math.abs(data[tr * line.nSamples + Math.min(line.nSamples - 1, Math.max(0, s + k))]!));
      sum += best;
      n++;
    }
    return n ? sum / n / clipLevel() : null;
  };
  const updateReadout = () => {
    const m = st.match;
    if (!m) {
      readout.replaceChildren(matchMode.checked ? 'Click on the apex of an event, then drag the white handle onto its flank (with shift: the object radius).' : 'Tick "Match hyperbola" to lay a hyperbola over an event.');
      return;
    }
    const unitK = state.unit === 'ft' ? 1 / FT : 1;
    const verdict = m.origin === 'above-ground' ? 'above ground (air wave): K below 2' : m.origin === 'implausible' ? 'implausible (K beyond any soil)' : 'subsurface (in the soil)';
    readout.replaceChildren(
      h('div', { id: 'match-v' }, `v ${m.velocityMPerNs.toFixed(4)} m/ns`),
      h('div', { id: 'match-k' }, `K ${m.permittivity.toFixed(2)}`),
      h('div', { id: 'match-depth' }, `apex ${m.t0Ns.toFixed(2)} ns, ${m.origin === 'above-ground' ? 'apparent ' : ''}depth ${(m.apexDepthM * unitK).toFixed(2)} ${state.unit}`),
      h('div', { id: 'match-verdict', class: `verdict ${m.origin}` }, verdict + (m.flags.length ? ` (${m.flags.join(', ')})` : '')),
      h('div', {}, `site K ${velocity?.site.permittivity ? velocity.site.permittivity.toFixed(2) : 'n/a'}; ${m.source === 'fit' ? 'automatic fit' : 'matched by hand'}${st.matchCoherence !== null ? `; on-curve amplitude ${st.matchCoherence.toFixed(2)} of clip` : ''}`),
    );
  };
  matchMode.addEventListener('change', () => {
    canvas.style.cursor = matchMode.checked ? 'crosshair' : 'grab';
    updateReadout();
  });

  // fit here: the automatic fitter of @lamina/velocity on picks near the cursor (server side)
  $('lb-fit').addEventListener('click', () => void fitHere().catch((e) => (msg.textContent = (e as Error).message)));
  const fitHere = async () => {
    if (!line) return;
    const at = st.match ? { trace: traceAt(along, st.match.x0M), timeNs: st.match.t0Ns } : cursor ? { trace: cursor.tr, timeNs: cursor.s * line.dtNs - t0() } : null;
    if (!at) throw new Error('place an apex (match mode) or point at an event on the radargram first');
    msg.textContent = 'fitting ...';
    const r = await fetch('api/fit', { method: 'POST', headers: { 'Content-Type': 'application/json' }, body: JSON.stringify({ line: line.id, trace: at.trace, timeNs: at.timeNs }) });
    const body = (await r.json()) as { error?: string; fit?: { x0M: number; t0Ns: number; velocityMPerNs: number; radiusM: number; halfApertureM: number } | null };
    if (!r.ok) throw new Error(body.error ?? `HTTP ${r.status}`);
    if (!body.fit) {
      msg.textContent = 'no hyperbola found near there by the automatic fitter';
      return;
    }
    flankX = body.fit.halfApertureM;
    radius.value = String(Math.min(Number(radius.max), body.fit.radiusM));
    setMatch({ line: line.id, x0M: body.fit.x0M, t0Ns: body.fit.t0Ns, velocityMPerNs: body.fit.velocityMPerNs, radiusM: body.fit.radiusM }, 'fit');
    msg.textContent = 'automatic fit near the cursor';
    requestDraw();
  };

  // save: picks along the match into picks.json (through the server, atomically)
  $('lb-save').addEventListener('click', () => void save().catch((e) => (msg.textContent = (e as Error).message)));
  const save = async () => {
    if (!line || !st.match) throw new Error('no match to save');
    // picks within a quarter period of the curve (half a period is the next lobe of the other polarity)
    const windowNs = 250 / (run.site.antenna?.frequencyMHz ?? 100);
    const picks = dataPicks(st.match, { data: data!, nTraces: line.nTraces, nSamples: line.nSamples, dtNs: line.dtNs, timeZeroNs: t0() }, along, line.traceStep ?? 1, sep, Math.max(0.3, Math.abs(flankX ?? 1)), windowNs);
    if (picks.length < 5) throw new Error(`only ${picks.length} picks under the match: widen it (drag the handle further out)`);
    msg.textContent = 'saving ...';
    const r = await fetch('api/picks', { method: 'POST', headers: { 'Content-Type': 'application/json' }, body: JSON.stringify({ line: line.id, label: `matched in the viewer (${st.match.source})`, picks }) });
    const body = (await r.json()) as { error?: string; count?: number };
    if (!r.ok) throw new Error(body.error ?? `HTTP ${r.status}`);
    msg.textContent = `saved to picks.json (${body.count} match(es)); \`lamina process\` on this folder uses them`;
  };

  gain.addEventListener('input', () => {
    st.gainDb = Number(gain.value);
    $('lb-gain-v').textContent = `${st.gainDb} dB`;
    requestDraw();
  });
  clip.addEventListener('input', () => {
    st.clipPercent = Number(clip.value);
    $('lb-clip-v').textContent = `p${st.clipPercent}`;
    requestDraw();
  });
  $('lb-reset').addEventListener('click', () => {
    if (!line) return;
    st.view = { tr0: 0, tr1: line.nTraces, s0: 0, s1: line.nSamples };
    requestDraw();
  });
  $('lb-close').addEventListener('click', () => {
    root.hidden = true;
    line = undefined;
    st.line = null;
    if (map.getLayer('survey-line-open')) map.setFilter('survey-line-open', ['==', ['get', 'id'], '']);
    setCursorOnMap(null);
    map.resize();
  });
  sel.addEventListener('change', () => {
    if (sel.value) void open(sel.value).catch(report);
  });
  window.addEventListener('resize', requestDraw);
  updateReadout();

  const browser: LineBrowser = { open, state: st };
  handle.line = st;
  handle.openLine = (id: string) => open(id);
  handle.lineToCanvas = (trace: number, timeNs: number) => {
    const r = canvas.getBoundingClientRect();
    return { x: r.left + (xOfTr(trace) * r.width) / canvas.width, y: r.top + (yOfTime(timeNs) * r.height) / canvas.height };
  };
  handle.drawLine = () => draw();
  handle.flankHandle = () => {
    const fh = flankHandle();
    if (!fh) return null;
    const r = canvas.getBoundingClientRect();
    return { x: r.left + (fh[0] * r.width) / canvas.width, y: r.top + (fh[1] * r.height) / canvas.height };
  };
  return browser;
}

function niceStep(raw: number): number {
  if (!(raw > 0)) return 1;
  const p = 10 ** Math.floor(Math.log10(raw));
  const f = raw / p;
  return (f < 1.5 ? 1 : f < 3.5 ? 2 : f < 7.5 ? 5 : 10) * p;
}
