import { BitmapLayer } from '@deck.gl/layers';
import type { Layer as DeckLayer } from '@deck.gl/core';
import { colourise, colourTable, percentiles } from './colormaps';
import { dataUrl, type SliceInfo } from './data';
import type { Folder } from './folder';
import { gridCornersWgs84 } from './geo';
import type { MapView } from './map-view';
import { SliceSource, type BandRaster } from './slice-source';
import { $, depthText, handle, report, state } from './state';
import { SLICE_BEFORE_ID, anomalyOpacity, buildingHeight, forecastFilter } from './style';

/** The depth slices on the map: one slice in 2D, a translucent stack in 3D, the colour bar, the depth label. */
export interface SlicesView {
  slices: SliceInfo[];
  current(): SliceInfo | undefined;
  redraw(): Promise<void>;
  /** Redraw, reporting any error; `whenDrawn` waits for it. */
  requestDraw(): void;
  whenDrawn(): Promise<void>;
  /** Anomaly opacity and the forecast filter follow the current slice's depth. */
  applyDepthStyling(): void;
  updateDepthLabel(): void;
  setSlice(k: number): Promise<void>;
  setMode(m: '2d' | '3d'): Promise<void>;
}

/** The slices of the folder, shallowest first, and slices.tif opened (its header read) with its corners on the map. */
export interface SliceData {
  slices: SliceInfo[];
  /** Band of the GeoTIFF (0-based) that holds a slice. */
  sampleOf(s: SliceInfo): number;
  source: SliceSource | undefined;
  nodata: number | null;
  corners: [number, number][] | undefined;
  /** How cells were gridded (slices.json `gridding.mode`). */
  mode: string;
}

export async function openSlices(folder: Folder): Promise<SliceData> {
  const { run, slicesJson } = folder;
  const slices: SliceInfo[] = (slicesJson?.slices ?? []).slice().sort((a, b) => a.topM - b.topM);
  const zeroBased = slices.some((s) => s.band === 0);
  const sampleOf = (s: SliceInfo) => (zeroBased ? s.band : s.band - 1);
  state.sliceCount = slices.length;
  const source = slices.length ? await SliceSource.open(dataUrl('slices.tif')) : undefined;
  const nodata = source?.nodata ?? (typeof slicesJson?.nodata === 'number' ? slicesJson.nodata : null);
  const corners = source ? gridCornersWgs84(source.geo, run.site.crs.proj4 ?? run.site.crs.input!) : undefined;
  return { slices, sampleOf, source, nodata, corners, mode: slicesJson?.gridding?.mode ?? 'mean-square' };
}

export function createSlicesView(data: SliceData, view: MapView, t0: number): SlicesView {
  const { slices, sampleOf, source, nodata, corners, mode } = data;
  // the value of a cell: the slice window's mean square (or mean absolute) processed amplitude, in the recorded units of the data
  const sliceUnit = mode === 'mean-abs' ? 'mean |amplitude| in the slice window (data units)' : 'mean square amplitude in the slice window (data units squared)';
  const { map, overlay } = view;

  const current = () => slices[state.sliceIndex];
  const updateDepthLabel = () => {
    const s = current();
    $('depth-label').textContent = s ? `${depthText(s.topM)} to ${depthText(s.bottomM)} (slice ${state.sliceIndex + 1} of ${slices.length})` : 'no slices in this output folder';
  };
  const depthInput = $<HTMLInputElement>('depth');
  depthInput.max = String(Math.max(0, slices.length - 1));

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
    $('cb-unit').textContent = sliceUnit;
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
    const rendered = view.afterRender();
    map.triggerRepaint();
    await rendered;
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
  const requestDraw = () => {
    drawing = redraw().catch(report);
  };

  const applyDepthStyling = () => {
    const s = current();
    if (!s || !map.getLayer('anomalies-fill')) return;
    map.setPaintProperty('anomalies-fill', 'fill-opacity', anomalyOpacity(s.topM, s.bottomM, 0.3));
    map.setPaintProperty('anomalies-line', 'line-opacity', anomalyOpacity(s.topM, s.bottomM, 1));
    map.setPaintProperty('anomalies-point', 'circle-opacity', anomalyOpacity(s.topM, s.bottomM, 1));
    const ff = forecastFilter(s.index ?? state.sliceIndex, s.band, s.topM, s.bottomM);
    map.setFilter('forecast-line', ['all', ['in', ['geometry-type'], ['literal', ['LineString', 'MultiLineString', 'Polygon', 'MultiPolygon']]], ff]);
    map.setFilter('forecast-point', ['all', ['in', ['geometry-type'], ['literal', ['Point', 'MultiPoint']]], ff]);
    if (map.getLayer('plan-buildings')) map.setPaintProperty('plan-buildings', 'fill-extrusion-height', buildingHeight(state.mode));
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

  const mode3d = $<HTMLInputElement>('mode-3d');
  const setMode = async (m: '2d' | '3d') => {
    state.mode = m;
    mode3d.checked = m === '3d';
    map.easeTo(m === '3d' ? { pitch: 60, bearing: -25, duration: 0 } : { pitch: 0, bearing: 0, duration: 0 });
    applyDepthStyling();
    requestDraw();
    await drawing;
  };

  handle.setSlice = setSlice;
  handle.setMode = setMode;
  handle.whenDrawn = () => drawing;
  return { slices, current, redraw, requestDraw, whenDrawn: () => drawing, applyDepthStyling, updateDepthLabel, setSlice, setMode };
}
