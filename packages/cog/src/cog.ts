/**
 * Cloud-optimised GeoTIFF layout: the levels, their IFDs (all before the data) and the tile records.
 * TIFF fields are in tiff-tags.ts, the GeoTIFF keys and GDAL metadata in georef.ts, the tile bytes in
 * tile-encode.ts.
 */
import { ASCII, DOUBLE, LONG, SHORT, padEven, setTag, tagBytes, tagCount, outOfLineSize, type Tag } from './tiff-tags';
import { formatNodata, gdalMetadata, geoKeys } from './georef';
import { downsampleStrip, inOrder, tileJobs } from './tile-encode';
import type { CogOptions, CogSettings, LevelSize } from './options';

/**
 * Encode Float32 bands (row-major, `width * height` each) as a cloud-optimised GeoTIFF: little-endian
 * classic TIFF, pixel-interleaved tiles, DEFLATE, internal overviews, all IFDs before the data, tiles of the
 * smallest overview first, and GDAL's structural metadata (block leader and trailer) so GDAL's COG
 * validator can check the layout in full. `encodeCogFile` writes the same bytes from rows on disk.
 */
export async function encodeCog(bands: Float32Array[], width: number, height: number, options: CogOptions): Promise<Uint8Array> {
  checkBandCount(bands.length, 'encodeCog');
  for (const [i, b] of bands.entries()) {
    if (b.length !== width * height) throw new Error(`encodeCog: band ${i} has ${b.length} values, expected ${width * height}`);
  }
  const s = cogSettings(options, 'encodeCog');
  const sizes = levelSizes(width, height, s.tileSize, options);
  const levels: Float32Array[][] = [bands];
  for (let li = 1; li < sizes.length; li++) {
    const up = sizes[li - 1]!;
    levels.push(levels[li - 1]!.map((b) => downsampleStrip(b, up.width, up.height, s.nodata)));
  }

  // Compress every tile of every level (zlib runs on the libuv pool, so tiles go in parallel).
  const tiles: Uint8Array[][] = [];
  for (const [li, lv] of levels.entries()) {
    const { width: w, height: h } = sizes[li]!;
    const jobs: (() => Promise<Uint8Array>)[] = [];
    for (let r0 = 0; r0 < h; r0 += s.tileSize) {
      const r1 = Math.min(h, r0 + s.tileSize);
      jobs.push(...tileJobs(lv.map((b) => b.subarray(r0 * w, r1 * w)), w, r1 - r0, s));
    }
    const done: Uint8Array[] = [];
    await inOrder(jobs, (t) => done.push(t));
    tiles.push(done);
  }

  const { header, total } = cogHeader(sizes, tiles.map((ts) => ts.map((t) => t.length)), bands.length, s, options, 'encodeCog');
  const out = new Uint8Array(total);
  out.set(header);
  let pos = header.length;
  for (let li = levels.length - 1; li >= 0; li--) for (const t of tiles[li]!) pos = putRecord(out, pos, t);
  return out;
}

export function checkBandCount(nBands: number, fn: string): void {
  if (nBands === 0) throw new Error(`${fn}: expected at least one band, found none`);
  if (nBands > 65535) throw new Error(`${fn}: expected at most 65535 bands, found ${nBands}`);
}

export function cogSettings(o: CogOptions, fn: string): CogSettings {
  const tileSize = o.tileSize ?? 256;
  if (tileSize % 16 !== 0 || tileSize <= 0) throw new Error(`${fn}: tileSize must be a positive multiple of 16, found ${tileSize}`);
  return { tileSize, predictor: o.predictor ?? 3, level: o.level ?? 6, nodata: o.nodata ?? Number.NaN };
}

/** Full resolution, then halved (rounding up) until the image fits one tile, as GDAL's COG driver does. */
export function levelSizes(width: number, height: number, tileSize: number, o: CogOptions): LevelSize[] {
  const sizes: LevelSize[] = [{ width, height }];
  if (!(o.overviews ?? true)) return sizes;
  let last = sizes[0]!;
  while (last.width > tileSize || last.height > tileSize) {
    last = { width: Math.ceil(last.width / 2), height: Math.ceil(last.height / 2) };
    sizes.push(last);
  }
  return sizes;
}

/**
 * Header, GDAL's structural metadata, every IFD and the out-of-line tag data: all the file before the
 * first tile. Tiles follow as records (`putRecord`), smallest overview first, each level's in row-major
 * order; `tileBytes[level][tile]` are their compressed sizes. `total` is the size of the whole file.
 */
export function cogHeader(sizes: LevelSize[], tileBytes: number[][], nBands: number, s: CogSettings, o: CogOptions, fn: string): { header: Uint8Array; total: number } {
  const ghost = structuralMetadata();
  const ifdTags = sizes.map((lv, i) => levelTags(lv, i, nBands, s, o));

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
  const dataStart = extraStart + extraSize;
  let dataPos = dataStart;
  // Tile offsets: each tile has a 4-byte leader (its size) and a 4-byte trailer (its last 4 bytes again).
  const tileOffsets: number[][] = sizes.map(() => []);
  for (let li = sizes.length - 1; li >= 0; li--) {
    for (const n of tileBytes[li]!) {
      dataPos += 4;
      tileOffsets[li]!.push(dataPos);
      dataPos += n + 4;
    }
  }
  const total = dataPos;
  if (total > 0xffffffff) throw new Error(`${fn}: ${total} bytes exceed the 4 GiB of a classic TIFF`);
  for (const [li, tags] of ifdTags.entries()) {
    setTag(tags, 324, tileOffsets[li]!);
    setTag(tags, 325, tileBytes[li]!);
  }

  const out = new Uint8Array(dataStart);
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
  return { header: out, total };
}

/** Writes one tile's record at `at` (leader: its size; the tile; trailer: its last 4 bytes again); returns the end. */
export function putRecord(out: Uint8Array, at: number, tile: Uint8Array): number {
  new DataView(out.buffer, out.byteOffset, out.byteLength).setUint32(at, tile.length, true);
  out.set(tile, at + 4);
  out.set(tile.subarray(tile.length - 4), at + 4 + tile.length);
  return at + tile.length + 8;
}

function structuralMetadata(): Uint8Array {
  const body =
    'LAYOUT=IFDS_BEFORE_DATA\nBLOCK_ORDER=ROW_MAJOR\nBLOCK_LEADER=SIZE_AS_UINT4\n' +
    'BLOCK_TRAILER=LAST_4_BYTES_REPEATED\nKNOWN_INCOMPATIBLE_EDITION=NO\n ';
  const head = `GDAL_STRUCTURAL_METADATA_SIZE=${String(body.length).padStart(6, '0')} bytes\n`;
  return new TextEncoder().encode(head + body);
}

function levelTags(lv: LevelSize, index: number, nBands: number, s: CogSettings, o: CogOptions): Tag[] {
  const { tileSize, predictor, nodata } = s;
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
