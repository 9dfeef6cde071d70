/**
 * A synthetic output folder with many survey lines, for the line browser's benchmark: the small
 * fixture (writeFixture) with its lines replaced by `lines` parallel lines 0.5 m apart, each
 * `traces` x `samples` (noise and a few diffractions). The lines' samples come from `distinctFiles`
 * files shared in turn (the cost of opening a line does not depend on which file holds it; 2,000
 * distinct files would be 1.6 GB); positions, radargrams/index.json and lines.geojson are each line's own.
 */
import { writeFile } from 'node:fs/promises';
import { join } from 'node:path';
import proj4 from 'proj4';
import { mulberry32 } from '@lamina/random';
import { FIXTURE, FIXTURE_PROJ4, writeFixture } from './fixture';

export interface LineSiteOptions {
  /** @default 2000 */
  lines?: number;
  /** @default 400 (20 m at 0.05 m) */
  traces?: number;
  /** @default 512 */
  samples?: number;
  /** @default 16 */
  distinctFiles?: number;
  /** @default 1 */
  seed?: number;
}

export async function writeLineSite(dir: string, options: LineSiteOptions = {}): Promise<void> {
  const nLines = options.lines ?? 2000;
  const nT = options.traces ?? 400;
  const nS = options.samples ?? 512;
  const files = options.distinctFiles ?? 16;
  const rnd = mulberry32(options.seed ?? 1);
  await writeFixture(dir, { seed: options.seed ?? 1 });
  const toWgs = proj4(FIXTURE_PROJ4, 'EPSG:4326');
  const dtNs = 0.1;
  const timeZeroNs = 6;
  const v = FIXTURE.velocity;
  for (let f = 0; f < files; f++) {
    const data = new Float32Array(nT * nS);
    for (let i = 0; i < data.length; i++) data[i] = 0.01 * (rnd() - 0.5);
    for (let k = 0; k < 4; k++) {
      const apex = rnd() * nT * 0.05;
      const t0 = 8 + rnd() * 30;
      const d = (v * t0) / 2;
      for (let tr = 0; tr < nT; tr++) {
        const tt = (2 * Math.hypot(d, tr * 0.05 - apex)) / v + timeZeroNs;
        const s0 = Math.max(0, Math.floor((tt - 2) / dtNs));
        const s1 = Math.min(nS - 1, Math.ceil((tt + 2) / dtNs));
        for (let s = s0; s <= s1; s++) {
          const u = (s * dtNs - tt) / 0.6;
          data[tr * nS + s] = data[tr * nS + s]! + (1 - 2 * u * u) * Math.exp(-u * u);
        }
      }
    }
    await writeFile(join(dir, 'radargrams', `shared-${f}.f32`), new Uint8Array(data.buffer));
  }
  const entries: string[] = [];
  const features: string[] = [];
  const r8 = (x: number) => Math.round(x * 1e8) / 1e8;
  for (let li = 0; li < nLines; li++) {
    const id = `M${String(li + 1).padStart(4, '0')}`;
    const y = FIXTURE.originY - 1 - 0.5 * li;
    const xs = Array.from({ length: nT }, (_, t) => FIXTURE.originX + 1 + t * 0.05);
    const ll = xs.map((x) => toWgs.forward([x, y]) as [number, number]);
    const lon = ll.map((p) => r8(p[0]));
    const lat = ll.map((p) => r8(p[1]));
    entries.push(JSON.stringify({ id, file: `radargrams/shared-${li % files}.f32`, nTraces: nT, nSamples: nS, dtNs, timeZeroNs, traceStep: 1, x: xs, y: xs.map(() => y), lon, lat }));
    features.push(JSON.stringify({ type: 'Feature', id, properties: { id, file: `lines/${id}.sgy`, traces: nT, lengthM: (nT - 1) * 0.05 }, geometry: { type: 'LineString', coordinates: [ll[0], ll[nT - 1]] } }));
  }
  await writeFile(join(dir, 'radargrams', 'index.json'), `{"lines":[${entries.join(',\n')}]}`);
  await writeFile(join(dir, 'lines.geojson'), `{"type":"FeatureCollection","features":[${features.join(',\n')}]}`);
}
