import { createRequire } from 'node:module';
import { dirname, join } from 'node:path';
import initSqlJs from 'sql.js';
import { bundled, bundleDir } from '@lamina/runtime-files';
import type { Geometry } from './targets';
import { envelope } from './targets';

/**
 * A direct GeoPackage 1.3 writer on sql.js (OGC 12-128r18): the three required metadata tables, the
 * `GPKG` application_id (0x47504B47) and user_version 10300, feature tables with the GeoPackage binary
 * geometry header (magic "GP", version 0, little-endian, XY envelope) + ISO WKB. No R-tree (optional).
 */
export interface GpkgSrs {
  srsId: number;
  name: string;
  organization: string;
  organizationId: number;
  definition: string;
  description?: string;
}

export type GpkgFieldType = 'TEXT' | 'REAL' | 'INTEGER';
export type GpkgValue = string | number | null;

export interface GpkgLayer {
  name: string;
  description?: string;
  srsId: number;
  /** GeoPackage geometry type name of the column (GEOMETRY for mixed layers). */
  geometryType: 'GEOMETRY' | 'POINT' | 'LINESTRING' | 'POLYGON' | 'MULTIPOLYGON';
  fields: { name: string; type: GpkgFieldType }[];
  features: { geometry: Geometry; values: GpkgValue[] }[];
}

const WKB_TYPES: Record<Geometry['type'], number> = { Point: 1, LineString: 2, Polygon: 3, MultiPolygon: 6 };

/** ISO WKB (little-endian, 2D) of a geometry. */
export function wkb(g: Geometry): Uint8Array {
  const count = (g: Geometry): number => {
    switch (g.type) {
      case 'Point':
        return 21;
      case 'LineString':
        return 9 + 16 * g.coordinates.length;
      case 'Polygon':
        return 9 + g.coordinates.reduce((s, r) => s + 4 + 16 * r.length, 0);
      case 'MultiPolygon':
        return 9 + g.coordinates.reduce((s, pl) => s + count({ type: 'Polygon', coordinates: pl }), 0);
    }
  };
  const buf = new DataView(new ArrayBuffer(count(g)));
  let o = 0;
  const head = (t: number) => {
    buf.setUint8(o, 1);
    buf.setUint32(o + 1, t, true);
    o += 5;
  };
  const u32 = (v: number) => {
    buf.setUint32(o, v, true);
    o += 4;
  };
  const xy = (p: number[]) => {
    buf.setFloat64(o, p[0]!, true);
    buf.setFloat64(o + 8, p[1]!, true);
    o += 16;
  };
  const ring = (r: number[][]) => {
    u32(r.length);
    r.forEach(xy);
  };
  const write = (g: Geometry) => {
    head(WKB_TYPES[g.type]);
    if (g.type === 'Point') xy(g.coordinates);
    else if (g.type === 'LineString') ring(g.coordinates);
    else if (g.type === 'Polygon') {
      u32(g.coordinates.length);
      g.coordinates.forEach(ring);
    } else {
      u32(g.coordinates.length);
      for (const pl of g.coordinates) write({ type: 'Polygon', coordinates: pl });
    }
  };
  write(g);
  return new Uint8Array(buf.buffer);
}

/** GeoPackage binary geometry: header (8 bytes + XY envelope) then WKB. */
export function gpkgGeometry(g: Geometry, srsId: number): Uint8Array {
  const body = wkb(g);
  const env = envelope([g])!;
  const out = new Uint8Array(8 + 32 + body.length);
  const v = new DataView(out.buffer);
  out[0] = 0x47; // 'G'
  out[1] = 0x50; // 'P'
  out[2] = 0; // version 1
  out[3] = 0b0000_0011; // little-endian, envelope [minx, maxx, miny, maxy]
  v.setInt32(4, srsId, true);
  v.setFloat64(8, env[0], true);
  v.setFloat64(16, env[2], true);
  v.setFloat64(24, env[1], true);
  v.setFloat64(32, env[3], true);
  out.set(body, 40);
  return out;
}

const ident = (s: string) => `"${s.replace(/"/g, '""')}"`;

let sqlPromise: ReturnType<typeof initSqlJs> | undefined;
function sqlJs(): ReturnType<typeof initSqlJs> {
  if (!sqlPromise) {
    // the CLI build copies sql.js's wasm beside the bundle
    const dir = bundled ? bundleDir() : dirname(createRequire(import.meta.url).resolve('sql.js'));
    sqlPromise = initSqlJs({ locateFile: (f: string) => join(dir, f) });
  }
  return sqlPromise;
}

/**
 * Starts loading sql.js (its WebAssembly compiles off the main thread) so that a later `openGpkg` finds
 * it ready: a caller with other work before its first GeoPackage hides the compile behind that work.
 * A failure to load surfaces at `openGpkg`, as without this.
 */
export function preloadGpkg(): void {
  sqlJs().catch(() => {});
}

/** A feature table's definition: a GpkgLayer without its features. */
export type GpkgLayerDef = Omit<GpkgLayer, 'features'>;

/**
 * A GeoPackage built in sql.js one feature at a time: `beginLayer`, `add` each feature (or `addBlob`, a
 * geometry already in GeoPackage binary), `endLayer` (writes the gpkg_contents row with the envelope
 * accumulated from the features' headers), then `export` once. The database lives in sql.js memory, so it
 * holds the whole file (the layers' size) until exported; layers are written one after the other.
 */
export interface GpkgWriter {
  beginLayer(layer: GpkgLayerDef): void;
  add(geometry: Geometry, values: GpkgValue[]): void;
  addBlob(geometry: Uint8Array, values: GpkgValue[]): void;
  endLayer(): void;
  /**
   * A table without geometry (`id` primary key, then the columns), registered in gpkg_contents as
   * `attributes` (GeoPackage 1.3, clause 2.4).
   */
  addTable(table: { name: string; description?: string; columns: readonly (readonly [string, GpkgFieldType])[]; rows: GpkgValue[][] }): void;
  /** The file bytes. */
  export(): Uint8Array;
  close(): void;
}

/** Open a GeoPackage writer with the required metadata tables and the given SRSs registered. */
export async function openGpkg(srs: GpkgSrs[], options: { timestamp?: string } = {}): Promise<GpkgWriter> {
  const SQL = await sqlJs();
  const db = new SQL.Database();
  const now = options.timestamp ?? new Date().toISOString();
  const seen = new Set<number>();
  try {
    db.run(`PRAGMA application_id = ${0x47504b47}; PRAGMA user_version = 10300;`);
    db.run(`CREATE TABLE gpkg_spatial_ref_sys (srs_name TEXT NOT NULL, srs_id INTEGER PRIMARY KEY, organization TEXT NOT NULL,
      organization_coordsys_id INTEGER NOT NULL, definition TEXT NOT NULL, description TEXT)`);
    db.run(`CREATE TABLE gpkg_contents (table_name TEXT NOT NULL PRIMARY KEY, data_type TEXT NOT NULL, identifier TEXT UNIQUE,
      description TEXT DEFAULT '', last_change DATETIME NOT NULL DEFAULT (strftime('%Y-%m-%dT%H:%M:%fZ','now')),
      min_x DOUBLE, min_y DOUBLE, max_x DOUBLE, max_y DOUBLE, srs_id INTEGER,
      CONSTRAINT fk_gc_r_srs_id FOREIGN KEY (srs_id) REFERENCES gpkg_spatial_ref_sys(srs_id))`);
    db.run(`CREATE TABLE gpkg_geometry_columns (table_name TEXT NOT NULL, column_name TEXT NOT NULL, geometry_type_name TEXT NOT NULL,
      srs_id INTEGER NOT NULL, z TINYINT NOT NULL, m TINYINT NOT NULL,
      CONSTRAINT pk_geom_cols PRIMARY KEY (table_name, column_name), CONSTRAINT uk_gc_table_name UNIQUE (table_name),
      CONSTRAINT fk_gc_tn FOREIGN KEY (table_name) REFERENCES gpkg_contents(table_name),
      CONSTRAINT fk_gc_srs FOREIGN KEY (srs_id) REFERENCES gpkg_spatial_ref_sys (srs_id))`);
    const ins = db.prepare('INSERT INTO gpkg_spatial_ref_sys VALUES (?, ?, ?, ?, ?, ?)');
    const base: GpkgSrs[] = [
      { srsId: -1, name: 'Undefined cartesian SRS', organization: 'NONE', organizationId: -1, definition: 'undefined', description: 'undefined cartesian coordinate reference system' },
      { srsId: 0, name: 'Undefined geographic SRS', organization: 'NONE', organizationId: 0, definition: 'undefined', description: 'undefined geographic coordinate reference system' },
    ];
    for (const s of [...base, ...srs]) {
      if (seen.has(s.srsId)) continue;
      seen.add(s.srsId);
      ins.run([s.name, s.srsId, s.organization, s.organizationId, s.definition, s.description ?? null]);
    }
    ins.free();
  } catch (e) {
    db.close();
    throw e;
  }

  let layer: GpkgLayerDef | undefined;
  let stmt: ReturnType<typeof db.prepare> | undefined;
  let x0 = Infinity, y0 = Infinity, x1 = -Infinity, y1 = -Infinity;
  const open = (): [GpkgLayerDef, NonNullable<typeof stmt>] => {
    if (!layer || !stmt) throw new Error('GeoPackage writer: add() outside beginLayer() ... endLayer()');
    return [layer, stmt];
  };
  const writer: GpkgWriter = {
    beginLayer(l) {
      if (layer) throw new Error(`layer ${l.name}: layer ${layer.name} is not ended`);
      if (!seen.has(l.srsId)) throw new Error(`layer ${l.name}: srs_id ${l.srsId} is not registered`);
      const cols = l.fields.map((f) => `${ident(f.name)} ${f.type}`).join(', ');
      db.run(`CREATE TABLE ${ident(l.name)} (fid INTEGER PRIMARY KEY AUTOINCREMENT NOT NULL, geom ${l.geometryType}${cols ? ', ' + cols : ''})`);
      // gpkg_contents (with the envelope) is written at endLayer: each metadata table has its own page, so
      // the file's bytes do not depend on when its row goes in.
      db.run('INSERT INTO gpkg_geometry_columns VALUES (?, ?, ?, ?, 0, 0)', [l.name, 'geom', l.geometryType, l.srsId]);
      stmt = db.prepare(`INSERT INTO ${ident(l.name)} (geom${l.fields.map((f) => ', ' + ident(f.name)).join('')}) VALUES (?${', ?'.repeat(l.fields.length)})`);
      layer = l;
      x0 = y0 = Infinity;
      x1 = y1 = -Infinity;
    },
    add(geometry, values) {
      writer.addBlob(gpkgGeometry(geometry, open()[0].srsId), values);
    },
    addBlob(geometry, values) {
      const [l, st] = open();
      if (values.length !== l.fields.length) throw new Error(`layer ${l.name}: ${values.length} values for ${l.fields.length} fields`);
      // The header's envelope [minx, maxx, miny, maxy] (written by gpkgGeometry); min/max do not depend on order.
      const v = new DataView(geometry.buffer, geometry.byteOffset, geometry.byteLength);
      x0 = Math.min(x0, v.getFloat64(8, true));
      x1 = Math.max(x1, v.getFloat64(16, true));
      y0 = Math.min(y0, v.getFloat64(24, true));
      y1 = Math.max(y1, v.getFloat64(32, true));
      st.run([geometry, ...values]);
    },
    endLayer() {
      const [l, st] = open();
      st.free();
      stmt = undefined;
      layer = undefined;
      const env = x0 <= x1 ? [x0, y0, x1, y1] : undefined;
      db.run('INSERT INTO gpkg_contents (table_name, data_type, identifier, description, last_change, min_x, min_y, max_x, max_y, srs_id) VALUES (?, ?, ?, ?, ?, ?, ?, ?, ?, ?)', [
        l.name,
        'features',
        l.name,
        l.description ?? '',
        now,
        env?.[0] ?? null,
        env?.[1] ?? null,
        env?.[2] ?? null,
        env?.[3] ?? null,
        l.srsId,
      ]);
    },
    addTable(t) {
      if (layer) throw new Error(`table ${t.name}: layer ${layer.name} is not ended`);
      db.run(`CREATE TABLE ${ident(t.name)} (id INTEGER PRIMARY KEY AUTOINCREMENT NOT NULL, ${t.columns.map(([n, ty]) => `${ident(n)} ${ty}`).join(', ')})`);
      const ins = db.prepare(`INSERT INTO ${ident(t.name)} (${t.columns.map(([n]) => ident(n)).join(', ')}) VALUES (${t.columns.map(() => '?').join(', ')})`);
      try {
        for (const r of t.rows) {
          if (r.length !== t.columns.length) throw new Error(`table ${t.name}: ${r.length} values for ${t.columns.length} columns`);
          ins.run(r);
        }
      } finally {
        ins.free();
      }
      db.run('INSERT INTO gpkg_contents (table_name, data_type, identifier, description, last_change) VALUES (?, ?, ?, ?, ?)', [t.name, 'attributes', t.name, t.description ?? '', now]);
    },
    export: () => db.export(),
    close() {
      stmt?.free();
      db.close();
    },
  };
  return writer;
}

/** Build a GeoPackage in memory; returns the file bytes. */
export async function writeGpkg(
  srs: GpkgSrs[],
  layers: GpkgLayer[],
  options: { timestamp?: string; tables?: Parameters<GpkgWriter['addTable']>[0][] } = {},
): Promise<Uint8Array> {
  const w = await openGpkg(srs, options);
  try {
    for (const { features, ...def } of layers) {
      w.beginLayer(def);
      for (const f of features) w.add(f.geometry, f.values);
      w.endLayer();
    }
    for (const t of options.tables ?? []) w.addTable(t);
    return w.export();
  } finally {
    w.close();
  }
}
