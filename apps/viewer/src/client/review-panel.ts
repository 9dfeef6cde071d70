import type { GeoJSONSource, MapLayerMouseEvent } from 'maplibre-gl';
import { EMPTY_FC, featureId, getBytes, getJson, type Feature, type FeatureCollection, type RadargramLine } from './data';
import type { Folder } from './folder';
import type { MapView } from './map-view';
import { cautionList, h, renderPanel, type DecisionView } from './panel';
import { drawRadargram, nearestTrace } from './radargram';
import { $, depthText, handle, report, state } from './state';

/**
 * Review: the anomaly panel (evidence, decision, the nearest radargram with its fitted hyperbolas),
 * opened by a click on an anomaly, and the export button. Returns `selectAnomaly`.
 */
export interface ReviewDeps {
  /** Opens a line in the line browser with a trace marked. */
  openLine?(id: string, markTrace: number): Promise<void>;
  /** Shows the slice of this index. */
  setSlice?(k: number): Promise<void>;
  /** Runs after a decision was saved (the queue recounts). */
  onSaved?(): void;
}

export function wireReview(folder: Folder, view: MapView, deps: ReviewDeps = {}): { selectAnomaly(id: string): Promise<void>; save(id: string, change: Record<string, unknown>): Promise<DecisionView | undefined> } {
  const { config, run, velocity, rgIndex, anomalies, targets } = folder;
  const { map } = view;
  const metresPerUnit = run.site.crs.metresPerUnit ?? 1;
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
  const save = async (id: string, change: Record<string, unknown>): Promise<DecisionView | undefined> => {
    const r = await fetch('api/review', { method: 'POST', headers: { 'Content-Type': 'application/json' }, body: JSON.stringify({ anomalyId: id, ...change }) });
    const body = (await r.json()) as { error?: string; review?: Folder['review']; decision?: DecisionView };
    if (!r.ok) throw new Error(body.error ?? `HTTP ${r.status}`);
    folder.review = body.review ?? folder.review;
    if (state.selectedAnomaly === id && document.getElementById('decision-status')) $('decision-status').textContent = `Decision: ${body.decision?.decision ?? 'undecided'} (${body.decision?.updatedAt ?? ''})`;
    deps.onSaved?.();
    return body.decision;
  };
  let selectedNumericId: number | undefined;
  const selectAnomaly = async (id: string) => {
    const f = anomalies.features.find((x) => featureId(x) === id);
    if (!f) throw new Error(`no anomaly "${id}"`);
    if (selectedNumericId !== undefined) map.setFeatureState({ source: 'anomalies', id: selectedNumericId }, { selected: false });
    selectedNumericId = Number(f.id);
    map.setFeatureState({ source: 'anomalies', id: selectedNumericId }, { selected: true });
    state.selectedAnomaly = id;
    const decision = folder.review.decisions.find((d) => d.anomalyId === id);
    const { canvas, radargramNote } = renderPanel(panel, f, config, decision, depthText, {
      close: () => {
        panel.hidden = true;
        state.selectedAnomaly = null;
      },
      save: async (change) => {
        await save(id, change);
      },
    });
    // the panel sits in the side column beside the queue: the map keeps its size (no resize, no full repaint)
    const anchor = anchorOf(f);
    if (anchor) {
      // bring the anomaly into view when it is off screen
      const b = map.getBounds();
      if (!b.contains(anchor)) map.easeTo({ center: anchor, duration: 0 });
    }
    // its slice: the first it was found in, else the slice holding its top
    const p = f.properties ?? {};
    const sl = Array.isArray(p.slices) && typeof p.slices[0] === 'number' ? (p.slices[0] as number) : sliceOfDepth(Number(p.depthTopM));
    if (sl >= 0 && sl !== state.sliceIndex && deps.setSlice) void deps.setSlice(sl).catch(report);
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
    if (deps.openLine) await deps.openLine(line.id, hit[1]);
  };
  const sliceOfDepth = (z: number) => {
    const slices = (folder.slicesJson?.slices ?? []).slice().sort((a, b) => a.topM - b.topM);
    return slices.findIndex((s) => z >= s.topM && z < s.bottomM);
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
      void (map.getSource('targets') as GeoJSONSource | undefined)?.setData(targets as never);
      out.replaceChildren(
        h('div', { id: 'export-ok' }, `Exported ${fresh.features.length} target(s): targets.geojson, .gpkg, .csv, .dxf and report.html in the output folder.`),
        h('div', { class: 'cautions' }, h('strong', {}, 'Before anyone digs:'), cautionList(config)),
      );
    } catch (e) {
      out.replaceChildren(h('div', { class: 'err', id: 'export-error' }, (e as Error).message), h('div', { class: 'cautions' }, cautionList(config)));
    }
  });
  return { selectAnomaly, save };
}

/** Where an anomaly's radargram is looked for: its lon/lat or centroid property, else the mean of its vertices. */
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
