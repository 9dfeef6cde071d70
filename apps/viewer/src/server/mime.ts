import { extname } from 'node:path';

const TYPES: Record<string, string> = {
  '.html': 'text/html; charset=utf-8',
  '.js': 'text/javascript; charset=utf-8',
  '.mjs': 'text/javascript; charset=utf-8',
  '.css': 'text/css; charset=utf-8',
  '.json': 'application/json; charset=utf-8',
  '.geojson': 'application/geo+json; charset=utf-8',
  '.map': 'application/json; charset=utf-8',
  '.tif': 'image/tiff',
  '.tiff': 'image/tiff',
  '.png': 'image/png',
  '.svg': 'image/svg+xml',
  '.ico': 'image/x-icon',
  '.wasm': 'application/wasm',
  '.f32': 'application/octet-stream',
  '.gpkg': 'application/geopackage+sqlite3',
  '.csv': 'text/csv; charset=utf-8',
  '.dxf': 'image/vnd.dxf',
  '.txt': 'text/plain; charset=utf-8',
  '.pbf': 'application/x-protobuf',
};

/** Content type by file extension; unknown extensions are served as bytes. */
export function contentType(path: string): string {
  return TYPES[extname(path).toLowerCase()] ?? 'application/octet-stream';
}
