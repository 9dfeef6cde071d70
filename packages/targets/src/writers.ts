import { createReadStream } from 'node:fs';
import { rm } from 'node:fs/promises';
import { basename, dirname, join } from 'node:path';
import { stageFile, stageStream, type StagedFile } from '@lamina/atomic';
import { GEOJSON_HEAD, TARGET_FIELDS, addDxfLayer, csvHead, csvRow, dxfEntities, dxfHead, dxfTail, geoJsonFeature, geoJsonTail, targetProperties, type ExportContext } from './formats';
import { gpkgGeometry, openGpkg, writeGpkg, type GpkgLayerDef, type GpkgSrs, type GpkgValue } from './gpkg';
import type { Crs } from '@lamina/site';
import type { MapFlagged, MapTarget } from './plan-map';
import { byTargetId, mapFlaggedOf, mapTargetOf, reportFlaggedRow, reportParts, reportTargetRow, type ReportPage } from './report';
import type { Dropped, Target } from './targets';
import { crsToWkt, WGS84_WKT } from './wkt';
import { LAYER_STYLES_COLUMNS, layerStylesRows } from './styles';

/**
 * One target file written a target at a time into a staged temp file beside its path: `add` each
 * target in order, then `finish` writes what needs all of them (a footer, a header) and returns the
 * staged file for the caller to commit with the others; `abort` deletes everything it wrote.
 */
export interface TargetFileWriter {
  add(t: Target): Promise<void>;
  finish(): Promise<StagedFile>;
  abort(): Promise<void>;
}

/** targets.geojson, byte for byte `targetsGeoJson` of the same targets. */
export async function geoJsonWriter(path: string, ctx: ExportContext): Promise<TargetFileWriter> {
  const out = await stageStream(path);
  await out.write(GEOJSON_HEAD);
  let n = 0;
  return {
    add: (t) => out.write(geoJsonFeature(t, ctx, n++)),
    finish: async () => (await out.write(geoJsonTail(n)), out),
    abort: () => out.abort(),
  };
}

/** targets.csv, byte for byte `targetsCsv`. */
export async function csvWriter(path: string, ctx: ExportContext): Promise<TargetFileWriter> {
  const out = await stageStream(path);
  await out.write(csvHead());
  return { add: (t) => out.write(csvRow(t, ctx)), finish: async () => out, abort: () => out.abort() };
}

/**
 * A temp file written in chunks and read back once (dot-named beside `path`, removed by `remove`), for
 * what a file needs after all targets have passed.
 */
interface Spill {
  write(chunk: string | Uint8Array): Promise<void>;
  read(): AsyncGenerator<Buffer>;
  remove(): Promise<void>;
}

async function openSpill(path: string): Promise<Spill> {
  const file = join(dirname(path), `.${basename(path)}.${process.pid}.spill.tmp`);
  const staged = await stageStream(file);
  let written = false;
  return {
    write: (chunk) => staged.write(chunk),
    async *read() {
      await staged.commit();
      written = true;
      for await (const chunk of createReadStream(file)) yield chunk as Buffer;
    },
    async remove() {
      await staged.abort();
      if (written) await rm(file, { force: true });
    },
  };
}

/**
 * targets.dxf, byte for byte `targetsDxf`. The LAYER table comes first but lists the layers of all
 * targets, so the entities go to a spill and are copied after the tables at the end.
 */
export async function dxfWriter(path: string, ctx: ExportContext): Promise<TargetFileWriter> {
  const body = await openSpill(path);
  const layers = new Map<string, number>();
  let out: Awaited<ReturnType<typeof stageStream>> | undefined;
  return {
    add(t) {
      addDxfLayer(layers, t);
      return body.write(dxfEntities(t, ctx));
    },
    async finish() {
      out = await stageStream(path);
      await out.write(dxfHead(layers, ctx));
      for await (const chunk of body.read()) await out.write(chunk);
      await out.write(dxfTail());
      await body.remove();
      return out;
    },
    async abort() {
      await body.remove();
      await out?.abort();
    },
  };
}

// ---------- GeoPackage ----------

/** srs_id for a site CRS without an EPSG code (GeoPackage user-defined range). */
export const CUSTOM_SRS_ID = 100000;

/** The SRSs of targets.gpkg (WGS 84 and the site CRS) and its two layers, `targets` and `targets_wgs84`. */
function gpkgSchema(ctx: ExportContext): { srs: GpkgSrs[]; site: GpkgLayerDef; wgs84: GpkgLayerDef } {
  const code = ctx.crs.code ? /^EPSG:(\d+)$/i.exec(ctx.crs.code)?.[1] : undefined;
  const siteSrs: GpkgSrs = code
    ? { srsId: Number(code), name: ctx.crs.code!, organization: 'EPSG', organizationId: Number(code), definition: crsToWkt(ctx.crs), description: ctx.crs.proj4 }
    : { srsId: CUSTOM_SRS_ID, name: 'Lamina site CRS', organization: 'NONE', organizationId: CUSTOM_SRS_ID, definition: crsToWkt(ctx.crs), description: ctx.crs.proj4 };
  const wgs: GpkgSrs = { srsId: 4326, name: 'WGS 84 geodetic', organization: 'EPSG', organizationId: 4326, definition: WGS84_WKT, description: 'longitude/latitude coordinates in decimal degrees on the WGS 84 spheroid' };
  const fields = TARGET_FIELDS.map(([name, type]) => ({ name, type }));
  const layer = (name: string, srsId: number, description: string): GpkgLayerDef => ({ name, srsId, description, geometryType: 'GEOMETRY', fields });
  return {
    srs: [wgs, siteSrs],
    site: layer('targets', siteSrs.srsId, `GPR targets of ${ctx.siteName} in the site CRS (radar finds are not a locate)`),
    wgs84: layer('targets_wgs84', 4326, `GPR targets of ${ctx.siteName} in WGS 84 (radar finds are not a locate)`),
  };
}

const gpkgValues = (t: Target, ctx: ExportContext): GpkgValue[] => {
  const p = targetProperties(t, ctx);
  return TARGET_FIELDS.map(([n]) => p[n] ?? null);
};

/** targets.gpkg: layer `targets` in the site CRS and `targets_wgs84` in EPSG:4326, same attributes. */
export async function targetsGpkg(targets: Target[], ctx: ExportContext): Promise<Uint8Array> {
  const { srs, site, wgs84 } = gpkgSchema(ctx);
  const values = targets.map((t) => gpkgValues(t, ctx));
  return writeGpkg(
    srs,
    [
      { ...site, features: targets.map((t, i) => ({ geometry: t.site, values: values[i]! })) },
      { ...wgs84, features: targets.map((t, i) => ({ geometry: t.wgs84, values: values[i]! })) },
    ],
    { timestamp: ctx.exportDate, tables: [layerStylesTable([site.name, wgs84.name], ctx)] },
  );
}

/** The layer_styles table of targets.gpkg (styles.ts): the default style of both layers. */
const layerStylesTable = (layers: string[], ctx: ExportContext) => ({
  name: 'layer_styles',
  description: 'default styles of the target layers (SLD 1.1 and QGIS QML): accepted solid in APWA colours, candidates dashed',
  columns: LAYER_STYLES_COLUMNS,
  rows: layerStylesRows(layers, ctx.exportDate),
});

// A spilled row of the WGS 84 layer: u32 record length, u32 geometry length, the GeoPackage geometry,
// then per value a tag (0 null, 1 float64, 2 UTF-8 string with u32 length). Little-endian throughout.
function encodeRow(geometry: Uint8Array, values: GpkgValue[]): Buffer {
  const strings = values.map((v) => (typeof v === 'string' ? Buffer.from(v, 'utf8') : undefined));
  const size = 8 + geometry.length + values.reduce<number>((s, v, i) => s + 1 + (v === null ? 0 : typeof v === 'number' ? 8 : 4 + strings[i]!.length), 0);
  const b = Buffer.alloc(size);
  b.writeUInt32LE(size, 0);
  b.writeUInt32LE(geometry.length, 4);
  b.set(geometry, 8);
  let o = 8 + geometry.length;
  values.forEach((v, i) => {
    if (v === null) b[o++] = 0;
    else if (typeof v === 'number') {
      b[o++] = 1;
      o = b.writeDoubleLE(v, o);
    } else {
      b[o++] = 2;
      o = b.writeUInt32LE(strings[i]!.length, o);
      b.set(strings[i]!, o);
      o += strings[i]!.length;
    }
  });
  return b;
}

async function* decodeRows(chunks: AsyncIterable<Buffer>, nValues: number): AsyncGenerator<[Uint8Array, GpkgValue[]]> {
  let carry: Buffer = Buffer.alloc(0);
  for await (const chunk of chunks) {
    carry = carry.length ? Buffer.concat([carry, chunk]) : chunk;
    let o = 0;
    while (carry.length - o >= 4 && carry.length - o >= carry.readUInt32LE(o)) {
      const size = carry.readUInt32LE(o);
      const glen = carry.readUInt32LE(o + 4);
      const geometry = carry.subarray(o + 8, o + 8 + glen);
      let p = o + 8 + glen;
      const values: GpkgValue[] = [];
      for (let i = 0; i < nValues; i++) {
        const tag = carry[p++];
        if (tag === 0) values.push(null);
        else if (tag === 1) {
          values.push(carry.readDoubleLE(p));
          p += 8;
        } else {
          const n = carry.readUInt32LE(p);
          values.push(carry.toString('utf8', p + 4, p + 4 + n));
          p += 4 + n;
        }
      }
      yield [geometry, values];
      o += size;
    }
    carry = carry.subarray(o);
  }
  if (carry.length) throw new Error(`targets.gpkg spill: ${carry.length} bytes left over`);
}

/**
 * targets.gpkg, byte for byte `targetsGpkg`. Rows of the site layer are inserted as targets come; the
 * WGS 84 layer must follow the whole site layer in the file (page order), so its rows go to a spill and
 * are inserted at the end. sql.js keeps the database in memory: it holds the file's size (both layers)
 * until exported once, then the bytes are staged.
 */
export async function gpkgWriter(path: string, ctx: ExportContext): Promise<TargetFileWriter> {
  const { srs, site, wgs84 } = gpkgSchema(ctx);
  const gp = await openGpkg(srs, { timestamp: ctx.exportDate });
  let spill: Spill | undefined;
  try {
    spill = await openSpill(path);
    gp.beginLayer(site);
  } catch (e) {
    gp.close();
    await spill?.remove();
    throw e;
  }
  const rows = spill;
  let closed = false;
  const close = () => {
    if (!closed) gp.close();
    closed = true;
  };
  return {
    add(t) {
      const values = gpkgValues(t, ctx);
      gp.add(t.site, values);
      return rows.write(encodeRow(gpkgGeometry(t.wgs84, wgs84.srsId), values));
    },
    async finish() {
      gp.endLayer();
      gp.beginLayer(wgs84);
      for await (const [geometry, values] of decodeRows(rows.read(), wgs84.fields.length)) gp.addBlob(geometry, values);
      gp.endLayer();
      gp.addTable(layerStylesTable([site.name, wgs84.name], ctx));
      const bytes = gp.export();
      close();
      await rows.remove();
      return stageFile(path, bytes);
    },
    async abort() {
      close();
      await rows.remove();
    },
  };
}

// ---------- report.html ----------

/**
 * report.html, byte for byte `reportHtml`: each target's and each flagged anomaly's table row is built
 * as it passes and kept as UTF-8 bytes (the target rows sorted by id at the end), rejected anomalies as
 * their ids; the page is written at `finish`, when the counts are known.
 */
export function reportWriter(path: string, crs: Crs): {
  add(r: Target | Dropped): void;
  finish(page: ReportPage, anomalyCount: number, notTargetClass?: number): Promise<StagedFile>;
} {
  const targets: { id: string; row: Uint8Array }[] = [];
  const flagged: Uint8Array[] = [];
  const rejectedIds: string[] = [];
  const mapTargets: MapTarget[] = [];
  const mapFlagged: MapFlagged[] = [];
  let deepestM = -Infinity;
  let acceptedCount = 0;
  // Each row in its own exact-size buffer: a kept Buffer.from() would pin a whole 8 KiB pool slab.
  const utf8 = new TextEncoder();
  return {
    add(r) {
      if (!('reason' in r)) {
        targets.push({ id: r.id, row: utf8.encode(reportTargetRow(r)) });
        const m = mapTargetOf(r);
        if (m) mapTargets.push(m);
        if (r.depthBottomM > deepestM) deepestM = r.depthBottomM;
        if (r.decision === 'accepted') acceptedCount++;
      } else if (r.reason === 'rejected') rejectedIds.push(r.id);
      else if (r.reason === 'class') {
        const b = r.anomaly.properties.depthBottomM;
        if (Number.isFinite(b) && b > deepestM) deepestM = b;
      } else {
        flagged.push(utf8.encode(reportFlaggedRow(r)));
        const m = mapFlaggedOf(r, crs);
        if (m) mapFlagged.push(m);
      }
    },
    async finish(page, anomalyCount, notTargetClass = 0) {
      targets.sort(byTargetId);
      const out = await stageStream(path);
      try {
        const rows = { targets: targets.map((t) => t.row), flagged, rejectedIds, anomalyCount, notTargetClass, acceptedCount, mapTargets, mapFlagged, ...(deepestM > -Infinity ? { deepestAnomalyM: deepestM } : {}) };
        for (const part of reportParts(page, rows)) await out.write(part);
      } catch (e) {
        await out.abort();
        throw e;
      }
      return out;
    },
  };
}
