import { InputError } from '@lamina/errors';
import { pointToWgs84 } from './crs';
import type { Crs, Position } from './types';

/** Trace coordinates as the SEG-Y reader gives them (scalar applied). */
export interface HeaderCoordinates {
  sourceX: Float64Array;
  sourceY: Float64Array;
  cdpX?: Float64Array;
  cdpY?: Float64Array;
  groupX?: Float64Array;
  groupY?: Float64Array;
  /** Coordinate units, trace header bytes 89-90: 1 length, 2 arc seconds, 3 decimal degrees, 4 DMS. */
  coordUnits?: number | ArrayLike<number>;
}

export interface TracePositions {
  x: Float64Array;
  y: Float64Array;
}

export type HeaderSource = 'cdp' | 'source' | 'group';

/** The header fields named in messages, with their SEG-Y trace header bytes. */
export const HEADER_FIELDS: Record<HeaderSource, string> = {
  cdp: 'trace header bytes 181-188 (CDP X/Y)',
  source: 'trace header bytes 73-80 (source X/Y)',
  group: 'trace header bytes 81-88 (group X/Y)',
};

const ANGULAR_UNITS: Record<number, string> = { 2: 'arc seconds', 3: 'decimal degrees', 4: 'degrees, minutes, seconds (DMS)' };

function allZero(a: ArrayLike<number>): boolean {
  for (let i = 0; i < a.length; i++) if (a[i] !== 0) return false;
  return true;
}

/**
 * Positions from trace headers: CDP X/Y (bytes 181-188, the midpoint of a common-offset pair), else source
 * X/Y (73-80), else group X/Y (81-88), the first that is not all zero. Throws when all are zero (the line
 * needs `start`/`end` or `positions` in site.json) or when the coordinate units (bytes 89-90) are angular.
 */
export function positionsFromHeaders(h: HeaderCoordinates, file: string): TracePositions & { from: HeaderSource } {
  const units = h.coordUnits;
  const list = units === undefined ? [] : typeof units === 'number' ? [units] : units;
  for (let i = 0; i < list.length; i++) {
    const u = list[i] as number;
    if (ANGULAR_UNITS[u]) {
      throw new InputError(file, `expected trace coordinates in the projected site CRS (coordinate units 1 = length), found coordinate units ${u} (${ANGULAR_UNITS[u]})${list.length > 1 ? ` at trace ${i + 1}` : ''}; reproject the positions or give a positions CSV`, { field: 'trace header bytes 89-90 (coordinate units)' });
    }
  }
  const pairs: [HeaderSource, Float64Array | undefined, Float64Array | undefined][] = [
    ['cdp', h.cdpX, h.cdpY],
    ['source', h.sourceX, h.sourceY],
    ['group', h.groupX, h.groupY],
  ];
  for (const [from, x, y] of pairs) {
    if (x && y && !(allZero(x) && allZero(y))) return { x: Float64Array.from(x), y: Float64Array.from(y), from };
  }
  throw new InputError(file, 'expected trace coordinates, found CDP X/Y (bytes 181-188), source X/Y (73-80) and group X/Y (81-88) all zero; give "start" and "end" or a "positions" CSV for this line in site.json', { field: 'trace headers' });
}

/** `nTraces` positions evenly spaced from `start` (first trace) to `end` (last trace), inclusive. */
export function positionsFromStartEnd(start: Position, end: Position, nTraces: number): TracePositions {
  const x = new Float64Array(nTraces);
  const y = new Float64Array(nTraces);
  const d = nTraces > 1 ? nTraces - 1 : 1;
  for (let i = 0; i < nTraces; i++) {
    const f = i / d;
    x[i] = start[0] + (end[0] - start[0]) * f;
    y[i] = start[1] + (end[1] - start[1]) * f;
  }
  return { x, y };
}

/** A position fix for a trace, from a CSV row. */
export interface PositionFix {
  /** 1-based trace number (the trace's sequence number in the file). */
  trace: number;
  x: number;
  y: number;
  /** 1-based CSV line number, for messages. */
  line: number;
}

/**
 * Parse a positions CSV of `trace,x,y` rows. A header row is optional; with one, columns may come in any
 * order (`trace`, `x`, `y`; also `easting`/`northing`). Comma, semicolon or tab separated; blank lines
 * and lines starting with `#` are skipped. Trace numbers are 1-based (SEG-Y trace sequence in the file).
 */
export function parsePositionsCsv(text: string, file: string): PositionFix[] {
  const lines = text.split(/\r?\n/);
  let cols = { trace: 0, x: 1, y: 2 };
  let width = 3;
  const fixes: PositionFix[] = [];
  let sawFirst = false;
  for (let i = 0; i < lines.length; i++) {
    const raw = (lines[i] as string).trim();
    if (!raw || raw.startsWith('#')) continue;
    const cells = raw.split(/\s*[,;\t]\s*/);
    const lineNo = i + 1;
    if (!sawFirst) {
      sawFirst = true;
      if (!cells.every((c) => c !== '' && Number.isFinite(Number(c)))) {
        const names = cells.map((c) => c.toLowerCase().replace(/^"|"$/g, ''));
        const find = (...alts: string[]): number => names.findIndex((n) => alts.includes(n));
        const t = find('trace', 'trace_number', 'tracenumber', 'trace_no');
        const x = find('x', 'easting', 'east');
        const y = find('y', 'northing', 'north');
        if (t < 0 || x < 0 || y < 0) {
          throw new InputError(file, `expected a header naming columns trace, x and y (or rows of numbers trace,x,y), found ${JSON.stringify(raw.slice(0, 60))}`, { line: lineNo });
        }
        cols = { trace: t, x, y };
        width = names.length;
        continue;
      }
    }
    if (cells.length < Math.max(cols.trace, cols.x, cols.y) + 1) {
      throw new InputError(file, `expected ${width} columns (trace,x,y), found ${cells.length}`, { line: lineNo });
    }
    const get = (k: 'trace' | 'x' | 'y'): number => {
      const c = cells[cols[k]] as string;
      const v = c === '' ? Number.NaN : Number(c);
      if (!Number.isFinite(v)) throw new InputError(file, `expected a number in column ${k}, found ${JSON.stringify(c)}`, { line: lineNo });
      return v;
    };
    const trace = get('trace');
    if (!Number.isInteger(trace)) throw new InputError(file, `expected an integer trace number, found ${trace}`, { line: lineNo });
    fixes.push({ trace, x: get('x'), y: get('y'), line: lineNo });
  }
  if (fixes.length === 0) throw new InputError(file, 'expected rows of trace,x,y, found none');
  return fixes;
}

/**
 * Positions for every trace from sparse fixes: linear in trace number between fixes, held constant before
 * the first and after the last. Throws on trace numbers outside 1..nTraces and on repeated trace numbers.
 */
export function positionsFromFixes(fixes: readonly PositionFix[], nTraces: number, file: string): TracePositions {
  const sorted = [...fixes].sort((a, b) => a.trace - b.trace);
  for (let k = 0; k < sorted.length; k++) {
    const f = sorted[k] as PositionFix;
    if (f.trace < 1 || f.trace > nTraces) {
      throw new InputError(file, `expected a trace number from 1 to ${nTraces} (the line has ${nTraces} traces), found ${f.trace}`, { line: f.line });
    }
    const prev = sorted[k - 1];
    if (prev && prev.trace === f.trace) {
      throw new InputError(file, `expected each trace number once, found trace ${f.trace} again (first on line ${prev.line})`, { line: Math.max(f.line, prev.line) });
    }
  }
  const x = new Float64Array(nTraces);
  const y = new Float64Array(nTraces);
  let k = 0;
  for (let t = 1; t <= nTraces; t++) {
    while (k + 1 < sorted.length && (sorted[k + 1] as PositionFix).trace <= t) k++;
    const a = sorted[k] as PositionFix;
    const b = sorted[k + 1];
    // before the first fix and after the last, `a` holds
    const f = b && t > a.trace ? (t - a.trace) / (b.trace - a.trace) : 0;
    x[t - 1] = b ? a.x + (b.x - a.x) * f : a.x;
    y[t - 1] = b ? a.y + (b.y - a.y) * f : a.y;
  }
  return { x, y };
}

/**
 * Unit direction of travel at each trace, from the chord between the nearest traces before and after it
 * that are at least `minChord` apart (CRS units), so jitter between close fixes does not swing it.
 */
export function lineDirections(x: ArrayLike<number>, y: ArrayLike<number>, minChord: number, out?: TracePositions): TracePositions {
  const n = x.length;
  const res = out ?? { x: new Float64Array(n), y: new Float64Array(n) };
  const half = minChord / 2;
  const h2 = half * half;
  for (let t = 0; t < n; t++) {
    const x0 = x[t] as number;
    const y0 = y[t] as number;
    let a = t;
    while (a > 0 && (x0 - (x[a] as number)) ** 2 + (y0 - (y[a] as number)) ** 2 < h2) a--;
    let b = t;
    while (b < n - 1 && ((x[b] as number) - x0) ** 2 + ((y[b] as number) - y0) ** 2 < h2) b++;
    const dx = (x[b] as number) - (x[a] as number);
    const dy = (y[b] as number) - (y[a] as number);
    const len = Math.hypot(dx, dy);
    res.x[t] = len > 0 ? dx / len : Number.NaN;
    res.y[t] = len > 0 ? dy / len : Number.NaN;
  }
  // Traces with no motion around them take the nearest defined direction.
  let last = -1;
  for (let t = 0; t < n; t++) {
    if (!Number.isNaN(res.x[t] as number)) {
      for (let s = last + 1; s < t; s++) {
        res.x[s] = res.x[t] as number;
        res.y[s] = res.y[t] as number;
      }
      last = t;
    }
  }
  for (let s = last + 1; s < n && last >= 0; s++) {
    res.x[s] = res.x[last] as number;
    res.y[s] = res.y[last] as number;
  }
  return res;
}

export interface GpsOffsetOptions {
  /** Chord length (metres) over which the local line direction is measured. @default 0.5 */
  directionChordM?: number;
}

/**
 * Move position fixes to the antenna midpoint. The fix sits `alongM` ahead of the midpoint in the direction
 * of travel and `acrossM` to its right; both metres, converted to CRS units with `metresPerUnit`.
 * Works in place and returns the arrays.
 */
export function applyGpsOffset(p: TracePositions, alongM: number, acrossM: number, metresPerUnit: number, options: GpsOffsetOptions = {}): TracePositions {
  if (alongM === 0 && acrossM === 0) return p;
  const chord = (options.directionChordM ?? 0.5) / metresPerUnit;
  const d = lineDirections(p.x, p.y, chord);
  const along = alongM / metresPerUnit;
  const across = acrossM / metresPerUnit;
  for (let t = 0; t < p.x.length; t++) {
    const ux = d.x[t] as number;
    const uy = d.y[t] as number;
    if (Number.isNaN(ux)) continue;
    // right-hand normal of (ux, uy) is (uy, -ux)
    p.x[t] = (p.x[t] as number) - along * ux - across * uy;
    p.y[t] = (p.y[t] as number) - along * uy + across * ux;
  }
  return p;
}

export interface CheckPositionsOptions {
  /**
   * Longest run of identical consecutive positions allowed, as a fraction of the line's traces (a run
   * means the positions did not move, e.g. a fix repeated until the next GPS update); common practice,
   * no source. @default 0.1
   */
  maxRepeatFraction?: number;
  /** Describes where the positions came from, for messages. @default 'trace positions' */
  what?: string;
  /** Field named in messages. */
  field?: string;
}

/**
 * Check positions in the site CRS for the faults field data shows: NaN/Inf, a line of one trace, all at
 * one point, coordinates that look like degrees under a projected CRS, long runs of repeated positions.
 */
export function checkPositions(p: TracePositions, crs: Crs, file: string, options: CheckPositionsOptions = {}): void {
  const n = p.x.length;
  const what = options.what ?? 'trace positions';
  const where = options.field !== undefined ? { field: options.field } : {};
  if (n < 2) throw new InputError(file, `expected a line of at least 2 traces, found ${n}`, where);
  let minX = Infinity;
  let maxX = -Infinity;
  let minY = Infinity;
  let maxY = -Infinity;
  for (let t = 0; t < n; t++) {
    const x = p.x[t] as number;
    const y = p.y[t] as number;
    if (!Number.isFinite(x) || !Number.isFinite(y)) throw new InputError(file, `expected finite ${what}, found (${x}, ${y}) at trace ${t + 1}`, where);
    if (x < minX) minX = x;
    if (x > maxX) maxX = x;
    if (y < minY) minY = y;
    if (y > maxY) maxY = y;
  }
  const span = Math.max(maxX - minX, maxY - minY);
  if (span === 0) throw new InputError(file, `expected ${what} that move along the line, found all ${n} traces at (${minX}, ${minY})`, where);
  if (!crs.isGeographic) {
    // A survey line in a projected CRS spans metres; one in degrees spans ~1e-4..1e-2 within lon/lat range.
    const inRange = minX >= -180 && maxX <= 180 && minY >= -90 && maxY <= 90;
    if (inRange && span < 0.05) {
      throw new InputError(file, `expected ${what} in the projected site CRS ${crs.code ?? crs.proj4} (${crs.units}), found values that look like degrees (x ${minX}..${maxX}, y ${minY}..${maxY}) at traces 1..${n}; reproject them`, where);
    }
  }
  if (!crs.isGeographic) {
    for (const t of [0, n - 1]) {
      const [lon, lat] = pointToWgs84(crs, p.x[t] as number, p.y[t] as number);
      if (!(Number.isFinite(lon) && Number.isFinite(lat) && Math.abs(lat) <= 90)) {
        throw new InputError(file, `expected ${what} inside the site CRS ${crs.code ?? crs.proj4}, found (${p.x[t]}, ${p.y[t]}) at trace ${t + 1}, which has no longitude/latitude there; check the CRS`, where);
      }
    }
  }
  let run = 1;
  let longest = 1;
  let longestEnd = 0;
  let repeats = 0;
  for (let t = 1; t < n; t++) {
    if (p.x[t] === p.x[t - 1] && p.y[t] === p.y[t - 1]) {
      run++;
      repeats++;
      if (run > longest) {
        longest = run;
        longestEnd = t;
      }
    } else run = 1;
  }
  const limit = Math.max(3, Math.ceil((options.maxRepeatFraction ?? 0.1) * n));
  if (longest > limit) {
    const first = longestEnd - longest + 2;
    throw new InputError(
      file,
      `expected ${what} that change from trace to trace, found ${repeats} of ${n} traces repeating the previous position (longest run ${longest} traces, ${first}..${longestEnd + 1}); give the real fixes in a "positions" CSV (interpolated by trace number) or "start"/"end"`,
      where,
    );
  }
}
