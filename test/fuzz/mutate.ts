/**
 * Mutations of a whole site folder (and of an output folder) for the fuzzer: each takes the folder, a
 * seeded uniform generator and returns a one-line description of what it did. They damage what users
 * damage: JSON fields, plan coordinates, CSV cells and units, SEG-Y binary and trace header fields,
 * samples, truncations, swapped or missing files.
 */
import { existsSync, mkdirSync, readFileSync, readdirSync, renameSync, rmSync, statSync, truncateSync, writeFileSync } from 'node:fs';
import { join, relative } from 'node:path';

export type Rand = () => number;

export const int = (r: Rand, n: number): number => Math.floor(r() * n);
export const pick = <T>(r: Rand, a: readonly T[]): T => a[int(r, a.length)] as T;

/** Values a JSON field may be replaced with: wrong types, edges, absurd magnitudes. */
const JSON_VALUES: unknown[] = [null, true, false, 0, -1, 1, 0.5, -0.001, 1e9, -1e9, 1e308, '', 'x', 'EPSG:4326', 'EPSG:99999', '+proj=merc', 'lines/l01.sgy', '../site.json', [], [0], [1, 2], [1e12, -1e12], {}, { a: 1 }, 'NaN', 1e-12, 400, 32617];

function files(dir: string, ext?: string): string[] {
  const out: string[] = [];
  for (const e of readdirSync(dir, { recursive: true, withFileTypes: true })) {
    if (!e.isFile()) continue;
    const p = join(e.parentPath, e.name);
    if (!ext || p.endsWith(ext)) out.push(p);
  }
  return out.sort();
}

/** Replace (or delete) the value at a random path of a JSON document. */
export function mutateJson(doc: unknown, r: Rand): { doc: unknown; path: string } {
  const root = { v: structuredClone(doc) } as Record<string, unknown>;
  let node: Record<string, unknown> | unknown[] = root;
  let key: string | number = 'v';
  const path: string[] = [];
  // walk down a random number of levels
  for (let depth = 0; depth < 8; depth++) {
    const v: unknown = (node as Record<string, unknown>)[key as string];
    if (v === null || typeof v !== 'object' || r() < 0.2) break;
    const keys: (string | number)[] = Array.isArray(v) ? v.map((_, i) => i) : Object.keys(v);
    if (keys.length === 0) break;
    node = v as Record<string, unknown>;
    key = pick(r, keys);
    path.push(String(key));
  }
  const target = node as Record<string, unknown>;
  const roll = r();
  if (roll < 0.2 && !Array.isArray(target)) delete target[key as string];
  else if (roll < 0.3 && typeof target[key as string] === 'number') target[key as string] = (target[key as string] as number) * pick(r, [10, 0.1, 1 / 0.3048, 0.3048, -1, 1e6]);
  else target[key as string] = structuredClone(pick(r, JSON_VALUES));
  return { doc: root.v, path: path.join('.') || '(root)' };
}

function jsonFile(file: string, r: Rand): string {
  let doc: unknown;
  try {
    doc = JSON.parse(readFileSync(file, 'utf8'));
  } catch {
    return `${file}: not JSON, left`;
  }
  const m = mutateJson(doc, r);
  writeFileSync(file, JSON.stringify(m.doc) ?? '');
  return `set ${m.path}`;
}

/** SEG-Y rev 2 binary header fields (0-based offset, size): interval, samples, format, measurement, ext samples, ext interval, byte order, revision, fixed length, ext headers, trace count. */
const BINARY_FIELDS: [string, number, 2 | 4 | 8][] = [
  ['interval', 3216, 2], ['samples', 3220, 2], ['format', 3224, 2], ['measurement', 3254, 2], ['extSamples', 3268, 4], ['extInterval', 3272, 8],
  ['byteOrder', 3296, 4], ['revision', 3500, 2], ['fixedLength', 3502, 2], ['extTextHeaders', 3504, 2], ['traceCount', 3512, 8],
];
/** Trace header fields (offset in the 240 bytes, size). */
const TRACE_FIELDS: [string, number, 2 | 4][] = [
  ['sequence', 0, 4], ['coordScalar', 70, 2], ['sourceX', 72, 4], ['sourceY', 76, 4], ['groupX', 80, 4], ['groupY', 84, 4], ['coordUnits', 88, 2],
  ['samples', 114, 2], ['interval', 116, 2], ['cdpX', 180, 4], ['cdpY', 184, 4],
];
const INT_VALUES = [0, 1, -1, 2, 3, 4, 5, 8, 10, -10, -100, -1000, -10000, 100, 1000, 10000, 32767, -32768, 65535, 0x7fffffff, -0x80000000, 0x01020304, 0x04030201];

function writeInt(b: Buffer, off: number, size: number, v: number): void {
  if (off + size > b.length) return;
  if (size === 2) b.writeUInt16BE(v & 0xffff, off);
  else if (size === 4) b.writeUInt32BE(v >>> 0, off);
  else if (r8(v)) b.writeDoubleBE(v, off);
}
const r8 = (v: number): boolean => Number.isFinite(v);

function segyLayout(b: Buffer): { ns: number; traceBytes: number; traces: number } {
  const ns = b.length >= 3222 ? b.readUInt16BE(3220) : 0;
  const traceBytes = 240 + 4 * ns;
  return { ns, traceBytes, traces: ns > 0 ? Math.floor((b.length - 3600) / traceBytes) : 0 };
}

export interface Mutation {
  name: string;
  apply(dir: string, r: Rand): string;
}

/** Mutations of a site folder. */
export const SITE_MUTATIONS: Mutation[] = [
  { name: 'site.json field', apply: (d, r) => jsonFile(join(d, 'site.json'), r) },
  {
    name: 'site.json line entry',
    apply: (d, r) => {
      const f = join(d, 'site.json');
      const s = JSON.parse(readFileSync(f, 'utf8')) as { lines: Record<string, unknown>[] };
      const i = int(r, s.lines.length);
      const l = s.lines[i]!;
      const what = pick(r, ['traces', 'start/end', 'positions', 'duplicate', 'drop', 'id']);
      if (what === 'traces') l.traces = pick(r, [[0, 1], [5, 3], [0, 1e6], [-1, 4], [2, 30], [0, 0]]);
      else if (what === 'start/end') Object.assign(l, pick(r, [{ start: [431250, 4429815], end: [431250, 4429815] }, { start: [-81.8, 40.01], end: [-81.79, 40.01] }, { start: [431250, 4429815], end: [431252, 4429815] }, { start: [4312500, 44298150], end: [4312520, 44298150] }, { start: [0, 0] }]));
      else if (what === 'positions') l.positions = pick(r, ['lines/l03.csv', 'lines/l01.sgy', 'missing.csv', 'plan.geojson']);
      else if (what === 'duplicate') s.lines.push({ ...l });
      else if (what === 'drop') s.lines.splice(i, 1);
      else l.id = pick(r, ['l01', '', 'a b', 'x'.repeat(300)]);
      writeFileSync(f, JSON.stringify(s));
      return `lines[${i}] ${what}`;
    },
  },
  { name: 'plan.geojson field', apply: (d, r) => (existsSync(join(d, 'plan.geojson')) ? jsonFile(join(d, 'plan.geojson'), r) : 'no plan') },
  {
    name: 'plan coordinates',
    apply: (d, r) => {
      const f = join(d, 'plan.geojson');
      const text = readFileSync(f, 'utf8');
      const how = pick(r, ['swap lon/lat', 'far', 'one far feature', 'projected']);
      const fc = JSON.parse(text) as { features: { geometry: { coordinates: unknown } }[] };
      const map = (c: unknown, fn: (p: number[]) => number[]): unknown => (Array.isArray(c) && typeof c[0] === 'number' ? fn(c as number[]) : Array.isArray(c) ? c.map((x) => map(x, fn)) : c);
      const fn = how === 'swap lon/lat' ? (p: number[]) => [p[1]!, p[0]!] : how === 'projected' ? (p: number[]) => [431250 + p[0]!, 4429815 + p[1]!] : (p: number[]) => [p[0]! + 0.3, p[1]!];
      if (how === 'one far feature') fc.features.push({ ...structuredClone(fc.features[0]!), id: 'far-feature', properties: { ...(fc.features[0] as { properties?: object }).properties, id: 'far-feature' }, geometry: { ...fc.features[0]!.geometry, coordinates: map(fc.features[0]!.geometry.coordinates, fn) } } as never);
      else for (const ft of fc.features) ft.geometry.coordinates = map(ft.geometry.coordinates, fn);
      writeFileSync(f, JSON.stringify(fc));
      return how;
    },
  },
  {
    name: 'CSV positions',
    apply: (d, r) => {
      const f = files(d, '.csv')[0];
      if (!f) return 'no CSV';
      const rows = readFileSync(f, 'utf8').split('\n');
      const how = pick(r, ['cell', 'scale', 'swap columns', 'no rows', 'duplicate row', 'header', 'one fix']);
      const body = rows.slice(1).filter((x) => x.trim());
      if (how === 'cell' && body.length) {
        const i = int(r, body.length);
        const cells = body[i]!.split(',');
        cells[int(r, cells.length)] = String(pick(r, ['', 'x', 'NaN', '1e309', '-1', '0', '99999', '1.5', '4429815', '431250', '-81.8']));
        body[i] = cells.join(',');
      } else if (how === 'scale') {
        const k = pick(r, [10, 0.1, 1 / 0.3048, 0.3048, 1000]);
        for (let i = 0; i < body.length; i++) {
          const [t, x, y] = body[i]!.split(',');
          body[i] = `${t},${Number(x) * k},${Number(y) * k}`;
        }
      } else if (how === 'swap columns') {
        for (let i = 0; i < body.length; i++) {
          const [t, x, y] = body[i]!.split(',');
          body[i] = `${t},${y},${x}`;
        }
      } else if (how === 'no rows') body.length = 0;
      else if (how === 'duplicate row' && body.length) body.push(body[0]!);
      else if (how === 'one fix') body.length = Math.min(1, body.length);
      const header = how === 'header' ? pick(r, ['a,b,c', 'x,y', 'trace;x;y', '']) : rows[0];
      writeFileSync(f, [header, ...body].join('\n') + '\n');
      return how;
    },
  },
  {
    name: 'SEG-Y binary header',
    apply: (d, r) => {
      const f = pick(r, files(d, '.sgy'));
      const b = readFileSync(f);
      const [name, off, size] = pick(r, BINARY_FIELDS);
      const v = size === 8 ? pick(r, [0, -1, 1e-9, 1e9, Number.NaN, 100]) : pick(r, INT_VALUES);
      if (size === 8) {
        if (off + 8 <= b.length) b.writeDoubleBE(v, off);
      } else writeInt(b, off, size, v);
      writeFileSync(f, b);
      return `${relative(d, f)} ${name}=${v}`;
    },
  },
  {
    name: 'SEG-Y trace header',
    apply: (d, r) => {
      const f = pick(r, files(d, '.sgy'));
      const b = readFileSync(f);
      const { traceBytes, traces } = segyLayout(b);
      const [name, off, size] = pick(r, TRACE_FIELDS);
      const all = r() < 0.5;
      const v = pick(r, INT_VALUES);
      for (let t = 0; t < traces; t++) {
        if (!all && t !== int(r, traces)) continue;
        const o = 3600 + t * traceBytes + off;
        if (!all || name !== 'coordScalar') writeInt(b, o, size, v);
        else writeInt(b, o, size, pick(r, [-10000, -1, 10, 0]));
      }
      writeFileSync(f, b);
      return `${relative(d, f)} ${name}=${v}${all ? ' in every trace' : ''}`;
    },
  },
  {
    name: 'SEG-Y samples',
    apply: (d, r) => {
      const f = pick(r, files(d, '.sgy'));
      const b = readFileSync(f);
      const { ns, traceBytes, traces } = segyLayout(b);
      if (!traces || !ns) return 'no traces';
      const v = pick(r, [Number.NaN, Infinity, 3e38, -3e38, 0, 1e-40]);
      const n = 1 + int(r, 50);
      for (let k = 0; k < n; k++) b.writeFloatBE(v, 3600 + int(r, traces) * traceBytes + 240 + 4 * int(r, ns));
      return writeFileSync(f, b), `${relative(d, f)} ${n} samples = ${v}`;
    },
  },
  {
    name: 'truncation',
    apply: (d, r) => {
      const f = pick(r, files(d));
      const size = statSync(f).size;
      const to = pick(r, [0, 1, 3200, 3599, 3600, 3601, Math.floor(size / 2), size - 1, int(r, size + 1)]);
      truncateSync(f, Math.min(size, Math.max(0, to)));
      return `${relative(d, f)} to ${Math.min(size, to)} of ${size} bytes`;
    },
  },
  {
    name: 'swapped or missing files',
    apply: (d, r) => {
      const all = files(d);
      const how = pick(r, ['swap', 'delete', 'folder', 'copy over']);
      const a = pick(r, all);
      const b = pick(r, all);
      if (how === 'swap' && a !== b) {
        renameSync(a, a + '.tmp');
        renameSync(b, a);
        renameSync(a + '.tmp', b);
      } else if (how === 'delete') rmSync(a);
      else if (how === 'folder') {
        rmSync(a);
        mkdirSync(a);
      } else writeFileSync(a, readFileSync(b));
      return `${how} ${relative(d, a)} ${relative(d, b)}`;
    },
  },
  {
    name: 'random bytes',
    apply: (d, r) => {
      const f = pick(r, files(d));
      const b = readFileSync(f);
      const n = 1 + int(r, 8);
      for (let k = 0; k < n && b.length; k++) b[int(r, b.length)] = int(r, 256);
      writeFileSync(f, b);
      return `${relative(d, f)} ${n} bytes`;
    },
  },
];

/** Mutations of a finished output folder, before export and the viewer run on it. */
export const OUT_MUTATIONS: Mutation[] = [
  { name: 'output JSON field', apply: (d, r) => jsonFile(join(d, pick(r, ['run.json', 'slices.json', 'velocity.json', 'anomalies.geojson', 'review.json'])), r) },
  {
    name: 'output file damaged',
    apply: (d, r) => {
      const f = pick(r, files(d).filter((p) => !p.includes(`${'/'}.`)));
      const how = pick(r, ['truncate', 'delete', 'garbage']);
      if (how === 'truncate') truncateSync(f, int(r, statSync(f).size));
      else if (how === 'delete') rmSync(f);
      else writeFileSync(f, '{"not": "this"');
      return `${how} ${relative(d, f)}`;
    },
  },
];
