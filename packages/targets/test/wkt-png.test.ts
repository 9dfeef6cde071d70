import { describe, expect, it } from 'vitest';
import { lookupEpsg, resolveCrs } from '@lamina/site';
import { crc32, crsToWkt, encodePng, gpkgGeometry } from '../src';
import { py } from './fixture';

describe('crsToWkt against GDAL/PROJ (osr)', () => {
  // Each: a proj4 definition (from the bundled registry where an EPSG code exists) and a point inside its area.
  const cases: [string, string, [number, number]][] = [
    ['UTM 17N', lookupEpsg(32617)!, [-81.8, 40.0]],
    ['UTM 56S GRS80', lookupEpsg(7856)!, [151.2, -33.9]],
    ['NC state plane ft (LCC 2SP, NAD83, us-ft)', lookupEpsg(2264)!, [-78.6, 35.8]],
    ['NJ state plane ft (tmerc, us-ft)', lookupEpsg(3424)!, [-74.5, 40.2]],
    ['LCC 1SP', '+proj=lcc +lat_1=18 +lat_0=18 +lon_0=-77 +k_0=1 +x_0=250000 +y_0=150000 +ellps=clrk66 +units=m +no_defs', [-77.2, 18.1]],
    ['Albers', lookupEpsg(5070)!, [-96, 40]],
    ['LAEA Europe', lookupEpsg(3035)!, [10, 52]],
    ['RD New (sterea, towgs84)', lookupEpsg(28992)!, [5.3, 52.1]],
    ['polar stereographic', lookupEpsg(3031)!, [0, -75]],
    ['Mercator 1SP', '+proj=merc +lon_0=0 +k=1 +x_0=0 +y_0=0 +datum=WGS84 +units=m +no_defs', [10, 40]],
    ['Cassini', '+proj=cass +lat_0=10.44166666666667 +lon_0=-61.33333333333334 +x_0=86501.46392052001 +y_0=65379.0134283 +ellps=clrk66 +units=m +no_defs', [-61.3, 10.5]],
    ['web Mercator (PROJ4 extension)', lookupEpsg(3857)!, [10, 40]],
    ['international feet tmerc', '+proj=tmerc +lat_0=0 +lon_0=-90 +k=0.9996 +x_0=500000 +y_0=0 +datum=WGS84 +units=ft +no_defs', [-90.5, 30]],
  ];
  it('projects a point as the proj4 definition does, to 1 mm', () => {
    const input = cases.map(([name, def, ll]) => {
      const { code: _code, ...crs } = resolveCrs(def); // as a bare proj4 string: no AUTHORITY to lean on
      return { name, def, ll, wkt: crsToWkt(crs) };
    });
    const out = JSON.parse(
      py(
        `
import sys, json
from osgeo import osr
osr.UseExceptions()
res = []
for c in json.loads(sys.argv[1]):
    a = osr.SpatialReference(); a.ImportFromWkt(c['wkt']); a.SetAxisMappingStrategy(osr.OAMS_TRADITIONAL_GIS_ORDER)
    b = osr.SpatialReference(); b.ImportFromProj4(c['def']); b.SetAxisMappingStrategy(osr.OAMS_TRADITIONAL_GIS_ORDER)
    g = osr.SpatialReference(); g.ImportFromEPSG(4326); g.SetAxisMappingStrategy(osr.OAMS_TRADITIONAL_GIS_ORDER)
    pa = osr.CoordinateTransformation(g, a).TransformPoint(c['ll'][0], c['ll'][1])
    pb = osr.CoordinateTransformation(g, b).TransformPoint(c['ll'][0], c['ll'][1])
    res.append({'name': c['name'], 'dx': abs(pa[0] - pb[0]) * a.GetLinearUnits(), 'dy': abs(pa[1] - pb[1]) * a.GetLinearUnits(), 'unitA': a.GetLinearUnits(), 'unitB': b.GetLinearUnits()})
print(json.dumps(res))
`,
        [JSON.stringify(input)],
      ),
    );
    for (const r of out) {
      expect({ name: r.name, ok: r.dx < 1e-3 && r.dy < 1e-3 }).toEqual({ name: r.name, ok: true });
      expect(r.unitA).toBeCloseTo(r.unitB, 12);
    }
  });
});

describe('GeoPackage geometry blob', () => {
  it('has the GP header (OGC 12-128r18 2.1.3) and WKB GDAL parses', () => {
    const blob = gpkgGeometry({ type: 'LineString', coordinates: [[1, 2], [3, 5]] }, 32617);
    expect([...blob.subarray(0, 4)]).toEqual([0x47, 0x50, 0, 3]);
    const wkbHex = Buffer.from(blob.subarray(40)).toString('hex');
    const wkt = py(`import sys\nfrom osgeo import ogr\nprint(ogr.CreateGeometryFromWkb(bytes.fromhex(sys.argv[1])).ExportToWkt())`, [wkbHex]).trim();
    expect(wkt).toBe('LINESTRING (1 2,3 5)');
    const env = new DataView(blob.buffer, blob.byteOffset + 8, 32);
    expect([0, 8, 16, 24].map((o) => env.getFloat64(o, true))).toEqual([1, 3, 2, 5]); // minx, maxx, miny, maxy
  });
});

describe('PNG encoder', () => {
  it('CRC-32 of "123456789" is 0xCBF43926 (the standard check value, ISO 3309 / PNG spec annex D)', () => {
    expect((crc32(new TextEncoder().encode('123456789')) ^ 0xffffffff) >>> 0).toBe(0xcbf43926);
  });

  it('Python zlib + the PNG chunk layout decode what we encode (grey+alpha and RGBA)', () => {
    const w = 5, h = 3;
    const ga = new Uint8Array(w * h * 2).map((_, i) => (i * 37) & 255);
    const rgba = new Uint8Array(w * h * 4).map((_, i) => (i * 11) & 255);
    for (const [px, ch] of [[ga, 2], [rgba, 4]] as const) {
      const png = Buffer.from(encodePng(w, h, px, ch)).toString('hex');
      const out = JSON.parse(
        py(
          `
import sys, zlib, struct, json
b = bytes.fromhex(sys.argv[1]); assert b[:8] == b'\\x89PNG\\r\\n\\x1a\\n'
o = 8; chunks = []; idat = b''
while o < len(b):
    n, = struct.unpack('>I', b[o:o+4]); t = b[o+4:o+8]; d = b[o+8:o+8+n]; crc, = struct.unpack('>I', b[o+8+n:o+12+n])
    assert zlib.crc32(t + d) == crc, t
    chunks.append(t.decode()); o += 12 + n
    if t == b'IHDR': w, h, depth, ctype = struct.unpack('>IIBB', d[:10])
    if t == b'IDAT': idat += d
raw = zlib.decompress(idat); ch = {4: 2, 6: 4}[ctype]; stride = w * ch
px = []
for y in range(h):
    assert raw[y * (stride + 1)] == 0
    px += list(raw[y * (stride + 1) + 1:(y + 1) * (stride + 1)])
print(json.dumps({'chunks': chunks, 'w': w, 'h': h, 'depth': depth, 'px': px}))
`,
          [png],
        ),
      );
      expect(out.chunks).toEqual(['IHDR', 'IDAT', 'IEND']);
      expect([out.w, out.h, out.depth]).toEqual([w, h, 8]);
      expect(out.px).toEqual([...px]);
    }
  });
});
