import type { Map as MlMap } from 'maplibre-gl';
import { LAYER_GROUPS } from './style';
import { h } from './panel';
import type { LineBrowserState } from './line-browser';

/** What the viewer shows; read by the browser tests through `window.__lamina`. */
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

/** The page's handle for tests and scripts (`window.__lamina`); its functions are filled in as the parts start. */
export interface LaminaHandle {
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
  /** The line browser: its state, `openLine(id)`, and page coordinates of (stored trace, ns after time-zero). */
  line?: LineBrowserState;
  openLine(id: string): Promise<void>;
  lineToCanvas(trace: number, timeNs: number): { x: number; y: number } | null;
  drawLine(): void;
  /** Page coordinates of the match's flank handle, or null. */
  flankHandle(): { x: number; y: number } | null;
  /** The review queue: ids of the listed rows in order, and the counts shown. */
  queue?: { rows: string[]; counts: { total: number; reviewed: number; left: number; accepted: number; rejected: number }; saving: number };
  /** Last cursor readout over the map: site CRS and WGS84 coordinates. */
  cursor?: { x: number; y: number; lon: number; lat: number } | null;
}

declare global {
  interface Window {
    __lamina: LaminaHandle;
  }
}

export const FT = 0.3048;

export const $ = <T extends HTMLElement>(id: string) => document.getElementById(id) as T;

let resolveReady!: () => void;
export const state: ViewerState = {
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
export const handle: LaminaHandle = {
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
  openLine: async () => undefined,
  lineToCanvas: () => null,
  drawLine: () => undefined,
  flankHandle: () => null,
};

/** The page is ready (or failed for good): tests waiting on `readyPromise` go on. */
export function markReady(): void {
  handle.ready = true;
  resolveReady();
}

/** An error on the page: kept in the state for the tests, logged, and shown under the export button. */
export function report(e: unknown): void {
  const msg = e instanceof Error ? e.message : String(e);
  state.errors.push(msg);
  console.error(e);
  const el = document.getElementById('export-result');
  if (el) el.append(h('div', { class: 'err' }, msg));
}

/** A depth for display in the chosen unit. */
export const depthText = (m: number) => (state.unit === 'ft' ? `${(m / FT).toFixed(2)} ft` : `${m.toFixed(2)} m`);
