import { createRequire } from 'node:module';
import { dirname, join } from 'node:path';
import initSqlJs from 'sql.js';
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
    const require = createRequire(import.meta.url);
    const dir = dirname(require.resolve('sql.js'));
    sqlPromise = initSqlJs({ locateFile: (f: string) => join(dir, f) });
  }
  return sqlPromise;
}

/** Build a GeoPackage in memory; returns the file bytes. */
export async function writeGpkg(srs: GpkgSrs[], layers: GpkgLayer[], options: { timestamp?: string } = {}): Promise<Uint8Array> {
  const SQL = await sqlJs();
  const db = new SQL.Database();
  const now = options.timestamp ?? new Date().toISOString();
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
    const seen = new Set<number>();
    for (const s of [...base, ...srs]) {
      if (seen.has(s.srsId)) continue;
      seen.add(s.srsId);
      ins.run([s.name, s.srsId, s.organization, s.organizationId, s.definition, s.description ?? null]);
    }
    ins.free();
    for (const layer of layers) {
      if (!seen.has(layer.srsId)) throw new Error(`layer ${layer.name}: srs_id ${layer.srsId} is not registered`);
      const cols = layer.fields.map((f) => `${ident(f.name)} ${f.type}`).join(', ');
      db.run(`CREATE TABLE ${ident(layer.name)} (fid INTEGER PRIMARY KEY AUTOINCREMENT NOT NULL, geom ${layer.geometryType}${cols ? ', ' + cols : ''})`);
      const env = envelope(layer.features.map((f) => f.geometry));
      db.run('INSERT INTO gpkg_contents (table_name, data_type, identifier, description, last_change, min_x, min_y, max_x, max_y, srs_id) VALUES (?, ?, ?, ?, ?, ?, ?, ?, ?, ?)', [
        layer.name,
        'features',
        layer.name,
        layer.description ?? '',
        now,
        env?.[0] ?? null,
        env?.[1] ?? null,
        env?.[2] ?? null,
        env?.[3] ?? null,
        layer.srsId,
      ]);
      db.run('INSERT INTO gpkg_geometry_columns VALUES (?, ?, ?, ?, 0, 0)', [layer.name, 'geom', layer.geometryType, layer.srsId]);
      const stmt = db.prepare(`INSERT INTO ${ident(layer.name)} (geom${layer.fields.map((f) => ', ' + ident(f.name)).join('')}) VALUES (?${', ?'.repeat(layer.fields.length)})`);
      for (const f of layer.features) {
        if (f.values.length !== layer.fields.length) throw new Error(`layer ${layer.name}: ${f.values.length} values for ${layer.fields.length} fields`);
        stmt.run([gpkgGeometry(f.geometry, layer.srsId), ...f.values]);
      }
      stmt.free();
    }
    return db.export();
  } finally {
    db.close();
  }
}
