import 'maplibre-gl/dist/maplibre-gl.css';
import './viewer.css';
import { Map as MlMap, NavigationControl, ScaleControl, setWorkerUrl, type GeoJSONSource, type MapLayerMouseEvent, type StyleSpecification } from 'maplibre-gl';
import workerUrl from 'maplibre-gl/dist/maplibre-gl-worker.mjs?url';
import { MapLibreOverlay } from '@deck.gl/maplibre';
import { BitmapLayer } from '@deck.gl/layers';
import type { Layer as DeckLayer } from '@deck.gl/core';
import { COLOUR_MAP_NAMES, colourise, colourMapLabel, colourTable, percentiles } from './colormaps';
import { EMPTY_FC, dataUrl, featureId, getBytes, getJson, normaliseIds, type Config, type Feature, type FeatureCollection, type RadargramIndex, type RadargramLine, type RunJson, type SliceInfo, type SlicesJson, type VelocityJson } from './data';
import { gridCornersWgs84 } from './geo';
import { SliceSource, type BandRaster } from './slice-source';
import { LAYER_GROUPS, ORIGIN_COLOURS, PLAN_COLOURS, SLICE_BEFORE_ID, anomalyOpacity, forecastFilter, offlineStyle, overBasemap } from './style';
import { cautionList, h, renderPanel, type DecisionView } from './panel';
import { drawRadargram, nearestTrace } from './radargram';

setWorkerUrl(workerUrl);

const FT = 0.3048;

export interface ViewerState {
  sliceIndex: number;
  /** Slice index whose raster is on screen after the map went idle; -1 while drawing. */
  drawnSlice: number;
  sliceCount: number;
  unit: 'm' | 'ft';
  colourMap: string;
  clipLo: number;
  clipHi: number;
  /** Data values of the current clip. */
  clipValues: [number, number];
  opacity: number;
  mode: '2d' | '3d';
  exaggeration: number;
  selectedAnomaly: string | null;
  visible: Record<string, boolean>;
  /** ms: first slice from navigation start; last switch; and its parts (band read, colour map, render + idle). */
  timings: { firstSliceMs?: number; lastSwitchMs?: number; bandMs?: number; imageMs?: number; renderMs?: number; mapLoadMs?: number };
  errors: string[];
}

interface LaminaHandle {
  ready: boolean;
  readyPromise: Promise<void>;
  state: ViewerState;
  map?: MlMap;
  setSlice(k: number): Promise<void>;
  setMode(m: '2d' | '3d'): Promise<void>;
  selectAnomaly(id: string): Promise<void>;
  whenDrawn(): Promise<void>;
  /** Resolves at the next maplibre idle after a repaint (layer toggles, paint changes). */
  whenIdle(): Promise<void>;
  /** RGBA of the map canvas at a lon/lat (needs preserveDrawingBuffer, set here). */
  samplePixel(lon: number, lat: number): [number, number, number, number] | null;
  project(lon: number, lat: number): { x: number; y: number } | null;
}

declare global {
  interface Window {
    __lamina: LaminaHandle;
  }
}

const $ = <T extends HTMLElement>(id: string) => document.getElementById(id) as T;

let resolveReady!: () => void;
const state: ViewerState = {
  sliceIndex: 0,
  drawnSlice: -1,
  sliceCount: 0,
  unit: 'm',
  colourMap: 'ember',
  clipLo: 2,
  clipHi: 98,
  clipValues: [0, 1],
  opacity: 0.85,
  mode: '2d',
  exaggeration: 6,
  selectedAnomaly: null,
  visible: Object.fromEntries(LAYER_GROUPS.map((g) => [g.id, true])),
  timings: {},
  errors: [],
};
const handle: LaminaHandle = {
  ready: false,
  readyPromise: new Promise<void>((ok) => (resolveReady = ok)),
  state,
  setSlice: async () => undefined,
  setMode: async () => undefined,
  selectAnomaly: async () => undefined,
  whenDrawn: async () => undefined,
  whenIdle: async () => undefined,
  samplePixel: () => null,
  project: () => null,
};
window.__lamina = handle;
const t0 = performance.now();

function report(e: unknown): void {
  const msg = e instanceof Error ? e.message : String(e);
  state.errors.push(msg);
  console.error(e);
  const el = document.getElementById('export-result');
  if (el) el.append(h('div', { class: 'err' }, msg));
}

async function main(): Promise<void> {
  const config = (await (await fetch('api/config', { cache: 'no-store' })).json()) as Config;
  const run = await getJson<RunJson>('run.json');
  if (!run) throw new Error('run.json is missing: this is not the output folder of `lamina process`');
  const [slicesJson, velocity, rgIndex, plan, lines, anomaliesRaw, forecast, targets] = await Promise.all([
    getJson<SlicesJson>('slices.json'),
    getJson<VelocityJson>('velocity.json'),
    getJson<RadargramIndex>('radargrams/index.json', { lines: [] }),
    getJson<FeatureCollection>('plan.geojson', EMPTY_FC),
    getJson<FeatureCollection>('lines.geojson', EMPTY_FC),
    getJson<FeatureCollection>('anomalies.geojson', EMPTY_FC),
    getJson<FeatureCollection>('forecast.geojson', EMPTY_FC),
    getJson<FeatureCollection>('targets.geojson', EMPTY_FC),
  ]);
  const anomalies = normaliseIds(anomaliesRaw);
  let review = (await (await fetch('api/review', { cache: 'no-store' })).json()) as { decisions: (DecisionView & { anomalyId: string })[] };
  const metresPerUnit = run.site.crs.metresPerUnit ?? 1;
  $('site-name').textContent = run.site.name;
  $('cautions').replaceChildren(...cautionList(config).children);
  $('about-btn').addEventListener('click', () => $<HTMLDialogElement>('about').showModal());

  const slices: SliceInfo[] = (slicesJson?.slices ?? []).slice().sort((a, b) => a.topM - b.topM);
  const zeroBased = slices.some((s) => s.band === 0);
  const sampleOf = (s: SliceInfo) => (zeroBased ? s.band : s.band - 1);
  state.sliceCount = slices.length;
  const source = slices.length ? await SliceSource.open(dataUrl('slices.tif')) : undefined;
  const nodata = source?.nodata ?? (typeof slicesJson?.nodata === 'number' ? slicesJson.nodata : null);
  const corners = source ? gridCornersWgs84(source.geo, run.site.crs.proj4 ?? run.site.crs.input!) : undefined;

  // map
  const ext = boundsOf([plan], run.site.extentWgs84 ?? run.identity?.extent);
  const basemapInput = $<HTMLInputElement>('basemap');
  basemapInput.value = config.basemap ?? '';
  const map = new MlMap({
    container: 'map',
    style: offlineStyle(config.apwa),
    bounds: ext ? [ext[0], ext[1], ext[2], ext[3]] : undefined,
    fitBoundsOptions: { padding: 30 },
    canvasContextAttributes: { preserveDrawingBuffer: true, antialias: true },
    attributionControl: false,
    maxPitch: 80,
  });
  handle.map = map;
  map.addControl(new NavigationControl({ visualizePitch: true }), 'top-right');
  const scaleM = new ScaleControl({ maxWidth: 120, unit: 'metric' });
  const scaleFt = new ScaleControl({ maxWidth: 120, unit: 'imperial' });
  map.addControl(scaleM, 'bottom-left');

  let afterRender: (() => void)[] = [];
  const overlay = new MapLibreOverlay({
    interleaved: true,
    layers: [],
    onAfterRender: () => {
      const waiting = afterRender;
      afterRender = [];
      for (const f of waiting) f();
    },
  });
  map.addControl(overlay);

  const setData = () => {
    (map.getSource('plan') as GeoJSONSource | undefined)?.setData(plan as never);
    (map.getSource('lines') as GeoJSONSource | undefined)?.setData(lines as never);
    (map.getSource('anomalies') as GeoJSONSource | undefined)?.setData(anomalies as never);
    (map.getSource('forecast') as GeoJSONSource | undefined)?.setData(forecast as never);
    (map.getSource('targets') as GeoJSONSource | undefined)?.setData(targets as never);
  };
  await new Promise<void>((ok) => map.once('load', () => ok()));
  state.timings.mapLoadMs = performance.now() - t0;
  setData();

  const applyBasemap = (url: string) => {
    if (url) {
      map.setStyle(url, { transformStyle: (_prev, next) => overBasemap(next as StyleSpecification, config.apwa) });
    } else {
      map.setStyle(offlineStyle(config.apwa), { diff: false });
    }
    map.once('style.load', () => {
      setData();
      applyVisibility();
      applyDepthStyling();
      void redraw();
    });
  };
  basemapInput.addEventListener('change', () => applyBasemap(basemapInput.value.trim()));
  if (config.basemap) applyBasemap(config.basemap);

  // depth labels and units
  const depthText = (m: number) => (state.unit === 'ft' ? `${(m / FT).toFixed(2)} ft` : `${m.toFixed(2)} m`);
  const current = () => slices[state.sliceIndex];

  const updateDepthLabel = () => {
    const s = current();
    $('depth-label').textContent = s ? `${depthText(s.topM)} to ${depthText(s.bottomM)} (slice ${state.sliceIndex + 1} of ${slices.length})` : 'no slices in this output folder';
  };
  const depthInput = $<HTMLInputElement>('depth');
  depthInput.max = String(Math.max(0, slices.length - 1));

  // slice rendering
  const clipFor = (s: SliceInfo, r: BandRaster): [number, number] => {
    if (state.clipLo === 2 && state.clipHi === 98 && Number.isFinite(s.stats?.p2) && Number.isFinite(s.stats?.p98)) return [s.stats!.p2!, s.stats!.p98!];
    const [lo, hi] = percentiles(r.values, nodata, [state.clipLo, state.clipHi]);
    return [lo!, hi!];
  };
  const imageOf = (s: SliceInfo, r: BandRaster): ImageData => {
    const [lo, hi] = clipFor(s, r);
    if (s === current()) state.clipValues = [lo, hi];
    const rgba = colourise(r.values, nodata, lo, hi, colourTable(state.colourMap), 255);
    return new ImageData(rgba as Uint8ClampedArray<ArrayBuffer>, r.width, r.height);
  };
  const drawColourBar = () => {
    const c = $<HTMLCanvasElement>('colour-bar');
    const ctx = c.getContext('2d')!;
    const lut = colourTable(state.colourMap);
    for (let x = 0; x < c.width; x++) {
      const i = Math.round((x / (c.width - 1)) * 255);
      ctx.fillStyle = `rgb(${lut[i * 3]},${lut[i * 3 + 1]},${lut[i * 3 + 2]})`;
      ctx.fillRect(x, 0, 1, c.height);
    }
    $('cb-lo').textContent = `${+state.clipValues[0].toPrecision(3)} (p${state.clipLo})`;
    $('cb-hi').textContent = `${+state.clipValues[1].toPrecision(3)} (p${state.clipHi})`;
  };

  const stackSamples = () => {
    const n = slices.length;
    const max = 16;
    if (n <= max) return slices.map((_, i) => i);
    return Array.from({ length: max }, (_, i) => Math.round((i * (n - 1)) / (max - 1)));
  };

  let drawSeq = 0;
  const redraw = async (): Promise<void> => {
    const seq = ++drawSeq;
    state.drawnSlice = -1;
    const started = performance.now();
    const layers: DeckLayer[] = [];
    if (source && corners && state.visible.slice) {
      if (state.mode === '2d') {
        const s = current()!;
        const r = await source.band(sampleOf(s));
        if (seq !== drawSeq) return;
        const tb = performance.now();
        state.timings.bandMs = tb - started;
        const image = imageOf(s, r);
        state.timings.imageMs = performance.now() - tb;
        layers.push(new BitmapLayer({ id: `slice`, beforeId: SLICE_BEFORE_ID, image, bounds: corners as never, opacity: state.opacity, textureParameters: { minFilter: 'nearest', magFilter: 'nearest' } } as never));
      } else {
        const idx = stackSamples();
        const rasters = await Promise.all(idx.map((i) => source.band(sampleOf(slices[i]!))));
        if (seq !== drawSeq) return;
        // deepest first, no depth writes: the translucent stack blends in order
        for (let j = idx.length - 1; j >= 0; j--) {
          const s = slices[idx[j]!]!;
          const z = -((s.topM + s.bottomM) / 2) * state.exaggeration;
          const b = corners.map(([x, y]) => [x, y, z]);
          const isCurrent = idx[j] === state.sliceIndex;
          layers.push(
            new BitmapLayer({
              id: `stack-${idx[j]}`,
              beforeId: SLICE_BEFORE_ID,
              image: imageOf(s, rasters[j]!),
              bounds: b as never,
              opacity: isCurrent ? Math.max(state.opacity, 0.9) : state.opacity * 0.55,
              parameters: { depthWriteEnabled: false },
              textureParameters: { minFilter: 'nearest', magFilter: 'nearest' },
            } as never),
          );
        }
      }
    }
    overlay.setProps({ layers });
    drawColourBar();
    const tr = performance.now();
    await new Promise<void>((ok) => {
      afterRender.push(ok);
      map.triggerRepaint();
    });
    // the frame that drew the layers is enough when the map has nothing else to load
    if (!map.loaded()) await new Promise<void>((ok) => map.once('idle', () => ok()));
    if (seq !== drawSeq) return;
    state.timings.renderMs = performance.now() - tr;
    state.drawnSlice = state.sliceIndex;
    const ms = performance.now() - started;
    if (state.timings.firstSliceMs === undefined) state.timings.firstSliceMs = performance.now() - t0;
    else state.timings.lastSwitchMs = ms;
  };
  let drawing: Promise<void> = Promise.resolve();
  const requestDraw = () => (drawing = redraw().catch(report));

  const applyDepthStyling = () => {
    const s = current();
    if (!s || !map.getLayer('anomalies-fill')) return;
    map.setPaintProperty('anomalies-fill', 'fill-opacity', anomalyOpacity(s.topM, s.bottomM, 0.3));
    map.setPaintProperty('anomalies-line', 'line-opacity', anomalyOpacity(s.topM, s.bottomM, 1));
    map.setPaintProperty('anomalies-point', 'circle-opacity', anomalyOpacity(s.topM, s.bottomM, 1));
    const ff = forecastFilter(s.index ?? state.sliceIndex, s.band, s.topM, s.bottomM);
    map.setFilter('forecast-line', ['all', ['in', ['geometry-type'], ['literal', ['LineString', 'MultiLineString', 'Polygon', 'MultiPolygon']]], ff]);
    map.setFilter('forecast-point', ['all', ['in', ['geometry-type'], ['literal', ['Point', 'MultiPoint']]], ff]);
  };

  const setSlice = async (k: number) => {
    if (!slices.length) return;
    state.sliceIndex = Math.max(0, Math.min(slices.length - 1, Math.round(k)));
    depthInput.value = String(state.sliceIndex);
    updateDepthLabel();
    applyDepthStyling();
    requestDraw();
    await drawing;
  };
  handle.setSlice = setSlice;
  handle.whenDrawn = () => drawing;
  handle.whenIdle = () =>
    new Promise<void>((ok) => {
      map.once('idle', () => ok());
      map.triggerRepaint();
    });

  depthInput.addEventListener('input', () => void setSlice(Number(depthInput.value)));
  $('depth-up').addEventListener('click', () => void setSlice(state.sliceIndex - 1));
  $('depth-down').addEventListener('click', () => void setSlice(state.sliceIndex + 1));
  window.addEventListener('keydown', (e) => {
    const t = e.target as HTMLElement | null;
    // leave keys to fields that take text; checkboxes, buttons and sliders do not
    if (t && (t.tagName === 'TEXTAREA' || t.tagName === 'SELECT' || (t.tagName === 'INPUT' && !['range', 'checkbox', 'button'].includes((t as HTMLInputElement).type)))) return;
    if (e.key === ']' || e.key === 'PageDown') {
      e.preventDefault();
      void setSlice(state.sliceIndex + 1);
    } else if (e.key === '[' || e.key === 'PageUp') {
      e.preventDefault();
      void setSlice(state.sliceIndex - 1);
    }
  });
  const unitSel = $<HTMLSelectElement>('unit');
  unitSel.addEventListener('change', () => {
    state.unit = unitSel.value === 'ft' ? 'ft' : 'm';
    map.removeControl(state.unit === 'ft' ? scaleM : scaleFt);
    map.addControl(state.unit === 'ft' ? scaleFt : scaleM, 'bottom-left');
    updateDepthLabel();
    if (state.selectedAnomaly) void selectAnomaly(state.selectedAnomaly);
  });

  const cmSel = $<HTMLSelectElement>('colour-map');
  cmSel.replaceChildren(...COLOUR_MAP_NAMES.map((n) => h('option', { value: n }, colourMapLabel(n))));
  cmSel.value = state.colourMap;
  cmSel.addEventListener('change', () => {
    state.colourMap = cmSel.value;
    requestDraw();
  });
  const clipLo = $<HTMLInputElement>('clip-lo');
  const clipHi = $<HTMLInputElement>('clip-hi');
  const onClip = () => {
    state.clipLo = Number(clipLo.value);
    state.clipHi = Number(clipHi.value);
    $('clip-lo-v').textContent = `p${state.clipLo}`;
    $('clip-hi-v').textContent = `p${state.clipHi}`;
    requestDraw();
  };
  clipLo.addEventListener('change', onClip);
  clipHi.addEventListener('change', onClip);
  const opacity = $<HTMLInputElement>('opacity');
  opacity.addEventListener('input', () => {
    state.opacity = Number(opacity.value) / 100;
    requestDraw();
  });

  // 3D mode
  const mode3d = $<HTMLInputElement>('mode-3d');
  const setMode = async (m: '2d' | '3d') => {
    state.mode = m;
    mode3d.checked = m === '3d';
    map.easeTo(m === '3d' ? { pitch: 60, bearing: -25, duration: 0 } : { pitch: 0, bearing: 0, duration: 0 });
    requestDraw();
    await drawing;
  };
  handle.setMode = setMode;
  mode3d.addEventListener('change', () => void setMode(mode3d.checked ? '3d' : '2d'));
  const exag = $<HTMLInputElement>('exaggeration');
  exag.addEventListener('change', () => {
    state.exaggeration = Number(exag.value);
    if (state.mode === '3d') requestDraw();
  });

  // layer toggles and legend
  const applyVisibility = () => {
    for (const g of LAYER_GROUPS) for (const id of g.layers) if (map.getLayer(id)) map.setLayoutProperty(id, 'visibility', state.visible[g.id] ? 'visible' : 'none');
  };
  $('layer-toggles').replaceChildren(
    ...LAYER_GROUPS.map((g) => {
      const cb = h('input', { type: 'checkbox', id: `toggle-${g.id}` });
      cb.checked = true;
      cb.addEventListener('change', () => {
        state.visible[g.id] = cb.checked;
        if (g.id === 'slice') requestDraw();
        else applyVisibility();
      });
      return h('label', {}, cb, ` ${g.label}`);
    }),
  );
  const sw = (colour: string, text: string, dashed = false) => h('div', {}, h('span', { class: 'swatch', style: `background:${colour};${dashed ? 'border-style:dashed' : ''}` }), text);
  const usedTypes = new Set(targets.features.map((f) => String(f.properties?.utilityType ?? 'unknown')));
  $('legend').replaceChildren(
    sw(ORIGIN_COLOURS.subsurface, 'Anomaly: subsurface (stronger = more confident)'),
    sw(ORIGIN_COLOURS['above-ground'], 'Anomaly: above-ground reflection'),
    sw(PLAN_COLOURS.forecast, 'Forecast air-wave locus at this depth', true),
    sw(PLAN_COLOURS.building, 'Building (extruded by height)'),
    sw(PLAN_COLOURS.wall, 'Wall / post'),
    sw(PLAN_COLOURS.fence, 'Fence', true),
    sw(PLAN_COLOURS.tree, 'Tree'),
    sw(PLAN_COLOURS.column, 'Column'),
    sw(PLAN_COLOURS.overhead, 'Overhead object (height in its properties)', true),
    sw(PLAN_COLOURS.lines, 'Survey line'),
    h('div', {}, 'Accepted targets (APWA colour code):'),
    ...config.utilityTypes.filter((u) => usedTypes.has(u) || u !== 'unknown').map((u) => sw(config.apwa[u]?.hex ?? '#999', `${u} (${config.apwa[u]?.name ?? ''})`)),
  );

  // anomaly panel
  const panel = $('panel');
  const rgCache = new Map<string, Promise<Float32Array | undefined>>();
  const radargramOf = (l: RadargramLine) => {
    let p = rgCache.get(l.id);
    if (!p) {
      // `file` is relative to the output folder (radargrams/<line>.f32); a bare name is taken inside radargrams/
      p = getBytes(l.file.includes('/') ? l.file : `radargrams/${l.file}`).then((b) => (b ? new Float32Array(b) : undefined));
      rgCache.set(l.id, p);
    }
    return p;
  };
  let selectedNumericId: number | undefined;
  const selectAnomaly = async (id: string) => {
    const f = anomalies.features.find((x) => featureId(x) === id);
    if (!f) throw new Error(`no anomaly "${id}"`);
    if (selectedNumericId !== undefined) map.setFeatureState({ source: 'anomalies', id: selectedNumericId }, { selected: false });
    selectedNumericId = Number(f.id);
    map.setFeatureState({ source: 'anomalies', id: selectedNumericId }, { selected: true });
    state.selectedAnomaly = id;
    const decision = review.decisions.find((d) => d.anomalyId === id);
    const { canvas, radargramNote } = renderPanel(panel, f, config, decision, depthText, {
      close: () => {
        panel.hidden = true;
        state.selectedAnomaly = null;
        map.resize();
      },
      save: async (change) => {
        const r = await fetch('api/review', { method: 'POST', headers: { 'Content-Type': 'application/json' }, body: JSON.stringify({ anomalyId: id, ...change }) });
        const body = (await r.json()) as { error?: string; review?: typeof review; decision?: DecisionView };
        if (!r.ok) throw new Error(body.error ?? `HTTP ${r.status}`);
        review = body.review ?? review;
        $('decision-status').textContent = `Decision: ${body.decision?.decision ?? 'undecided'} (${body.decision?.updatedAt ?? ''})`;
      },
    });
    map.resize();
    const anchor = anchorOf(f);
    const hit = anchor ? nearestTrace(rgIndex.lines, anchor[0], anchor[1]) : undefined;
    if (!hit) {
      radargramNote.textContent = 'No radargram in this output folder.';
      return;
    }
    const line = rgIndex.lines[hit[0]]!;
    const data = await radargramOf(line);
    if (!data || data.length < line.nTraces * line.nSamples) {
      radargramNote.textContent = `${line.file} is missing or shorter than ${line.nTraces} x ${line.nSamples} samples.`;
      return;
    }
    const hyps = (velocity?.hyperbolas ?? []).filter((x) => x.line === line.id && !(x.flags && x.flags.length));
    const v = velocity?.site.velocityMPerNs ?? velocity?.model?.layers[0]?.velocityMPerNs ?? 0.1;
    drawRadargram(canvas, {
      line,
      data,
      metresPerUnit,
      layers: velocity?.model?.layers ?? [],
      velocity: v,
      separationM: run.site.antenna?.separationM ?? 0,
      hyperbolas: hyps,
      markTrace: hit[1],
      unit: state.unit,
    });
    radargramNote.textContent = `Line ${line.id}, nearest trace ${hit[1] * (line.traceStep ?? 1)} at ${hit[2].toFixed(2)} m; ${hyps.length} fitted hyperbola(s) on this line (apex marked).`;
    canvas.dataset.line = line.id;
    canvas.dataset.hyperbolas = String(hyps.length);
  };
  handle.selectAnomaly = selectAnomaly;
  for (const id of ['anomalies-fill', 'anomalies-point', 'anomalies-line']) {
    map.on('click', id, (e: MapLayerMouseEvent) => {
      const f = e.features?.[0];
      if (f) void selectAnomaly(String(f.properties?.id)).catch(report);
    });
    map.on('mouseenter', id, () => (map.getCanvas().style.cursor = 'pointer'));
    map.on('mouseleave', id, () => (map.getCanvas().style.cursor = ''));
  }

  // export
  const exportBtn = $<HTMLButtonElement>('export-btn');
  exportBtn.addEventListener('click', async () => {
    const out = $('export-result');
    out.replaceChildren('exporting ...');
    try {
      const r = await fetch('api/export', { method: 'POST', headers: { 'Content-Type': 'application/json' }, body: '{}' });
      const body = (await r.json()) as { error?: string; result?: unknown };
      if (!r.ok) throw new Error(body.error ?? `HTTP ${r.status}`);
      const fresh = await getJson<FeatureCollection>('targets.geojson', EMPTY_FC);
      targets.features = fresh.features;
      (map.getSource('targets') as GeoJSONSource | undefined)?.setData(targets as never);
      out.replaceChildren(
        h('div', { id: 'export-ok' }, `Exported ${fresh.features.length} target(s): targets.geojson, .gpkg, .csv, .dxf and report.html in the output folder.`),
        h('div', { class: 'cautions' }, h('strong', {}, 'Before anyone digs:'), cautionList(config)),
      );
    } catch (e) {
      out.replaceChildren(h('div', { class: 'err', id: 'export-error' }, (e as Error).message), h('div', { class: 'cautions' }, cautionList(config)));
    }
  });

  handle.samplePixel = (lon, lat) => {
    const p = map.project([lon, lat]);
    const c = map.getCanvas();
    const k = c.width / c.clientWidth;
    const x = Math.round(p.x * k);
    const y = Math.round(p.y * k);
    if (x < 0 || y < 0 || x >= c.width || y >= c.height) return null;
    const tmp = document.createElement('canvas');
    tmp.width = 1;
    tmp.height = 1;
    const ctx = tmp.getContext('2d')!;
    ctx.drawImage(c, x, y, 1, 1, 0, 0, 1, 1);
    const d = ctx.getImageData(0, 0, 1, 1).data;
    return [d[0]!, d[1]!, d[2]!, d[3]!];
  };
  handle.project = (lon, lat) => {
    const p = map.project([lon, lat]);
    return { x: p.x, y: p.y };
  };

  updateDepthLabel();
  applyDepthStyling();
  await setSlice(0);
  handle.ready = true;
  resolveReady();
}

/** Survey extent grown to take in the site plan (buildings beside the surveyed ground). */
function boundsOf(fcs: FeatureCollection[], ext: [number, number, number, number] | undefined): [number, number, number, number] | undefined {
  let [w, s, e, n] = ext ?? [Infinity, Infinity, -Infinity, -Infinity];
  const walk = (c: unknown) => {
    if (Array.isArray(c) && typeof c[0] === 'number') {
      const [x, y] = c as number[];
      w = Math.min(w, x!);
      e = Math.max(e, x!);
      s = Math.min(s, y!);
      n = Math.max(n, y!);
    } else if (Array.isArray(c)) for (const x of c) walk(x);
  };
  for (const fc of fcs) for (const f of fc.features) walk(f.geometry?.coordinates);
  return Number.isFinite(w) && Number.isFinite(n) ? [w, s, e, n] : undefined;
}

function anchorOf(f: Feature): [number, number] | undefined {
  const g = f.geometry;
  const p = f.properties ?? {};
  if (typeof p.lon === 'number' && typeof p.lat === 'number') return [p.lon, p.lat];
  const c = p.centroid;
  if (Array.isArray(c) && typeof c[0] === 'number' && typeof c[1] === 'number') return [c[0], c[1]];
  if (!g) return undefined;
  const flat: number[][] = [];
  const walk = (c: unknown) => {
    if (Array.isArray(c) && typeof c[0] === 'number') flat.push(c as number[]);
    else if (Array.isArray(c)) for (const x of c) walk(x);
  };
  walk(g.coordinates);
  if (!flat.length) return undefined;
  return [flat.reduce((s, c) => s + c[0]!, 0) / flat.length, flat.reduce((s, c) => s + c[1]!, 0) / flat.length];
}

main().catch((e) => {
  report(e);
  handle.ready = true;
  resolveReady();
});
