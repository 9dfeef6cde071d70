// Viewer: time from page load to the first slice drawn, and time to switch slices, in headless Chromium
// (software WebGL), on the sample site and on a large synthetic site (2000 x 2000 cells x 40 slices).
// Side by side: geotiff.js in Node decoding the same data the viewer decodes for its first slice (no
// drawing), so the ratio shows what the browser adds (page and map start-up, range requests, colour
// mapping, texture upload, render).
// The line browser (issue 13): time to open a line (fetch, clip levels, first draw) and the cost of one
// frame while dragging a hyperbola (the move handler's velocity and on-curve amplitude, and the redraw),
// against the time to fetch and decode that line's data alone in the same page, on the sample site and
// on a synthetic site of 2,000 lines (LAMINA_BENCH_LINES).
// Prints figures; asserts nothing. Usage: pnpm bench viewer (LAMINA_BENCH_VIEWER=slices or =lines for one part)
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
import { writeLineSite } from '../apps/viewer/test/line-site';
import { mulberry32 } from '../packages/random/src/index';

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

const OPENS = 12;
const DRAG_FRAMES = 120;

/** Line browser: open lines (seeded random choice), drag a hyperbola, and the page's own fetch + decode of each line as the reference. */
async function measureLines(name: string, dir: string): Promise<void> {
  const index = JSON.parse(await readFile(join(dir, 'radargrams', 'index.json'), 'utf8')) as { lines: { id: string; file: string; nTraces: number; nSamples: number }[] };
  const srv = await startViewerServer(dir);
  const b = await launch({ width: 1400, height: 900 });
  try {
    const t = Date.now();
    await openViewer(b.page, srv.url, 600_000);
    const pageMs = Date.now() - t;
    const rnd = mulberry32(5);
    const pick = () => index.lines[Math.floor(rnd() * index.lines.length)]!;
    await b.page.evaluate((id) => window.__lamina.openLine(id), pick().id); // warm-up
    const open: number[] = [];
    const ref: number[] = [];
    const openFetch: number[] = [];
    const openDraw: number[] = [];
    let bytes = 0;
    for (let i = 0; i < OPENS; i++) {
      const l = pick();
      const other = pick();
      // reference: the same page fetching and decoding a line's samples alone (no drawing), a line not yet opened
      ref.push(await b.page.evaluate(async (file) => {
        const t0 = performance.now();
        const buf = await (await fetch(`data/${file}`, { cache: 'no-store' })).arrayBuffer();
        const a = new Float32Array(buf);
        if (!(a.length > 0)) throw new Error('empty line');
        return performance.now() - t0;
      }, other.file));
      const o = await b.page.evaluate(async (id) => {
        const t0 = performance.now();
        await window.__lamina.openLine(id);
        return { ms: performance.now() - t0, fetch: window.__lamina.line!.timings.fetchMs!, draw: window.__lamina.line!.timings.drawMs! };
      }, l.id);
      open.push(o.ms);
      openFetch.push(o.fetch);
      openDraw.push(o.draw);
      bytes += l.nTraces * l.nSamples * 4;
    }
    // drag: apex placed at a third of the line, the flank handle swept along a trace
    const frames = await b.page.evaluate(async (n) => {
      const L = window.__lamina;
      const c = document.getElementById('lb-canvas') as HTMLCanvasElement;
      const mode = document.getElementById('lb-match-mode') as HTMLInputElement;
      if (!mode.checked) mode.click();
      const st = L.line!;
      const trA = Math.floor((st.view.tr0 + st.view.tr1) / 3);
      const ap = L.lineToCanvas(trA, 15)!;
      c.dispatchEvent(new MouseEvent('mousedown', { clientX: ap.x, clientY: ap.y, bubbles: true }));
      const handler: number[] = [];
      const draw: number[] = [];
      for (let i = 0; i < n; i++) {
        const p = L.lineToCanvas(trA + 30, 16 + (i % 40) * 0.25)!;
        const t0 = performance.now();
        window.dispatchEvent(new MouseEvent('mousemove', { clientX: p.x, clientY: p.y, bubbles: true }));
        const t1 = performance.now();
        L.drawLine();
        const t2 = performance.now();
        handler.push(t1 - t0);
        draw.push(t2 - t1);
      }
      window.dispatchEvent(new MouseEvent('mouseup', { bubbles: true }));
      return { handler, draw, width: c.width, height: c.height };
    }, DRAG_FRAMES);
    // the review queue: select the next anomaly (panel, slice, its line opened), as the n key does
    const steps = await b.page.evaluate(async (n) => {
      const L = window.__lamina;
      const rows = L.queue?.rows ?? [];
      const out: number[] = [];
      for (let i = 0; i < Math.min(n, rows.length); i++) {
        const t0 = performance.now();
        await L.selectAnomaly(rows[i]!);
        await L.whenDrawn();
        out.push(performance.now() - t0);
      }
      return out;
    }, 12);
    const total = frames.handler.map((h, i) => h + frames.draw[i]!);
    const o = stats(open);
    const r = stats(ref);
    const f = stats(total);
    console.log(`${name} (line browser): ${index.lines.length} lines (load average ${load()} on ${availableParallelism()} cores); page ready in ${pageMs} ms`);
    console.log(`  open a line:               ${fmt(o)} (its fetch ${stats(openFetch).mean.toFixed(0)} ms, first draw ${stats(openDraw).mean.toFixed(0)} ms); ${((bytes / OPENS / 2 ** 20) / (o.mean / 1e3)).toFixed(0)} MiB/s of samples`);
    console.log(`  reference, fetch + decode: ${fmt(r)} (same page, no drawing); open / reference = ${(o.mean / r.mean).toFixed(1)}x`);
    if (steps.length) console.log(`  queue step (select, panel, slice, line): ${fmt(stats(steps))} over ${steps.length} anomalies`);
    console.log(`  drag frame (${frames.width} x ${frames.height} canvas): min ${f.min.toFixed(1)} ms, mean ${f.mean.toFixed(1)} +- ${f.std.toFixed(1)} ms (move handler ${stats(frames.handler).mean.toFixed(1)} ms, redraw ${stats(frames.draw).mean.toFixed(1)} ms); ${(1000 / f.mean).toFixed(0)} frames/s possible; frame / reference = ${(f.mean / r.mean).toFixed(2)}x`);
  } finally {
    await b.close();
    await srv.close();
  }
}

const parts = (process.env.LAMINA_BENCH_VIEWER ?? 'slices,lines').split(',');
await ensureViewerBuilt({ log: console.log });
const sample = process.env.LAMINA_BENCH_OUT ?? join(here, '..', 'test-artifacts', 'viewer-e2e', 'yard-out');
if (existsSync(join(sample, 'slices.json'))) {
  if (parts.includes('slices')) await measure('sample site (yard)', sample);
  if (parts.includes('lines')) await measureLines('sample site (yard)', sample);
} else console.log(`sample site: no processed output at ${sample} (run the viewer e2e test or set LAMINA_BENCH_OUT)`);

if (parts.includes('slices')) {
  const large = join(tmpdir(), `lamina-viewer-bench-large-${SIZE}x${BANDS}`);
  if (!existsSync(join(large, 'slices.json'))) {
    const t = Date.now();
    await writeFixture(large, { seed: 11, width: SIZE, height: SIZE, slices: BANDS });
    console.log(`generated the large site in ${((Date.now() - t) / 1000).toFixed(0)} s: ${large}`);
  }
  await measure('large synthetic site', large);
}
if (parts.includes('lines')) {
  const n = Number(process.env.LAMINA_BENCH_LINES ?? 2000);
  const many = join(tmpdir(), `lamina-viewer-bench-lines-${n}`);
  if (!existsSync(join(many, 'radargrams', 'index.json'))) {
    const t = Date.now();
    await writeLineSite(many, { lines: n, seed: 13 });
    console.log(`generated the ${n}-line site in ${((Date.now() - t) / 1000).toFixed(0)} s: ${many}`);
  }
  await measureLines(`synthetic site of ${n} lines`, many);
}
