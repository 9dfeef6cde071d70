import { Map as MlMap, NavigationControl, ScaleControl, type GeoJSONSource, type StyleSpecification } from 'maplibre-gl';
import { MapLibreOverlay } from '@deck.gl/maplibre';
import type { FeatureCollection } from './data';
import type { Folder } from './folder';
import { $, handle, state } from './state';
import { offlineStyle, overBasemap } from './style';

/** The map, its deck.gl overlay (the slice rasters) and the folder's vector layers. */
export interface MapView {
  map: MlMap;
  overlay: MapLibreOverlay;
  scaleM: ScaleControl;
  scaleFt: ScaleControl;
  /** Resolves after the overlay's next render. */
  afterRender(): Promise<void>;
  /** Puts the folder's feature collections into the style's sources (again after a style change). */
  setData(): void;
}

/** The map over the survey; resolves once the style has loaded and the data is in. */
export async function createMap(folder: Folder, t0: number): Promise<MapView> {
  const { config, run, plan, lines, anomalies, forecast, targets } = folder;
  const ext = boundsOf([plan], run.site.extentWgs84 ?? run.identity?.extent);
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

  let waiting: (() => void)[] = [];
  const overlay = new MapLibreOverlay({
    interleaved: true,
    layers: [],
    onAfterRender: () => {
      const now = waiting;
      waiting = [];
      for (const f of now) f();
    },
  });
  map.addControl(overlay);

  const setData = () => {
    void (map.getSource('plan') as GeoJSONSource | undefined)?.setData(plan as never);
    void (map.getSource('lines') as GeoJSONSource | undefined)?.setData(lines as never);
    void (map.getSource('anomalies') as GeoJSONSource | undefined)?.setData(anomalies as never);
    void (map.getSource('forecast') as GeoJSONSource | undefined)?.setData(forecast as never);
    void (map.getSource('targets') as GeoJSONSource | undefined)?.setData(targets as never);
  };
  await new Promise<void>((ok) => map.once('load', () => ok()));
  state.timings.mapLoadMs = performance.now() - t0;
  setData();

  handle.whenIdle = () =>
    new Promise<void>((ok) => {
      map.once('idle', () => ok());
      map.triggerRepaint();
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
  const afterRender = () => new Promise<void>((ok) => waiting.push(ok));
  return { map, overlay, scaleM, scaleFt, afterRender, setData };
}

/**
 * The basemap field: a style URL puts the folder's layers over that basemap, an empty one goes back to
 * the offline style; `restyled` runs after each style change has loaded (data, visibility, depth styling).
 */
export function wireBasemap(view: MapView, folder: Folder, restyled: () => void): void {
  const { map } = view;
  const { config } = folder;
  const input = $<HTMLInputElement>('basemap');
  input.value = config.basemap ?? '';
  const apply = (url: string) => {
    if (url) {
      map.setStyle(url, { transformStyle: (_prev, next) => overBasemap(next as StyleSpecification, config.apwa) });
    } else {
      map.setStyle(offlineStyle(config.apwa), { diff: false });
    }
    map.once('style.load', () => {
      view.setData();
      restyled();
    });
  };
  input.addEventListener('change', () => apply(input.value.trim()));
  if (config.basemap) apply(config.basemap);
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
