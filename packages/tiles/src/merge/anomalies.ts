/**
 * anomalies.geojson of a merge: each object once. An anomaly belongs to the tile whose core holds its
 * anchor (as `ownerTile` says); an object that crosses a core edge is seen by both tiles, each keeping the
 * piece whose anchor is in its own core: such pieces are joined when they meet at the edge and overlap
 * in depth, each cut to its own core first so the overlap strip is not counted twice.
 */
import { rm } from 'node:fs/promises';
import { join } from 'node:path';
import type { AnchoredAnomaly } from '@lamina/targets';
import { streamAnomalies, streamFeatures, type AnomalyFeature } from '@lamina/targets';
import { pointFromWgs84, type Crs } from '@lamina/site';
import type { Box } from '../grid';
import { ownerTile } from '../manifest';
import { clipLine, clipPolygons, contact, lineLength, polygonsCentroid, SIDES, type Pt, type Ring, type Side } from './clip';
import { featureWriter, headOf, linesOf, lonLat, multiPolygonOf, polygonsOf } from './features';
import type { MergeInputs, MergeTile } from './inputs';

/** Pieces meet at a core edge when their contacts with it overlap or leave a gap of at most this many cells (a cell or two of gridding). */
const JOIN_GAP_CELLS = 2;

/** Where a piece, cut to its core, lies on one side of the core: per slice, the span along the side. */
interface Contact {
  slice: number;
  from: number;
  to: number;
}

interface Piece {
  tile: MergeTile;
  feature: AnomalyFeature;
  key: string;
  clipped: Ring[][];
  contacts: Partial<Record<Side, Contact[]>>;
}

/**
 * The contacts of an anomaly with the sides of its core, slice by slice (its members' outlines cut to the
 * core), so that two objects at different depths that reach one edge at one place are not joined; an
 * anomaly without members counts with its whole outline in every slice (slice -1).
 */
function contactsOf(f: AnomalyFeature, clipped: Ring[][], core: Box, sides: Side[], crs: Crs, tol: number): Piece['contacts'] {
  const members = f.properties.members ?? [];
  const parts: [number, Ring[][]][] = members.length > 0 ? members.map((m) => [m.slice, clipPolygons(polygonsOf(m.outline, crs), core)]) : [[-1, clipped]];
  const out: Piece['contacts'] = {};
  for (const s of sides)
    for (const [slice, polys] of parts) {
      const c = contact(polys, core, s, tol);
      if (c) (out[s] ??= []).push({ slice, from: c[0], to: c[1] });
    }
  return out;
}

/** Two pieces meet at the edge between them: in one slice, spans that overlap or leave at most the join gap. */
function meet(a: Contact[], b: Contact[], gap: number): boolean {
  return a.some((p) => b.some((q) => (p.slice === q.slice || p.slice < 0 || q.slice < 0) && Math.max(p.from, q.from) - Math.min(p.to, q.to) <= gap));
}

export interface AnomalyMerge {
  /** `<tile id>/<anomaly id>` of every anomaly kept to its id in the merge (pieces of a joined object: the object's id). */
  ids: Map<string, string>;
  /** Keys of the pieces that were joined (cut to their core): their interfaces are cut alike. */
  cut: Set<string>;
  /** Every merged anomaly's plan point and depth range (for the review decisions). */
  anchored: AnchoredAnomaly[];
  count: number;
  /** Objects made of pieces of two or more tiles. */
  joined: number;
}

/** The plan point that decides ownership: `anchor`, else `centroid` (cell-weighted), else the mean of the outline's vertices. */
export function anchorLonLat(p: Record<string, unknown>, geometry: unknown): [number, number] | undefined {
  for (const k of ['anchor', 'centroid']) {
    const a = p[k];
    if (Array.isArray(a) && typeof a[0] === 'number' && typeof a[1] === 'number') return [a[0], a[1]];
  }
  let sx = 0, sy = 0, n = 0;
  const walk = (c: unknown): void => {
    if (Array.isArray(c) && typeof c[0] === 'number') {
      sx += c[0];
      sy += c[1] as number;
      n++;
    } else if (Array.isArray(c)) c.forEach(walk);
  };
  walk((geometry as { coordinates?: unknown } | null)?.coordinates);
  return n > 0 ? [sx / n, sy / n] : undefined;
}

const OPPOSITE: Record<Side, Side> = { west: 'east', east: 'west', south: 'north', north: 'south' };
const STEP: Record<Side, [number, number]> = { west: [-1, 0], east: [1, 0], south: [0, -1], north: [0, 1] };

/** Writes `<stageDir>/anomalies.geojson` of the merge. */
export async function mergeAnomalies(inputs: MergeInputs, stageDir: string): Promise<AnomalyMerge> {
  const { manifest, tiles, crs } = inputs;
  const cell = tiles[0]!.slices.cellSize;
  const mpu = manifest.site.metresPerUnit;
  const at = new Map(manifest.tiles.map((t) => [`${t.col},${t.row}`, t]));
  const neighbour = (t: MergeTile, s: Side) => at.get(`${t.entry.col + STEP[s][0]},${t.entry.row + STEP[s][1]}`);
  const ids = new Map<string, string>();
  const pieces: Piece[] = [];
  const partFile = join(stageDir, 'anomalies.part');
  const part = await featureWriter(partFile);
  const cut = new Set<string>();
  let joined = 0;
  try {
    for (const t of tiles) {
      const core = t.entry.core as Box;
      const sides = SIDES.filter((s) => neighbour(t, s));
      for await (const f of streamAnomalies(t.outDir)) {
        const p = f.properties;
        const a = anchorLonLat(p, f.geometry);
        if (!a) continue;
        const [x, y] = pointFromWgs84(crs, a[0], a[1]);
        if (ownerTile(manifest, x, y)?.id !== t.entry.id) continue;
        const key = `${t.entry.id}/${p.id}`;
        ids.set(key, key);
        const renamed = { ...f, id: key, properties: { ...p, id: key, ...(p.echoOf !== undefined ? { echoOf: `${t.entry.id}/${p.echoOf}` } : {}) } };
        const clipped = clipPolygons(polygonsOf(f.geometry, crs), core);
        const contacts = contactsOf(renamed, clipped, core, sides, crs, cell / 2);
        if (Object.keys(contacts).length > 0) pieces.push({ tile: t, feature: renamed, key, clipped, contacts });
        else await part.add(renamed);
      }
    }
    // pieces that meet across an edge (each pair once: from the west and south piece), joined transitively
    const parent = pieces.map((_, i) => i);
    const find = (i: number): number => (parent[i] === i ? i : (parent[i] = find(parent[i]!)));
    const byTile = new Map<string, number[]>();
    for (const [i, q] of pieces.entries()) {
      const list = byTile.get(q.tile.entry.id);
      if (list) list.push(i);
      else byTile.set(q.tile.entry.id, [i]);
    }
    for (const [i, p] of pieces.entries())
      for (const s of ['east', 'north'] as const) {
        const ip = p.contacts[s];
        const nb = ip && neighbour(p.tile, s);
        if (!ip || !nb) continue;
        for (const j of byTile.get(nb.id) ?? []) {
          const q = pieces[j]!;
          const iq = q.contacts[OPPOSITE[s]];
          // one object has one origin: a pipe's piece is not joined to an above-ground echo that reaches the same edge
          if (iq && q.feature.properties.origin === p.feature.properties.origin && meet(ip, iq, JOIN_GAP_CELLS * cell)) parent[find(i)] = find(j);
        }
      }
    const groups = new Map<number, Piece[]>();
    for (const [i, q] of pieces.entries()) {
      const g = groups.get(find(i));
      if (g) g.push(q);
      else groups.set(find(i), [q]);
    }
    for (const group of groups.values()) {
      if (group.length === 1) {
        await part.add(group[0]!.feature);
        continue;
      }
      joined++;
      const id = group[0]!.key;
      for (const q of group) {
        ids.set(q.key, id);
        cut.add(q.key);
      }
      await part.add(joinPieces(id, group, crs, mpu, cell));
    }
  } finally {
    await part.close();
  }
  // echoOf to the merged ids, and the anchors for the review
  const anchored: AnchoredAnomaly[] = [];
  const out = await featureWriter(join(stageDir, 'anomalies.geojson'), await headOf(join(tiles[0]!.outDir, 'anomalies.geojson')));
  let count = 0;
  try {
    for await (const raw of streamFeatures(partFile)) {
      const f = raw as AnomalyFeature;
      const p = f.properties;
      if (p.echoOf !== undefined) p.echoOf = ids.get(p.echoOf) ?? p.echoOf;
      const a = anchorLonLat(p, f.geometry);
      if (a) anchored.push({ id: p.id, lon: a[0], lat: a[1], depthTopM: p.depthTopM, depthBottomM: p.depthBottomM });
      await out.add(f);
      count++;
    }
  } finally {
    await out.close();
    await rm(partFile, { force: true });
  }
  return { ids, cut, anchored, count, joined };
}

const maxOf = (vals: unknown[]): number | undefined => {
  const v = vals.filter((x): x is number => typeof x === 'number' && Number.isFinite(x));
  return v.length > 0 ? Math.max(...v) : undefined;
};

/** Polylines joined end to start where they meet within `tol` (a centreline cut at a core edge and its continuation). */
function chain(lines: Pt[][], tol: number): Pt[][] {
  const out = lines.map((l) => l.slice());
  for (let merged = true; merged; ) {
    merged = false;
    for (let i = 0; i < out.length && !merged; i++)
      for (let j = 0; j < out.length && !merged; j++) {
        if (i === j) continue;
        const a = out[i]!, b = out[j]!;
        const ends: [Pt[], Pt[]][] = [[a, b], [a, b.slice().reverse()], [a.slice().reverse(), b], [a.slice().reverse(), b.slice().reverse()]];
        for (const [x, y] of ends) {
          const e = x[x.length - 1]!, s = y[0]!;
          if (Math.hypot(e[0] - s[0], e[1] - s[1]) > tol) continue;
          out[i] = [...x, ...y.slice(1)];
          out.splice(j, 1);
          merged = true;
          break;
        }
      }
  }
  return out;
}

/** One object from pieces of neighbouring tiles, each cut to its own core: the dominant (largest) piece's verdict and evidence, the union of the rest. */
function joinPieces(id: string, group: Piece[], crs: Crs, mpu: number, cell: number): AnomalyFeature {
  const areas = group.map((q) => polygonsCentroid(q.clipped)?.area ?? 0);
  const dominant = group[areas.indexOf(Math.max(...areas))]!;
  const polys = group.flatMap((q) => q.clipped);
  const c = polygonsCentroid(polys);
  const props = group.map((q) => q.feature.properties);
  const members = group.flatMap((q) =>
    (q.feature.properties.members ?? []).flatMap((m) => {
      const mp = clipPolygons(polygonsOf(m.outline, crs), q.tile.entry.core as Box);
      const mc = polygonsCentroid(mp);
      if (!mc) return [];
      return [{ ...m, outline: multiPolygonOf(mp, crs), centroid: lonLat(crs, mc.x, mc.y), areaM2: mc.area * mpu * mpu }];
    }),
  );
  members.sort((a, b) => a.slice - b.slice);
  const lines = chain(group.flatMap((q) => linesOf(q.feature.properties.centreline, crs).flatMap((l) => clipLine(l, q.tile.entry.core as Box))), JOIN_GAP_CELLS * cell);
  const d = dominant.feature.properties;
  const peakValue = maxOf(props.map((p) => p.peakValue));
  const peakScore = maxOf(props.map((p) => p.peakScore));
  const strengthDb = maxOf(props.map((p) => p.strengthDb));
  const properties = {
    ...d,
    id,
    depthTopM: Math.min(...props.map((p) => p.depthTopM)),
    depthBottomM: Math.max(...props.map((p) => p.depthBottomM)),
    ...(props.some((p) => p.slices) ? { slices: [...new Set(props.flatMap((p) => p.slices ?? []))].sort((a, b) => a - b) } : {}),
    ...(c ? { areaM2: c.area * mpu * mpu, centroid: lonLat(crs, c.x, c.y) } : {}),
    ...((d as Record<string, unknown>).anchor !== undefined && c ? { anchor: lonLat(crs, c.x, c.y) } : {}),
    ...(members.length > 0 ? { members } : {}),
    ...(lines.length > 0
      ? {
          centreline: lines.length === 1 ? { type: 'LineString', coordinates: lines[0]!.map(([x, y]) => lonLat(crs, x, y)) } : { type: 'MultiLineString', coordinates: lines.map((l) => l.map(([x, y]) => lonLat(crs, x, y))) },
          lengthM: lines.reduce((s, l) => s + lineLength(l), 0) * mpu,
        }
      : {}),
    ...(peakValue !== undefined ? { peakValue } : {}),
    ...(peakScore !== undefined ? { peakScore } : {}),
    ...(strengthDb !== undefined ? { strengthDb } : {}),
    mergedFrom: group.map((q) => q.key),
  };
  return { ...dominant.feature, id, geometry: c ? multiPolygonOf(polys, crs) : dominant.feature.geometry, properties } as AnomalyFeature;
}
