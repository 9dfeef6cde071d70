import { COLOUR_MAP_NAMES, colourMapLabel } from './colormaps';
import type { Folder } from './folder';
import type { MapView } from './map-view';
import { h } from './panel';
import type { SlicesView } from './slices-view';
import { $, state } from './state';
import { LAYER_GROUPS, ORIGIN_COLOURS, PLAN_COLOURS, SELECTED_COLOUR } from './style';

/**
 * The side bar's controls: depth (slider, buttons, keys), unit, colour map and clip, opacity, 3D and its
 * exaggeration, layer toggles and the legend. `unitChanged` runs after the unit changed (the open panel
 * shows depths). Returns `applyVisibility` (again after a style change).
 */
export function wireControls(folder: Folder, view: MapView, sv: SlicesView, unitChanged: () => void): { applyVisibility(): void } {
  const { map, scaleM, scaleFt } = view;
  const { setSlice, requestDraw } = sv;
  const depthInput = $<HTMLInputElement>('depth');
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
    sv.updateDepthLabel();
    unitChanged();
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
  mode3d.addEventListener('change', () => void sv.setMode(mode3d.checked ? '3d' : '2d'));
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
  legend(folder);
  return { applyVisibility };
}

function legend(folder: Folder): void {
  const { config, targets } = folder;
  const sw = (colour: string, text: string, dashed = false) => h('div', {}, h('span', { class: 'swatch', style: `background:${colour};${dashed ? 'border-style:dashed' : ''}` }), text);
  const usedTypes = new Set(targets.features.map((f) => String(f.properties?.utilityType ?? 'unknown')));
  $('legend').replaceChildren(
    sw(ORIGIN_COLOURS.subsurface, 'Anomaly: subsurface (stronger = more confident)'),
    sw(ORIGIN_COLOURS['above-ground'], 'Anomaly: above-ground reflection'),
    sw(SELECTED_COLOUR, 'Anomaly selected in the queue'),
    sw(PLAN_COLOURS.forecast, 'Forecast air-wave locus at this depth', true),
    sw(PLAN_COLOURS.building, 'Building footprint (extruded by height in 3D)'),
    sw(PLAN_COLOURS.wall, 'Wall / post'),
    sw(PLAN_COLOURS.fence, 'Fence', true),
    sw(PLAN_COLOURS.tree, 'Tree'),
    sw(PLAN_COLOURS.column, 'Column'),
    sw(PLAN_COLOURS.overhead, 'Overhead object (height in its properties)', true),
    sw(PLAN_COLOURS.lines, 'Survey line (click to open its radargram)'),
    sw('#f4a261', 'Line open in the line browser; dot: its cursor'),
    h('div', { id: 'legend-accepted' }, h('span', { class: 'swatch', style: 'background:#555' }), 'Accepted target (solid, APWA colour of its utility)'),
    h('div', { id: 'legend-candidates' }, h('span', { class: 'swatch', style: 'background:transparent;border:2px dashed #555' }), 'Candidate target, not reviewed (dashed outline)'),
    h('div', {}, 'APWA colour code:'),
    ...config.utilityTypes.filter((u) => usedTypes.has(u) || u !== 'unknown').map((u) => sw(config.apwa[u]?.hex ?? '#999', `${u} (${config.apwa[u]?.name ?? ''})`)),
  );
}
