// Viewer: time from page load to the first slice drawn, and time to switch slices, in headless Chromium
// (software WebGL), on the sample site and on a large synthetic site (2000 x 2000 cells x 40 slices).
// Side by side: geotiff.js in Node decoding the same data the viewer decodes for its first slice (no
// drawing), so the ratio shows what the browser adds (page and map start-up, range requests, colour
// mapping, texture upload, render).
// Prints figures; asserts nothing. Usage: pnpm bench viewer
// Data: test-artifacts/viewer-e2e/yard-out (the e2e test's processed sample site) or LAMINA_BENCH_OUT;
// the large site is generated once (seeded) into $TMPDIR/lamina-viewer-bench-large (LAMINA_BENCH_SIZE, LAMINA_BENCH_BANDS).
import { existsSync } from 'node:fs';
import { readFileSync } from 'node:fs';
import { readFile } from 'node:fs/promises';
import { availableParallelism, tmpdir } from 'node:os';
import { dirname, join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { ensureViewerBuilt, startViewerServer } from '../apps/viewer/src/index';
import { writeFixture } from '../apps/viewer/test/fixture';
import { launch, openViewer } from '../packages/test-utils/src/index';
import { nodeFirstSliceMs } from '../apps/viewer/test/decode-ref';

const here = dirname(fileURLToPath(import.meta.url));
const SIZE = Number(process.env.LAMINA_BENCH_SIZE ?? 2000);
const BANDS = Number(process.env.LAMINA_BENCH_BANDS ?? 40);
const LOADS = 3;
const SWITCHES = 8;

const stats = (xs: number[]) => {
  const mean = xs.reduce((a, b) => a + b, 0) / xs.length;
  const std = Math.sqrt(xs.reduce((a, b) => a + (b - mean) ** 2, 0) / xs.length);
  return { min: Math.min(...xs), mean, std };
};
const load = () => {
  try {
    return readFileSync('/proc/loadavg', 'utf8').split(' ').slice(0, 3).join(' ');
  } catch {
    return 'n/a';
  }
};
const fmt = (s: { min: number; mean: number; std: number }) => `min ${s.min.toFixed(0)} ms, mean ${s.mean.toFixed(0)} +- ${s.std.toFixed(0)} ms`;

async function measure(name: string, dir: string): Promise<void> {
  const sj = JSON.parse(await readFile(join(dir, 'slices.json'), 'utf8')) as { width: number; height: number; slices: unknown[] };
  const cells = sj.width * sj.height;
  const srv = await startViewerServer(dir);
  const b = await launch();
  try {
    await openViewer(b.page, srv.url, 300_000); // warm-up load (browser caches off: fresh profile, no-store)
    const loads: number[] = [];
    for (let i = 0; i < LOADS; i++) {
      const t = Date.now();
      await openViewer(b.page, `${srv.url}?run=${i}`, 300_000);
      loads.push(Date.now() - t);
    }
    const inPage = await b.page.evaluate(() => window.__lamina.state.timings.firstSliceMs ?? NaN);
    const n = sj.slices.length;
    await b.page.evaluate(() => window.__lamina.setSlice(1)); // warm-up switch
    const switches: number[] = [];
    for (let i = 0; i < Math.min(SWITCHES, n - 2); i++) {
      const k = 2 + i;
      switches.push(await b.page.evaluate(async (kk) => {
        const t = performance.now();
        await window.__lamina.setSlice(kk);
        return performance.now() - t;
      }, k));
    }
    const back: number[] = [];
    for (let i = 0; i < Math.min(4, switches.length); i++) {
      back.push(await b.page.evaluate(async (kk) => {
        const t = performance.now();
        await window.__lamina.setSlice(kk);
        return performance.now() - t;
      }, 2 + i));
    }
    const parts = await b.page.evaluate(() => window.__lamina.state.timings);
    const ref = await nodeFirstSliceMs(dir);
    const sw = stats(switches);
    console.log(`${name}: ${sj.width} x ${sj.height} cells x ${n} slices (load average ${load()} on ${availableParallelism()} cores)`);
    console.log(`  load to first slice drawn: ${fmt(stats(loads))} (in page, from navigation: ${inPage.toFixed(0)} ms)`);
    console.log(`  switch slice (new band):   ${fmt(sw)}; ${((cells / sw.mean) * 1e3 / 1e6).toFixed(2)} M cells/s`);
    console.log(`  switch slice (cached band): ${fmt(stats(back))}; last switch: band ${parts.bandMs?.toFixed(0)} ms, colour map ${parts.imageMs?.toFixed(0)} ms, render ${parts.renderMs?.toFixed(0)} ms`);
    console.log(`  reference, geotiff.js in Node decoding the first slice's data (${ref.what}): ${ref.ms.toFixed(0)} ms; browser load to first slice / Node decode = ${(stats(loads).mean / ref.ms).toFixed(1)}x`);
  } finally {
    await b.close();
    await srv.close();
  }
}

await ensureViewerBuilt({ log: console.log });
const sample = process.env.LAMINA_BENCH_OUT ?? join(here, '..', 'test-artifacts', 'viewer-e2e', 'yard-out');
if (existsSync(join(sample, 'slices.json'))) await measure('sample site (yard)', sample);
else console.log(`sample site: no processed output at ${sample} (run the viewer e2e test or set LAMINA_BENCH_OUT)`);

const large = join(tmpdir(), `lamina-viewer-bench-large-${SIZE}x${BANDS}`);
if (!existsSync(join(large, 'slices.json'))) {
  const t = Date.now();
  await writeFixture(large, { seed: 11, width: SIZE, height: SIZE, slices: BANDS });
  console.log(`generated the large site in ${((Date.now() - t) / 1000).toFixed(0)} s: ${large}`);
}
await measure('large synthetic site', large);
