import { describe, expect, it } from 'vitest';
import { readSlicesInfo, rightHandRule, sliceThumbnails } from '../src';
import { makeFolder, py } from './fixture';

describe('slice thumbnails', () => {
  it('decoded by Python zlib: the ramp band grows west to east, the nodata block is transparent', async () => {
    const fx = await makeFolder({ crs: 'EPSG:32617', origin: [431250, 4429800], review: false });
    const info = (await readSlicesInfo(fx.dir))!;
    const thumbs = await sliceThumbnails(fx.dir, info, { maxSize: 20 });
    expect(thumbs).toHaveLength(2);
    // 40 x 30 cells boxed by 2 -> 20 x 15 pixels.
    expect([thumbs[0]!.width, thumbs[0]!.height]).toEqual([20, 15]);
    const decode = (uri: string) =>
      JSON.parse(
        py(
          `
import sys, zlib, struct, base64, json
b = base64.b64decode(sys.argv[1].split(',', 1)[1]); o = 8; idat = b''
while o < len(b):
    n, = struct.unpack('>I', b[o:o+4]); t = b[o+4:o+8]
    if t == b'IHDR': w, h = struct.unpack('>II', b[o+8:o+16])
    if t == b'IDAT': idat += b[o+8:o+8+n]
    o += 12 + n
raw = zlib.decompress(idat); s = w * 2
print(json.dumps([[list(raw[y*(s+1)+1+2*x:y*(s+1)+3+2*x]) for x in range(w)] for y in range(h)]))
`,
          [uri],
        ),
      ) as number[][][];
    const ramp = decode(thumbs[0]!.dataUri);
    // Cell values 0..39, p2 = 0 and p98 = 39: pixel x averages cells 2x and 2x+1 -> grey 255 (2x + 0.5) / 39.
    for (let x = 0; x < 20; x++) expect(ramp[7]![x]).toEqual([Math.round((255 * (2 * x + 0.5)) / 39), 255]);
    const flat = decode(thumbs[1]!.dataUri);
    expect(flat[0]![0]![1]).toBe(0); // north-west nodata block (rows 0-9, columns 0-9) is transparent
    expect(flat[4]![4]![1]).toBe(0);
    expect(flat[5]![5]![1]).toBe(255);
    expect(flat[14]![19]![1]).toBe(255);
  });
});

describe('RFC 7946 right-hand rule', () => {
  it('exterior rings counterclockwise, holes clockwise (shoelace signed area)', () => {
    const cw = [[0, 0], [0, 1], [1, 1], [1, 0], [0, 0]];
    const holeCcw = [[0.2, 0.2], [0.8, 0.2], [0.8, 0.8], [0.2, 0.2]];
    const g = rightHandRule({ type: 'Polygon', coordinates: [cw, holeCcw] });
    const area = (r: number[][]) => r.slice(0, -1).reduce((s, p, i) => s + p[0]! * r[i + 1]![1]! - r[i + 1]![0]! * p[1]!, 0) / 2;
    if (g.type !== 'Polygon') throw new Error('expected a polygon');
    expect(area(g.coordinates[0]!)).toBeCloseTo(1, 12);
    expect(area(g.coordinates[1]!)).toBeCloseTo(-0.18, 12);
  });
});
