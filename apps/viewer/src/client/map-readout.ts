import proj4 from 'proj4';
import type { Folder } from './folder';
import type { MapView } from './map-view';
import type { SlicesView } from './slices-view';
import { $, depthText, handle, state } from './state';

/**
 * The cursor readout over the map: site-CRS coordinates (in the CRS's units), WGS84 and the depth of the
 * slice on screen (with the vertical exaggeration in 3D, where the depth shown is the current slice's).
 */
export function wireMapReadout(folder: Folder, view: MapView, sv: SlicesView): void {
  const { run } = folder;
  const crs = run.site.crs;
  const toSite = proj4('EPSG:4326', crs.proj4 ?? crs.input!);
  const el = $('map-readout');
  const units = crs.units ?? 'm';
  const name = crs.code ?? crs.input ?? 'site CRS';
  const geographic = /longlat/.test(crs.proj4 ?? '');
  const hemi = (v: number, pos: string, neg: string) => `${Math.abs(v).toFixed(6)}° ${v >= 0 ? pos : neg}`;
  view.map.on('mousemove', (e) => {
    const { lng, lat } = e.lngLat;
    const [x, y] = toSite.forward([lng, lat]) as [number, number];
    handle.cursor = { x, y, lon: lng, lat };
    const s = sv.current();
    const siteText = geographic ? `${name}` : `E ${x.toFixed(2)} N ${y.toFixed(2)} ${units} (${name})`;
    el.textContent = `${siteText} | WGS84 ${hemi(lat, 'N', 'S')}, ${hemi(lng, 'E', 'W')} | slice ${s ? `${depthText(s.topM)} to ${depthText(s.bottomM)}` : 'none'}${state.mode === '3d' ? `, vertical exaggeration x${state.exaggeration}` : ''}`;
  });
  view.map.on('mouseout', () => {
    handle.cursor = null;
  });
}
