import { deflate } from 'node:zlib';
import { promisify } from 'node:util';

const deflateAsync = promisify(deflate);

/** How the file's CRS is declared in its GeoKeys. */
export interface CogCrs {
  /** EPSG code of the CRS, if it has one. */
  epsg?: number;
  /** True for a geographic CRS (degrees); selects GeographicTypeGeoKey over ProjectedCSTypeGeoKey. */
  geographic?: boolean;
  /** For a user-defined projected CRS: metres per linear unit (1, 1200/3937 US survey foot, 0.3048 foot). */
  metresPerUnit?: number;
  /** Free text stored in GTCitationGeoKey (e.g. the proj4 string of a user-defined CRS). */
  citation?: string;
}

export interface CogOptions {
  /** Top-left corner of the top-left pixel, CRS units. */
  originX: number;
  originY: number;
  /** Pixel size in CRS units (positive; rows run north to south). */
  pixelSize: number;
  crs: CogCrs;
  /** Written as GDAL_NODATA; padding of edge tiles and empty overview cells. */
  nodata?: number;
  /** One per band, shown by GDAL as the band description. */
  descriptions?: string[];
  /** Extra per-band metadata items (GDAL_METADATA `<Item name sample>`), one record per band. */
  bandMetadata?: Record<string, string>[];
  /** Dataset-level metadata items (GDAL_METADATA `<Item name>`). */
  metadata?: Record<string, string>;
  /** @default 256 (a multiple of 16, as TIFF requires) */
  tileSize?: number;
  /** 1 none, 3 floating-point predictor. @default 3 */
  predictor?: 1 | 3;
  /** zlib level 1-9. @default 6 */
  level?: number;
  /** Build internal overviews (2x2 mean ignoring nodata) until the image fits one tile. @default true */
  overviews?: boolean;
}

interface Level {
  width: number;
  height: number;
  bands: Float32Array[];
}

// TIFF field types
const SHORT = 3;
const LONG = 4;
const ASCII = 2;
const DOUBLE = 12;

interface Tag {
  code: number;
  type: number;
  values: number[] | string;
}

/**
 * Encode Float32 bands (row-major, `width * height` each) as a cloud-optimised GeoTIFF: little-endian
 * classic TIFF, pixel-interleaved tiles, DEFLATE, internal overviews, all IFDs before the data, tiles of the
 * smallest overview first, and GDAL's structural metadata (block leader and trailer) so GDAL's COG
 * validator can check the layout in full.
 */
export async function encodeCog(bands: Float32Array[], width: number, height: number, options: CogOptions): Promise<Uint8Array> {
  const nBands = bands.length;
  if (nBands === 0) throw new Error('encodeCog: expected at least one band, found none');
  if (nBands > 65535) throw new Error(`encodeCog: expected at most 65535 bands, found ${nBands}`);
  for (const [i, b] of bands.entries()) {
    if (b.length !== width * height) throw new Error(`encodeCog: band ${i} has ${b.length} values, expected ${width * height}`);
  }
  const tileSize = options.tileSize ?? 256;
  if (tileSize % 16 !== 0 || tileSize <= 0) throw new Error(`encodeCog: tileSize must be a positive multiple of 16, found ${tileSize}`);
  const predictor = options.predictor ?? 3;
  const level = options.level ?? 6;
  const nodata = options.nodata ?? Number.NaN;

  const levels: Level[] = [{ width, height, bands }];
  if (options.overviews ?? true) {
    let last = levels[0]!;
    while (last.width > tileSize || last.height > tileSize) {
      last = downsample(last, nodata);
      levels.push(last);
    }
  }

  // Compress every tile of every level (zlib runs on the libuv pool, so tiles go in parallel).
  const tiles: Uint8Array[][] = [];
  for (const lv of levels) tiles.push(await encodeLevel(lv, tileSize, nodata, predictor, level));

  const ghost = structuralMetadata();
  const ifdTags = levels.map((lv, i) => levelTags(lv, i, nBands, tileSize, predictor, options, nodata));

  // Layout: header | ghost | IFD0 .. IFDn | out-of-line tag data | tiles (smallest overview first).
  let pos = 8 + ghost.length;
  pos += pos % 2;
  const ifdOffsets: number[] = [];
  for (const tags of ifdTags) {
    ifdOffsets.push(pos);
    pos += 2 + tags.length * 12 + 4;
  }
  const extraStart = pos;
  // First pass with placeholder offsets to size the out-of-line data.
  let extraSize = 0;
  for (const tags of ifdTags) for (const t of tags) extraSize += padEven(outOfLineSize(t));
  let dataPos = extraStart + extraSize;
  // Tile offsets: each tile has a 4-byte leader (its size) and a 4-byte trailer (its last 4 bytes again).
  const tileOffsets: number[][] = levels.map(() => []);
  for (let li = levels.length - 1; li >= 0; li--) {
    for (const t of tiles[li]!) {
      dataPos += 4;
      tileOffsets[li]!.push(dataPos);
      dataPos += t.length + 4;
    }
  }
  const total = dataPos;
  if (total > 0xffffffff) throw new Error(`encodeCog: ${total} bytes exceed the 4 GiB of a classic TIFF`);
  for (const [li, tags] of ifdTags.entries()) {
    setTag(tags, 324, tileOffsets[li]!);
    setTag(tags, 325, tiles[li]!.map((t) => t.length));
  }

  const out = new Uint8Array(total);
  const dv = new DataView(out.buffer);
  out[0] = 0x49;
  out[1] = 0x49;
  dv.setUint16(2, 42, true);
  dv.setUint32(4, ifdOffsets[0]!, true);
  out.set(ghost, 8);

  let extraPos = extraStart;
  for (const [li, tags] of ifdTags.entries()) {
    let p = ifdOffsets[li]!;
    dv.setUint16(p, tags.length, true);
    p += 2;
    for (const t of tags) {
      const bytes = tagBytes(t);
      dv.setUint16(p, t.code, true);
      dv.setUint16(p + 2, t.type, true);
      dv.setUint32(p + 4, tagCount(t), true);
      if (bytes.length <= 4) out.set(bytes, p + 8);
      else {
        dv.setUint32(p + 8, extraPos, true);
        out.set(bytes, extraPos);
        extraPos += padEven(bytes.length);
      }
      p += 12;
    }
    dv.setUint32(p, li + 1 < ifdTags.length ? ifdOffsets[li + 1]! : 0, true);
  }
  for (let li = levels.length - 1; li >= 0; li--) {
    const ts = tiles[li]!;
    for (const [k, t] of ts.entries()) {
      const off = tileOffsets[li]![k]!;
      dv.setUint32(off - 4, t.length, true);
      out.set(t, off);
      out.set(t.subarray(t.length - 4), off + t.length);
    }
  }
  return out;
}

function structuralMetadata(): Uint8Array {
  const body =
    'LAYOUT=IFDS_BEFORE_DATA\nBLOCK_ORDER=ROW_MAJOR\nBLOCK_LEADER=SIZE_AS_UINT4\n' +
    'BLOCK_TRAILER=LAST_4_BYTES_REPEATED\nKNOWN_INCOMPATIBLE_EDITION=NO\n ';
  const head = `GDAL_STRUCTURAL_METADATA_SIZE=${String(body.length).padStart(6, '0')} bytes\n`;
  return new TextEncoder().encode(head + body);
}

function levelTags(lv: Level, index: number, nBands: number, tileSize: number, predictor: number, o: CogOptions, nodata: number): Tag[] {
  const nTiles = Math.ceil(lv.width / tileSize) * Math.ceil(lv.height / tileSize);
  const tags: Tag[] = [
    { code: 254, type: LONG, values: [index === 0 ? 0 : 1] },
    { code: 256, type: LONG, values: [lv.width] },
    { code: 257, type: LONG, values: [lv.height] },
    { code: 258, type: SHORT, values: new Array<number>(nBands).fill(32) },
    { code: 259, type: SHORT, values: [8] },
    { code: 262, type: SHORT, values: [1] },
    { code: 277, type: SHORT, values: [nBands] },
    { code: 284, type: SHORT, values: [1] },
    { code: 317, type: SHORT, values: [predictor] },
    { code: 322, type: SHORT, values: [tileSize] },
    { code: 323, type: SHORT, values: [tileSize] },
    { code: 324, type: LONG, values: new Array<number>(nTiles).fill(0) },
    { code: 325, type: LONG, values: new Array<number>(nTiles).fill(0) },
  ];
  if (nBands > 1) tags.push({ code: 338, type: SHORT, values: new Array<number>(nBands - 1).fill(0) });
  tags.push({ code: 339, type: SHORT, values: new Array<number>(nBands).fill(3) });
  if (index === 0) {
    tags.push({ code: 33550, type: DOUBLE, values: [o.pixelSize, o.pixelSize, 0] });
    tags.push({ code: 33922, type: DOUBLE, values: [0, 0, 0, o.originX, o.originY, 0] });
    const gk = geoKeys(o.crs);
    tags.push({ code: 34735, type: SHORT, values: gk.directory });
    if (gk.ascii.length > 0) tags.push({ code: 34737, type: ASCII, values: gk.ascii });
    const md = gdalMetadata(o);
    if (md) tags.push({ code: 42112, type: ASCII, values: md });
  }
  tags.push({ code: 42113, type: ASCII, values: formatNodata(nodata) });
  return tags;
}

/** GDAL writes nodata as text; NaN as `nan`. */
function formatNodata(v: number): string {
  if (Number.isNaN(v)) return 'nan';
  return String(v);
}

function geoKeys(crs: CogCrs): { directory: number[]; ascii: string } {
  const keys: [number, number, number, number][] = [];
  let ascii = '';
  const asciiKey = (id: number, text: string) => {
    const s = `${text}|`;
    keys.push([id, 34737, s.length, ascii.length]);
    ascii += s;
  };
  keys.push([1025, 0, 1, 1]); // GTRasterTypeGeoKey: PixelIsArea
  if (crs.citation) asciiKey(1026, crs.citation);
  if (crs.epsg !== undefined) {
    keys.push([1024, 0, 1, crs.geographic ? 2 : 1]); // GTModelTypeGeoKey
    keys.push([crs.geographic ? 2048 : 3072, 0, 1, crs.epsg]); // GeographicTypeGeoKey / ProjectedCSTypeGeoKey
  } else if (!crs.geographic) {
    // No code: a local (engineering) CRS that keeps the linear unit, as GDAL itself writes one;
    // the full definition travels in the citation and in slices.json.
    keys.push([3076, 0, 1, linearUnitCode(crs.metresPerUnit ?? 1)]); // ProjLinearUnitsGeoKey
  } else {
    keys.push([1024, 0, 1, 2]);
  }
  keys.sort((a, b) => a[0] - b[0]);
  return { directory: [1, 1, 0, keys.length, ...keys.flat()], ascii };
}

/** EPSG unit-of-measure codes: 9001 metre, 9002 international foot, 9003 US survey foot. */
function linearUnitCode(metresPerUnit: number): number {
  if (Math.abs(metresPerUnit - 1200 / 3937) < 1e-12) return 9003;
  if (Math.abs(metresPerUnit - 0.3048) < 1e-12) return 9002;
  if (Math.abs(metresPerUnit - 1) < 1e-12) return 9001;
  throw new Error(`encodeCog: expected metresPerUnit 1, 0.3048 or 1200/3937 for a user-defined CRS, found ${metresPerUnit}`);
}

function xmlEscape(s: string): string {
  return s.replace(/&/g, '&amp;').replace(/</g, '&lt;').replace(/>/g, '&gt;').replace(/"/g, '&quot;');
}

function gdalMetadata(o: CogOptions): string | undefined {
  const items: string[] = [];
  for (const [k, v] of Object.entries(o.metadata ?? {})) items.push(`<Item name="${xmlEscape(k)}">${xmlEscape(v)}</Item>`);
  for (const [i, d] of (o.descriptions ?? []).entries()) {
    items.push(`<Item name="DESCRIPTION" sample="${i}" role="description">${xmlEscape(d)}</Item>`);
  }
  for (const [i, rec] of (o.bandMetadata ?? []).entries()) {
    for (const [k, v] of Object.entries(rec)) items.push(`<Item name="${xmlEscape(k)}" sample="${i}">${xmlEscape(v)}</Item>`);
  }
  if (items.length === 0) return undefined;
  return `<GDALMetadata>\n${items.map((s) => `  ${s}\n`).join('')}</GDALMetadata>`;
}

function setTag(tags: Tag[], code: number, values: number[]) {
  const t = tags.find((x) => x.code === code);
  if (!t) throw new Error(`encodeCog: tag ${code} missing`);
  t.values = values;
}

function tagCount(t: Tag): number {
  return typeof t.values === 'string' ? t.values.length + 1 : t.values.length;
}

function outOfLineSize(t: Tag): number {
  const n = tagBytesLength(t);
  return n <= 4 ? 0 : n;
}

function tagBytesLength(t: Tag): number {
  const width = t.type === SHORT ? 2 : t.type === LONG ? 4 : t.type === DOUBLE ? 8 : 1;
  return tagCount(t) * width;
}

function tagBytes(t: Tag): Uint8Array {
  const out = new Uint8Array(tagBytesLength(t));
  const dv = new DataView(out.buffer);
  if (typeof t.values === 'string') {
    for (let i = 0; i < t.values.length; i++) out[i] = t.values.charCodeAt(i) & 0xff;
    return out;
  }
  for (const [i, v] of t.values.entries()) {
    if (t.type === SHORT) dv.setUint16(i * 2, v, true);
    else if (t.type === LONG) dv.setUint32(i * 4, v, true);
    else dv.setFloat64(i * 8, v, true);
  }
  return out;
}

function padEven(n: number): number {
  return n + (n % 2);
}

/** Halve a level: each output pixel is the mean of the valid pixels of its 2x2 block, else nodata. */
function downsample(lv: Level, nodata: number): Level {
  const w = Math.ceil(lv.width / 2);
  const h = Math.ceil(lv.height / 2);
  const nanNodata = Number.isNaN(nodata);
  const bands = lv.bands.map((src) => {
    const dst = new Float32Array(w * h);
    for (let r = 0; r < h; r++) {
      for (let c = 0; c < w; c++) {
        let sum = 0;
        let n = 0;
        for (let dr = 0; dr < 2; dr++) {
          const sr = 2 * r + dr;
          if (sr >= lv.height) continue;
          for (let dc = 0; dc < 2; dc++) {
            const sc = 2 * c + dc;
            if (sc >= lv.width) continue;
            const v = src[sr * lv.width + sc]!;
            if (nanNodata ? Number.isNaN(v) : v === nodata || Number.isNaN(v)) continue;
            sum += v;
            n++;
          }
        }
        dst[r * w + c] = n > 0 ? sum / n : nodata;
      }
    }
    return dst;
  });
  return { width: w, height: h, bands };
}

async function encodeLevel(lv: Level, ts: number, nodata: number, predictor: number, level: number): Promise<Uint8Array[]> {
  const nb = lv.bands.length;
  const across = Math.ceil(lv.width / ts);
  const down = Math.ceil(lv.height / ts);
  const jobs: (() => Promise<Uint8Array>)[] = [];
  for (let ty = 0; ty < down; ty++) {
    for (let tx = 0; tx < across; tx++) {
      jobs.push(async () => {
        const tile = new Float32Array(ts * ts * nb).fill(nodata);
        for (let r = 0; r < ts; r++) {
          const sr = ty * ts + r;
          if (sr >= lv.height) break;
          const c1 = Math.min(ts, lv.width - tx * ts);
          for (let b = 0; b < nb; b++) {
            const src = lv.bands[b]!;
            const base = sr * lv.width + tx * ts;
            let o = r * ts * nb + b;
            for (let c = 0; c < c1; c++, o += nb) tile[o] = src[base + c]!;
          }
        }
        let bytes: Uint8Array = new Uint8Array(tile.buffer);
        if (predictor === 3) bytes = floatPredict(bytes, ts, ts * nb, nb);
        const z = await deflateAsync(bytes, { level });
        return new Uint8Array(z.buffer, z.byteOffset, z.length);
      });
    }
  }
  // A few tiles in flight keep both cores busy without holding every uncompressed tile at once.
  const out: Uint8Array[] = new Array<Uint8Array>(jobs.length);
  let next = 0;
  const worker = async () => {
    while (next < jobs.length) {
      const i = next++;
      out[i] = await jobs[i]!();
    }
  };
  await Promise.all([worker(), worker(), worker(), worker()]);
  return out;
}

/**
 * TIFF floating-point predictor (Adobe Photoshop TIFF Technical Note 3, predictor 3): per row, the bytes
 * of the row's samples are split into planes, most significant byte first, then byte-wise horizontal
 * differencing with a stride of one pixel (samples per pixel). Input is little-endian Float32.
 */
function floatPredict(src: Uint8Array, rows: number, samplesPerRow: number, stride: number): Uint8Array {
  const out = new Uint8Array(src.length);
  const rowBytes = samplesPerRow * 4;
  for (let r = 0; r < rows; r++) {
    const o = r * rowBytes;
    for (let i = 0; i < samplesPerRow; i++) {
      const s = o + i * 4;
      out[o + i] = src[s + 3]!;
      out[o + samplesPerRow + i] = src[s + 2]!;
      out[o + 2 * samplesPerRow + i] = src[s + 1]!;
      out[o + 3 * samplesPerRow + i] = src[s]!;
    }
    for (let i = o + rowBytes - 1; i >= o + stride; i--) out[i] = (out[i]! - out[i - stride]!) & 0xff;
  }
  return out;
}
