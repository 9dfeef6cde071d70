/**
 * End to end: the viewer in headless Chromium (software WebGL) against its own server, on a synthetic
 * output folder and, when the sample site has been simulated, on the real output of `lamina process`.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { execFileSync } from 'node:child_process';
import { existsSync } from 'node:fs';
import { mkdir, mkdtemp, readFile, stat } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { dirname, join, resolve } from 'node:path';
import { fileURLToPath } from 'node:url';
import { parseReview } from '@lamina/targets';
import { ensureViewerBuilt, startViewerServer, type ViewerServer } from '../apps/viewer/src/index';
import { colourTable } from '../apps/viewer/src/client/colormaps';
import { FIXTURE, cellXY, writeFixture } from '@lamina/viewer/test-fixture';
import { PYTHON, launch, openViewer, type Browser } from '@lamina/test-utils';

const ROOT = resolve(dirname(fileURLToPath(import.meta.url)), '..');
const ARTIFACTS = join(ROOT, 'test-artifacts', 'viewer-e2e');
const BACKGROUND: [number, number, number] = [0xee, 0xf0, 0xea]; // the offline style's plain background
const OVERLAYS = ['lines', 'anomalies', 'forecast', 'targets', 'candidates', 'buildings', 'walls', 'fences', 'points', 'other'];

/** lon/lat of site-CRS points by PROJ's cs2cs (EPSG:4326 prints lat lon). */
function toLonLat(crs: string, pts: [number, number][]): [number, number][] {
  const out = execFileSync('cs2cs', ['-f', '%.10f', crs, 'EPSG:4326'], { input: pts.map((p) => p.join(' ')).join('\n') + '\n' }).toString().trim().split('\n');
  return out.map((l) => {
    const [lat, lon] = l.split(/\s+/).map(Number);
    return [lon!, lat!];
  });
}

function colourOf(value: number, lo: number, hi: number, map = 'ember'): [number, number, number] {
  const lut = colourTable(map);
  const i = Math.max(0, Math.min(255, Math.round(((value - lo) / (hi - lo)) * 255)));
  return [lut[i * 3]!, lut[i * 3 + 1]!, lut[i * 3 + 2]!];
}
function near(px: number[] | null, want: number[], tol: number): boolean {
  return !!px && want.every((w, i) => Math.abs(px[i]! - w) <= tol);
}

async function hideOverlays(b: Browser, hide = true): Promise<void> {
  for (const id of OVERLAYS) {
    const box = b.page.locator(`#toggle-${id}`);
    if ((await box.isChecked()) === hide) await box.click();
  }
  await b.page.evaluate(() => window.__lamina.whenIdle());
}
async function setOpacity(b: Browser, percent: number): Promise<void> {
  await b.page.locator('#opacity').fill(String(percent));
  await b.page.waitForFunction((p) => Math.abs(window.__lamina.state.opacity - p / 100) < 1e-9 && window.__lamina.state.drawnSlice >= 0, percent, { polling: 50 });
}
const sample = (b: Browser, ll: [number, number]) => b.page.evaluate(([lon, lat]) => window.__lamina.samplePixel(lon!, lat!), ll);
const shot = (b: Browser, name: string) => b.page.screenshot({ path: join(ARTIFACTS, `${name}.png`) });

describe('viewer on a synthetic output folder', () => {
  let out: string;
  let srv: ViewerServer;
  let b: Browser;

  beforeAll(async () => {
    await mkdir(ARTIFACTS, { recursive: true });
    out = await mkdtemp(join(tmpdir(), 'lamina-viewer-e2e-'));
    await writeFixture(out);
    await ensureViewerBuilt();
    srv = await startViewerServer(out);
    b = await launch();
    await openViewer(b.page, srv.url);
  });
  afterAll(async () => {
    await b?.close();
    await srv?.close();
  });

  it('is ready with no page errors, and every request stays on 127.0.0.1', async () => {
    const state = await b.page.evaluate(() => window.__lamina.state);
    expect(state.errors).toEqual([]);
    expect(b.errors.filter((e) => !/favicon|404/.test(e))).toEqual([]);
    expect(state.drawnSlice).toBe(0);
    expect(b.requests.length).toBeGreaterThan(10);
    for (const u of b.requests) expect(new URL(u).hostname, u).toBe('127.0.0.1');
    // what the depths rest on, from the fixture's velocity.json, beside the cautions
    expect(await b.page.textContent('#velocity-line')).toMatch(/^Depths: K \d+\.\d\d/);
    await shot(b, 'fixture-slice-0');
  });

  it('draws the slice raster in the colour map where the grid is, placed by its georeferencing', async () => {
    await hideOverlays(b);
    const s = JSON.parse(await readFile(join(out, 'slices.json'), 'utf8')) as { slices: { stats: { p2: number; p98: number } }[] };
    const { p2, p98 } = s.slices[0]!.stats;
    const hb = FIXTURE.hot(0);
    const [hot, cold, nodata, outside] = toLonLat(FIXTURE.crs, [
      cellXY((hb.col0 + hb.col1) / 2, (hb.row0 + hb.row1) / 2),
      cellXY(80, 80),
      cellXY(1, 50),
      [FIXTURE.originX + FIXTURE.width * FIXTURE.cellSize + 2, FIXTURE.originY - 20],
    ]);
    // fully opaque, a cell shows exactly its colour-map colour: the hot block (value 1 >= p98) the top colour
    await setOpacity(b, 100);
    const pxHot = await sample(b, hot!);
    expect(near(pxHot, colourOf(1, p2, p98), 3), `hot ${pxHot}`).toBe(true);
    // a background cell (0.05 .. 0.15) is one of the colour map's dark entries
    const pxCold = await sample(b, cold!);
    const lo = colourOf(0.05, p2, p98);
    const hi = colourOf(0.15, p2, p98);
    for (let i = 0; i < 3; i++) {
      expect(pxCold![i]).toBeGreaterThanOrEqual(Math.min(lo[i]!, hi[i]!) - 3);
      expect(pxCold![i]).toBeLessThanOrEqual(Math.max(lo[i]!, hi[i]!) + 3);
    }
    // at 50 % the cell lies between its colour and the background
    await setOpacity(b, 50);
    const pxHalf = await sample(b, cold!);
    for (let i = 0; i < 3; i++) expect(pxHalf![i]).toBeGreaterThan(pxCold![i]! + 5);
    for (let i = 0; i < 3; i++) expect(pxHalf![i]).toBeLessThan(BACKGROUND[i]!);
    await setOpacity(b, 100);
    // nodata cells and ground off the grid show the plain background
    expect(near(await sample(b, nodata!), BACKGROUND, 3)).toBe(true);
    expect(near(await sample(b, outside!), BACKGROUND, 3)).toBe(true);
    await shot(b, 'fixture-slice-0-bare');
  });

  it('steps the depth with the keyboard and switches units', async () => {
    await b.page.locator('#map').click({ position: { x: 5, y: 5 } });
    await b.page.keyboard.press(']');
    await b.page.keyboard.press('PageDown');
    await b.page.waitForFunction(() => window.__lamina.state.sliceIndex === 2 && window.__lamina.state.drawnSlice === 2, null, { polling: 50 });
    await expect.poll(() => b.page.locator('#depth-label').textContent()).toContain('0.40 m to 0.60 m');
    const s = JSON.parse(await readFile(join(out, 'slices.json'), 'utf8')) as { slices: { stats: { p2: number; p98: number } }[] };
    const { p2, p98 } = s.slices[2]!.stats;
    const h0 = FIXTURE.hot(0);
    const h2 = FIXTURE.hot(2);
    const [old, now] = toLonLat(FIXTURE.crs, [cellXY(h0.col0 + 2, (h0.row0 + h0.row1) / 2), cellXY(h2.col1 - 2, (h2.row0 + h2.row1) / 2)]);
    expect(near(await sample(b, now!), colourOf(1, p2, p98), 3)).toBe(true);
    expect(near(await sample(b, old!), colourOf(1, p2, p98), 40)).toBe(false);
    await b.page.keyboard.press('[');
    await b.page.waitForFunction(() => window.__lamina.state.drawnSlice === 1, null, { polling: 50 });
    await b.page.selectOption('#unit', 'ft');
    // 0.2 m and 0.4 m in international feet (1 ft = 0.3048 m exactly, by definition)
    await expect.poll(() => b.page.locator('#depth-label').textContent()).toContain(`${(0.2 / 0.3048).toFixed(2)} ft to ${(0.4 / 0.3048).toFixed(2)} ft`);
    await b.page.selectOption('#unit', 'm');
    await shot(b, 'fixture-slice-1');
  });

  it('shows only the forecast air-wave loci of the current slice', async () => {
    await hideOverlays(b, false);
    const slices = await b.page.evaluate(() => {
      const m = window.__lamina.map!;
      return { current: window.__lamina.state.sliceIndex, shown: m.queryRenderedFeatures({ layers: ['forecast-line'] }).map((f) => Number(f.properties.slice)) };
    });
    expect(slices.shown.length).toBeGreaterThan(0);
    expect(new Set(slices.shown)).toEqual(new Set([slices.current]));
  });

  it('opens an anomaly panel with its evidence and the radargram with the fitted hyperbola', async () => {
    const hb = FIXTURE.hot(0);
    const [centre] = toLonLat(FIXTURE.crs, [cellXY((hb.col0 + hb.col1) / 2, hb.row0 + 3)]);
    const p = await b.page.evaluate(([lon, lat]) => window.__lamina.project(lon!, lat!), centre!);
    const box = (await b.page.locator('#map').boundingBox())!;
    await b.page.mouse.click(box.x + p!.x, box.y + p!.y);
    await b.page.waitForFunction(() => (document.getElementById('radargram-note')?.textContent ?? '') !== '', null, { polling: 50 });
    await expect(b.page.locator('#panel h2').textContent()).resolves.toBe('Anomaly a1');
    expect(await b.page.locator('#radargram-note').textContent()).toMatch(/^Line L2, nearest trace/);
    expect(await b.page.locator('table.evidence tr.passed, table.evidence tr.failed').count()).toBe(4); // 2 items + 2 detail rows
    const canvas = b.page.locator('#radargram');
    expect(await canvas.getAttribute('data-line')).toBe('L2');
    expect(await canvas.getAttribute('data-hyperbolas')).toBe('1');
    // the apex marker (#ffcc00) and the hyperbola (#00a0d0) are drawn on the canvas
    const counts = await b.page.evaluate(() => {
      const c = document.getElementById('radargram') as HTMLCanvasElement;
      const d = c.getContext('2d')!.getImageData(0, 0, c.width, c.height).data;
      let apex = 0;
      let curve = 0;
      for (let i = 0; i < d.length; i += 4) {
        if (d[i] === 0xff && d[i + 1] === 0xcc && d[i + 2] === 0) apex++;
        if (d[i] === 0x00 && d[i + 1] === 0xa0 && d[i + 2] === 0xd0) curve++;
      }
      return { apex, curve };
    });
    expect(counts.apex).toBeGreaterThan(20);
    expect(counts.curve).toBeGreaterThan(50);
    await shot(b, 'fixture-anomaly-panel');
  });

  it('saves review decisions into review.json and shows the cautions on export', async () => {
    await b.page.selectOption('#review-utility', 'water');
    await b.page.click('#review-accept');
    await expect.poll(() => b.page.locator('#review-msg').textContent()).toBe('saved to review.json');
    let review = parseReview(JSON.parse(await readFile(join(out, 'review.json'), 'utf8')), 'review.json');
    expect(review.decisions.find((d) => d.anomalyId === 'a1')).toMatchObject({ decision: 'accept', utilityType: 'water' });
    await b.page.click('#review-reject');
    await expect.poll(() => b.page.locator('#decision-status').textContent()).toContain('reject');
    review = parseReview(JSON.parse(await readFile(join(out, 'review.json'), 'utf8')), 'review.json');
    expect(review.decisions.find((d) => d.anomalyId === 'a1')?.decision).toBe('reject');
    await b.page.click('#export-btn');
    await b.page.waitForFunction(() => /Exported|error|HTTP/i.test(document.getElementById('export-result')?.textContent ?? ''), null, { polling: 50 });
    const text = (await b.page.locator('#export-result').textContent()) ?? '';
    expect(text).toMatch(/one-call/);
    expect(text).toMatch(/pothol/);
    await shot(b, 'fixture-export');
  });

  it('stacks the slices below ground in 3D under the extruded buildings', async () => {
    await b.page.click('#mode-3d');
    await b.page.waitForFunction(() => window.__lamina.state.mode === '3d' && window.__lamina.state.drawnSlice >= 0, null, { polling: 50 });
    const pitch = await b.page.evaluate(() => window.__lamina.map!.getPitch());
    expect(pitch).toBeGreaterThan(30);
    // a good part of the view is raster, not plain background
    const share = await b.page.evaluate(() => {
      const c = window.__lamina.map!.getCanvas();
      const t = document.createElement('canvas');
      t.width = c.width;
      t.height = c.height;
      const ctx = t.getContext('2d')!;
      ctx.drawImage(c, 0, 0);
      const d = ctx.getImageData(0, 0, c.width, c.height).data;
      let n = 0;
      let off = 0;
      for (let y = 0; y < c.height; y += 16)
        for (let x = 0; x < c.width; x += 16) {
          const i = (y * c.width + x) * 4;
          n++;
          if (Math.abs(d[i]! - 0xee) + Math.abs(d[i + 1]! - 0xf0) + Math.abs(d[i + 2]! - 0xea) > 30) off++;
        }
      return off / n;
    });
    expect(share).toBeGreaterThan(0.2);
    await shot(b, 'fixture-3d');
    await b.page.click('#mode-3d');
    await b.page.waitForFunction(() => window.__lamina.state.mode === '2d' && window.__lamina.state.drawnSlice >= 0, null, { polling: 50 });
  });
});

// The sample site: simulated by `lamina simulate sample-sites/yard/scenario.json` (site/ is not committed).
const YARD = join(ROOT, 'sample-sites', 'yard', 'site');
describe.runIf(existsSync(join(YARD, 'site.json')))('viewer on the processed sample site (yard)', () => {
  let out: string;
  let srv: ViewerServer;
  let b: Browser;

  beforeAll(async () => {
    // Reuse a processed copy unless the site is newer (processing takes most of a minute on 2 cores).
    out = join(ARTIFACTS, 'yard-out');
    const fresh = existsSync(join(out, 'run.json')) && (await stat(join(out, 'run.json'))).mtimeMs > (await stat(join(YARD, 'site.json'))).mtimeMs;
    if (!fresh) {
      const { runProcess } = await import('@lamina/pipeline');
      await runProcess(YARD, out);
    }
    await ensureViewerBuilt();
    srv = await startViewerServer(out);
    b = await launch();
    await openViewer(b.page, srv.url);
  }, 240_000);
  afterAll(async () => {
    await b?.close();
    await srv?.close();
  });

  it('draws slice cells in the colour of their value as GDAL reads it', async () => {
    const state = await b.page.evaluate(() => window.__lamina.state);
    expect(state.errors).toEqual([]);
    for (const u of b.requests) expect(new URL(u).hostname, u).toBe('127.0.0.1');
    await hideOverlays(b);
    await setOpacity(b, 100);
    const sj = JSON.parse(await readFile(join(out, 'slices.json'), 'utf8')) as { crs: string; originX: number; originY: number; cellSize: number; width: number; height: number; nodata: number; slices: { band: number; stats: { p2: number; p98: number } }[] };
    const run = JSON.parse(await readFile(join(out, 'run.json'), 'utf8')) as { site: { crs: { proj4: string } } };
    // cells on a coarse lattice inside the grid, values read by GDAL (Debian python3-gdal)
    const cells: [number, number][] = [];
    for (let r = 0.2; r < 0.85; r += 0.15) for (let c = 0.2; c < 0.85; c += 0.15) cells.push([Math.floor(c * sj.width), Math.floor(r * sj.height)]);
    const values = JSON.parse(
      execFileSync(PYTHON, ['-c', `import sys,json; from osgeo import gdal; d=gdal.Open(sys.argv[1]); a=d.GetRasterBand(${sj.slices[0]!.band}).ReadAsArray(); print(json.dumps([float(a[r][c]) for c,r in json.loads(sys.argv[2])]))`, join(out, 'slices.tif'), JSON.stringify(cells)], { env: { ...process.env, GDAL_PAM_ENABLED: 'NO' } }).toString(),
    ) as number[];
    const xy = cells.map(([c, r]) => [sj.originX + (c + 0.5) * sj.cellSize, sj.originY - (r + 0.5) * sj.cellSize] as [number, number]);
    const crs = /^EPSG:\d+$/i.test(sj.crs) ? sj.crs : run.site.crs.proj4;
    const ll = toLonLat(crs, xy);
    const { p2, p98 } = sj.slices[0]!.stats;
    let checked = 0;
    let matched = 0;
    for (let i = 0; i < cells.length; i++) {
      if (values[i] === sj.nodata || !Number.isFinite(values[i])) continue;
      checked++;
      const px = await sample(b, ll[i]!);
      if (near(px, colourOf(values[i]!, p2, p98), 3)) matched++;
    }
    expect(checked).toBeGreaterThan(10);
    // cell centres sampled on screen; a neighbour may show at a cell edge after reprojection, so allow a few
    expect(matched / checked).toBeGreaterThan(0.8);
    await shot(b, 'yard-slice-0');
  });

  it('steps through the slices, then opens an anomaly when screening has written some', async () => {
    const n = await b.page.evaluate(() => window.__lamina.state.sliceCount);
    for (let k = 1; k < Math.min(n, 4); k++) {
      await b.page.keyboard.press(']');
      await b.page.waitForFunction((kk) => window.__lamina.state.drawnSlice === kk, k, { polling: 50 });
    }
    await shot(b, 'yard-slice-3');
    const anomalies = existsSync(join(out, 'anomalies.geojson')) ? (JSON.parse(await readFile(join(out, 'anomalies.geojson'), 'utf8')) as { features: { properties: { id: string } }[] }).features : [];
    if (!anomalies.length) return;
    const id = String(anomalies[0]!.properties.id);
    await b.page.evaluate((i) => window.__lamina.selectAnomaly(i), id);
    await b.page.waitForFunction(() => (document.getElementById('radargram-note')?.textContent ?? '') !== '', null, { polling: 50 });
    expect(await b.page.locator('#radargram-note').textContent()).toMatch(/^Line .* nearest trace/);
    await shot(b, 'yard-anomaly');
    await b.page.click('#review-accept');
    await expect.poll(() => b.page.locator('#review-msg').textContent()).toBe('saved to review.json');
    const exportNow = async () => {
      await b.page.evaluate(() => (document.getElementById('export-result')!.textContent = ''));
      await b.page.click('#export-btn');
      await b.page.waitForFunction(() => /Exported|error/i.test(document.getElementById('export-result')?.textContent ?? ''), null, { polling: 50 });
      return JSON.parse(await readFile(join(out, 'targets.geojson'), 'utf8')) as { features: { properties: Record<string, unknown> }[] };
    };
    const ofAnomaly = (fc: { features: { properties: Record<string, unknown> }[] }) => fc.features.filter((f) => f.properties.anomalyId === id || f.properties.id === id);
    expect(ofAnomaly(await exportNow()).length).toBeGreaterThan(0);
    await b.page.click('#review-reject');
    await expect.poll(() => b.page.locator('#decision-status').textContent()).toContain('reject');
    const review = parseReview(JSON.parse(await readFile(join(out, 'review.json'), 'utf8')), 'review.json');
    expect(review.decisions.find((d) => d.anomalyId === id)?.decision).toBe('reject');
    expect(ofAnomaly(await exportNow())).toEqual([]);
    await shot(b, 'yard-export');
  });
});
