import type { Config, Evidence, Feature } from './data';

/** Tiny DOM helper: element with attributes and children. */
export function h<K extends keyof HTMLElementTagNameMap>(tag: K, attrs: Record<string, string> = {}, ...children: (Node | string | null | undefined)[]): HTMLElementTagNameMap[K] {
  const el = document.createElement(tag);
  for (const [k, v] of Object.entries(attrs)) el.setAttribute(k, v);
  for (const c of children) if (c !== null && c !== undefined) el.append(c);
  return el;
}

function fmt(v: unknown, units?: string): string {
  if (v === null || v === undefined) return '';
  if (typeof v === 'number') return `${Number.isInteger(v) ? v : +v.toPrecision(4)}${units ? ` ${units}` : ''}`;
  if (Array.isArray(v)) return v.map((x) => fmt(x)).join(' to ');
  if (typeof v === 'object') return JSON.stringify(v);
  return `${String(v)}${units ? ` ${units}` : ''}`;
}

/** Every piece of screening evidence of an anomaly, one row each. */
export function evidenceTable(evidence: Evidence[]): HTMLTableElement {
  const t = h('table', { class: 'evidence' }, h('tr', {}, h('th', {}, 'test'), h('th', {}, 'feature'), h('th', {}, 'measured'), h('th', {}, 'expected'), h('th', {}, 'tolerance'), h('th', {}, 'result')));
  for (const e of evidence) {
    const row = h(
      'tr',
      { class: e.passed ? 'passed' : 'failed' },
      h('td', {}, String(e.test ?? '')),
      h('td', {}, String(e.featureId ?? '')),
      h('td', {}, fmt(e.measured, e.units)),
      h('td', {}, fmt(e.expected, e.units)),
      h('td', {}, fmt(e.tolerance, e.units)),
      h('td', {}, e.passed ? 'passed' : 'not passed'),
    );
    t.append(row);
    if (e.detail) t.append(h('tr', { class: e.passed ? 'passed' : 'failed' }, h('td', { colspan: '6' }, e.detail)));
  }
  return t;
}

export function cautionList(config: Config): HTMLUListElement {
  return h('ul', {}, ...config.cautions.map((c) => h('li', {}, c)));
}

export interface DecisionView {
  decision?: string;
  origin?: string;
  utilityType?: string;
  label?: string;
  note?: string;
  updatedAt?: string;
}

export interface PanelHandlers {
  save(change: Record<string, unknown>): Promise<void>;
  close(): void;
}

/** The anomaly side panel: depth, confidence, evidence, radargram canvas and the review form. */
export function renderPanel(
  root: HTMLElement,
  f: Feature,
  config: Config,
  current: DecisionView | undefined,
  depthText: (m: number) => string,
  handlers: PanelHandlers,
): { canvas: HTMLCanvasElement; radargramNote: HTMLElement } {
  const p = f.properties ?? {};
  const id = String(p.id);
  root.replaceChildren();
  root.hidden = false;
  const close = h('button', { type: 'button', id: 'panel-close' }, 'Close');
  close.addEventListener('click', () => handlers.close());
  const conf = Number(p.confidence);
  root.append(
    h('div', { class: 'row spread' }, h('h2', {}, `Anomaly ${id}`), close),
    h('div', {}, `Depth ${depthText(Number(p.depthTopM))} to ${depthText(Number(p.depthBottomM))}`),
    h('div', {}, `Screening origin: ${String(p.origin ?? 'unknown')}, confidence ${Number.isFinite(conf) ? conf.toFixed(2) : 'n/a'}`),
  );
  const status = h('div', { id: 'decision-status', class: 'decision' }, `Decision: ${current?.decision ?? 'undecided'}${current?.updatedAt ? ` (${current.updatedAt})` : ''}`);
  root.append(status);

  const canvas = h('canvas', { id: 'radargram', width: '360', height: '260' });
  const radargramNote = h('div', { id: 'radargram-note' });
  root.append(h('h3', {}, 'Radargram of the nearest line'), canvas, radargramNote);


  // review form
  const utility = h('select', { id: 'review-utility' }, h('option', { value: '' }, '(not set)'), ...config.utilityTypes.map((u) => h('option', { value: u }, `${u} (${config.apwa[u]?.name ?? ''})`)));
  utility.value = current?.utilityType ?? '';
  const origin = h('select', { id: 'review-origin' }, h('option', { value: '' }, '(as screened)'), h('option', { value: 'subsurface' }, 'subsurface'), h('option', { value: 'above-ground' }, 'above-ground'));
  origin.value = current?.origin ?? '';
  const label = h('input', { id: 'review-label', type: 'text', maxlength: '200' });
  label.value = current?.label ?? '';
  const note = h('textarea', { id: 'review-note', rows: '3', maxlength: '4000' });
  note.value = current?.note ?? '';
  const msg = h('div', { id: 'review-msg', 'aria-live': 'polite' });
  const fields = () => ({ utilityType: utility.value || null, origin: origin.value || null, label: label.value || null, note: note.value || null });
  const act = (decision?: string) => async () => {
    msg.textContent = 'saving ...';
    msg.className = '';
    try {
      await handlers.save({ ...(decision ? { decision } : {}), ...fields() });
      msg.textContent = 'saved to review.json';
    } catch (e) {
      msg.textContent = (e as Error).message;
      msg.className = 'err';
    }
  };
  const btn = (id: string, text: string, fn: () => Promise<void>) => {
    const b = h('button', { type: 'button', id }, text);
    b.addEventListener('click', () => void fn());
    return b;
  };
  root.append(
    h('h3', {}, 'Review'),
    h('div', { class: 'row' }, btn('review-accept', 'Accept', act('accept')), btn('review-reject', 'Reject', act('reject')), btn('review-undecided', 'Undecided', act('undecided'))),
    h('label', {}, 'Utility type (APWA) ', utility),
    h('label', {}, 'Origin ', origin),
    h('label', {}, 'Label ', label),
    h('label', {}, 'Note ', note),
    btn('review-save', 'Save labels and note', act()),
    msg,
  );

  const ev = Array.isArray(p.evidence) ? (p.evidence as Evidence[]) : typeof p.evidence === 'string' ? (JSON.parse(p.evidence) as Evidence[]) : [];
  const passed = ev.filter((e) => e.passed).length;
  root.append(h('h3', {}, `Screening evidence (${ev.length} items, ${passed} passed)`), ev.length ? evidenceTable(ev) : h('p', {}, 'No screening evidence recorded.'));
  return { canvas, radargramNote };
}
