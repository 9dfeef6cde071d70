import type { Folder } from './folder';
import { h } from './panel';
import { filterQueue, queueCounts, queueItems, stepIndex, type QueueFilter, type QueueItem, type QueueSort } from './queue';
import { $, depthText, handle, report, state } from './state';

export interface QueueDeps {
  /** Select an anomaly: highlight, panel, slice, line. */
  select(id: string): Promise<void>;
  /** Save a decision through the server (review.json). */
  decide(id: string, decision: 'accept' | 'reject' | 'undecided'): Promise<void>;
}

/**
 * The review queue: the anomalies as rows (`data-anomaly-id`), filters (class, origin, decision, depth
 * range, strength), sort, reviewed / left counts, previous / next, and keys: a accept, r reject,
 * u undecided, n or j next, p or k previous. Returns `refresh` (after a decision was saved).
 */
export function wireQueue(folder: Folder, deps: QueueDeps): { refresh(): void } {
  const list = $('queue-list');
  const counts = $('queue-counts');
  const fCls = $<HTMLSelectElement>('q-class');
  const fOrigin = $<HTMLSelectElement>('q-origin');
  const fDecision = $<HTMLSelectElement>('q-decision');
  const fMin = $<HTMLInputElement>('q-depth-min');
  const fMax = $<HTMLInputElement>('q-depth-max');
  const fStrength = $<HTMLInputElement>('q-strength');
  const sortSel = $<HTMLSelectElement>('q-sort');
  const all = () => queueItems(folder.anomalies.features, folder.review.decisions);
  const options = (sel: HTMLSelectElement, values: string[]) => sel.replaceChildren(h('option', { value: '' }, 'any'), ...values.map((v) => h('option', { value: v }, v)));
  const items0 = all();
  options(fCls, [...new Set(items0.map((q) => q.cls))].sort());
  options(fOrigin, [...new Set(items0.map((q) => q.origin))].sort());
  options(fDecision, ['undecided', 'accept', 'reject']);

  let rows: QueueItem[] = [];
  const filter = (): QueueFilter => {
    const num = (el: HTMLInputElement) => (el.value.trim() === '' ? undefined : Number(el.value) * (state.unit === 'ft' ? 0.3048 : 1));
    return {
      ...(fCls.value ? { cls: fCls.value } : {}),
      ...(fOrigin.value ? { origin: fOrigin.value } : {}),
      ...(fDecision.value ? { decision: fDecision.value } : {}),
      ...(num(fMin) !== undefined ? { minDepthM: num(fMin) } : {}),
      ...(num(fMax) !== undefined ? { maxDepthM: num(fMax) } : {}),
      ...(fStrength.value.trim() !== '' ? { minStrengthDb: Number(fStrength.value) } : {}),
    };
  };
  const render = () => {
    const items = all();
    rows = filterQueue(items, filter(), sortSel.value as QueueSort);
    const c = queueCounts(rows);
    const everything = queueCounts(items);
    counts.textContent = `${c.total} listed: ${c.reviewed} reviewed (${c.accepted} accepted, ${c.rejected} rejected), ${c.left} left` + (c.total !== everything.total ? `; all anomalies: ${everything.reviewed} of ${everything.total} reviewed` : '');
    list.replaceChildren(
      ...rows.map((q) => {
        const row = h(
          'li',
          { 'data-anomaly-id': q.id, class: `q-row ${q.decision}${q.id === state.selectedAnomaly ? ' selected' : ''}`, tabindex: '-1' },
          h('span', { class: 'q-id' }, q.id),
          h('span', { class: 'q-cls' }, q.cls),
          h('span', { class: 'q-depth' }, `${depthText(q.topM)}`),
          h('span', { class: 'q-str' }, Number.isFinite(q.strengthDb) ? `${q.strengthDb.toFixed(0)} dB` : ''),
          h('span', { class: 'q-dec' }, q.decision === 'undecided' ? '·' : q.decision === 'accept' ? 'accepted' : 'rejected'),
        );
        row.addEventListener('click', () => void go(q.id));
        return row;
      }),
    );
    handle.queue = { rows: rows.map((q) => q.id), counts: c, saving: handle.queue?.saving ?? 0 };
    scrollToSelected();
  };
  const scrollToSelected = (id = state.selectedAnomaly) => {
    const el = id ? list.querySelector(`[data-anomaly-id="${CSS.escape(id)}"]`) : null;
    for (const r of list.querySelectorAll('.q-row.selected')) if (r !== el) r.classList.remove('selected');
    if (el) {
      el.classList.add('selected');
      (el as HTMLElement).scrollIntoView({ block: 'nearest' });
    }
  };
  const go = async (id: string) => {
    // the row at once; the panel, slice and line follow
    scrollToSelected(id);
    await deps.select(id).catch(report);
    scrollToSelected();
  };
  const step = (d: 1 | -1) => {
    const i = stepIndex(rows, state.selectedAnomaly, d);
    if (i >= 0) void go(rows[i]!.id);
  };
  const decide = (decision: 'accept' | 'reject' | 'undecided') => {
    const id = state.selectedAnomaly;
    if (!id) return;
    handle.queue!.saving++;
    deps
      .decide(id, decision)
      .then(render)
      .catch(report)
      .finally(() => handle.queue!.saving--);
  };
  $('q-prev').addEventListener('click', () => step(-1));
  $('q-next').addEventListener('click', () => step(1));
  // a list chosen from gives the keys back to the queue (a focused select keeps them)
  for (const el of [fCls, fOrigin, fDecision, sortSel])
    el.addEventListener('change', () => {
      render();
      el.blur();
    });
  for (const el of [fMin, fMax, fStrength]) el.addEventListener('change', render);
  window.addEventListener('keydown', (e) => {
    const t = e.target as HTMLElement | null;
    if (e.ctrlKey || e.metaKey || e.altKey) return;
    if (t && (t.tagName === 'TEXTAREA' || t.tagName === 'SELECT' || (t.tagName === 'INPUT' && !['range', 'checkbox', 'button'].includes((t as HTMLInputElement).type)))) return;
    const k = e.key.toLowerCase();
    if (k === 'n' || k === 'j') step(1);
    else if (k === 'p' || k === 'k') step(-1);
    else if (k === 'a') decide('accept');
    else if (k === 'r') decide('reject');
    else if (k === 'u') decide('undecided');
    else return;
    e.preventDefault();
  });
  render();
  return { refresh: render };
}
