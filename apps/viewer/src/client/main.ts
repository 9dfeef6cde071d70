import 'maplibre-gl/dist/maplibre-gl.css';
import './viewer.css';
import { setWorkerUrl } from 'maplibre-gl';
import workerUrl from 'maplibre-gl/dist/maplibre-gl-worker.mjs?url';
import { wireControls } from './controls';
import { loadFolder } from './folder';
import { createMap, wireBasemap } from './map-view';
import { cautionList } from './panel';
import { velocityLine } from './velocity-line';
import { createLineBrowser } from './line-browser';
import { wireMapReadout } from './map-readout';
import { wireQueue } from './queue-panel';
import { wireReview } from './review-panel';
import { createSlicesView, openSlices } from './slices-view';
import { $, handle, markReady, report, state } from './state';

export type { ViewerState } from './state';

setWorkerUrl(workerUrl);
window.__lamina = handle;
const t0 = performance.now();

/** The page: the folder is fetched, then the map, the slices, the controls and the review panel start. */
async function main(): Promise<void> {
  const folder = await loadFolder();
  const { config, run } = folder;
  $('site-name').textContent = run.site.name;
  $('cautions').replaceChildren(...cautionList(config).children);
  $('caution-line').textContent = config.caution ?? config.cautions[0] ?? '';
  const basis = velocityLine(folder.velocity);
  $('velocity-line').textContent = basis.text;
  $('velocity-line').classList.toggle('cautions', basis.warn);
  $('about-btn').addEventListener('click', () => $<HTMLDialogElement>('about').showModal());

  const sliceData = await openSlices(folder);
  const view = await createMap(folder, t0);
  // parts made below are used only once the new style has loaded
  let restyled = () => {};
  wireBasemap(view, folder, () => restyled());
  const sv = createSlicesView(sliceData, view, t0);
  let selectAnomaly: (id: string) => Promise<void> = async () => undefined;
  const controls = wireControls(folder, view, sv, () => {
    if (state.selectedAnomaly) void selectAnomaly(state.selectedAnomaly);
  });
  restyled = () => {
    controls.applyVisibility();
    sv.applyDepthStyling();
    void sv.redraw();
  };
  const lines = createLineBrowser(folder, view);
  let queue: { refresh(): void } | undefined;
  const review = wireReview(folder, view, { openLine: (id, tr) => lines.open(id, tr), setSlice: (k) => sv.setSlice(k), onSaved: () => queue?.refresh() });
  selectAnomaly = async (id) => {
    await review.selectAnomaly(id);
    queue?.refresh();
  };
  handle.selectAnomaly = selectAnomaly;
  queue = wireQueue(folder, {
    select: selectAnomaly,
    decide: async (id, decision) => {
      await review.save(id, { decision });
    },
  });
  wireMapReadout(folder, view, sv);

  sv.updateDepthLabel();
  sv.applyDepthStyling();
  await sv.setSlice(0);
  markReady();
}

main().catch((e) => {
  report(e);
  markReady();
});
