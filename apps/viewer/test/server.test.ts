import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { request } from 'node:http';
import { mkdtemp, mkdir, readFile, symlink, writeFile } from 'node:fs/promises';
import { networkInterfaces, tmpdir } from 'node:os';
import { join } from 'node:path';
import { FOLDER_FILES, checkFolder } from '@lamina/contracts';
import { parseReview } from '@lamina/targets';
import { startViewerServer, type ViewerServer } from '../src';
import { writeFixture } from './fixture';

/** Raw HTTP request: the path goes on the wire exactly as given (no URL normalisation). */
function raw(port: number, path: string, init: { method?: string; headers?: Record<string, string>; body?: string } = {}): Promise<{ status: number; headers: Record<string, string | string[] | undefined>; body: Buffer }> {
  return new Promise((ok, fail) => {
    const req = request({ host: '127.0.0.1', port, path, method: init.method ?? 'GET', headers: init.headers }, (res) => {
      const chunks: Buffer[] = [];
      res.on('data', (c: Buffer) => chunks.push(c));
      res.on('end', () => ok({ status: res.statusCode ?? 0, headers: res.headers, body: Buffer.concat(chunks) }));
    });
    req.on('error', fail);
    if (init.body) req.write(init.body);
    req.end();
  });
}
const postJson = (port: number, path: string, body: unknown) => raw(port, path, { method: 'POST', headers: { 'Content-Type': 'application/json' }, body: JSON.stringify(body) });

const SECRET = 'outside-the-output-folder-7f3a';
let root: string;
let out: string;
let dist: string;
let srv: ViewerServer;

beforeAll(async () => {
  root = await mkdtemp(join(tmpdir(), 'lamina-viewer-srv-'));
  out = join(root, 'out');
  dist = join(root, 'dist');
  await mkdir(out);
  await mkdir(join(dist, 'assets'), { recursive: true });
  await writeFile(join(dist, 'index.html'), '<!doctype html><title>t</title>');
  await writeFile(join(dist, 'assets', 'w.mjs'), 'export {};');
  await writeFile(join(root, 'secret.txt'), SECRET);
  await writeFixture(out);
  // many anomalies for the concurrency test
  const fc = JSON.parse(await readFile(join(out, 'anomalies.geojson'), 'utf8')) as { features: unknown[] };
  for (let i = 0; i < 40; i++) {
    fc.features.push({ type: 'Feature', properties: { id: `c${i}`, depthTopM: 0.2, depthBottomM: 0.4, origin: 'subsurface', confidence: 0.5, evidence: [] }, geometry: { type: 'Point', coordinates: [-79.6 + i * 1e-5, 36.0] } });
  }
  await writeFile(join(out, 'anomalies.geojson'), JSON.stringify(fc));
  await symlink(join(root, 'secret.txt'), join(out, 'link-out.txt'));
  await symlink(root, join(out, 'link-dir'));
  await symlink(join(out, 'run.json'), join(out, 'link-in.json'));
  srv = await startViewerServer(out, { distDir: dist });
});
afterAll(async () => {
  await srv?.close();
});

// The fixture stands for the output of `lamina process`: it keeps the contracts of @lamina/contracts.
describe('fixture', () => {
  it('parses with @lamina/contracts', async () => {
    const found = await checkFolder(out);
    expect(found.length).toBeGreaterThan(5);
    expect(FOLDER_FILES.map(([n]) => n)).toEqual(expect.arrayContaining(found));
  });
});

describe('binding', () => {
  it('binds 127.0.0.1 by default and prints a loopback URL', () => {
    const a = srv.server.address();
    expect(typeof a === 'object' && a?.address).toBe('127.0.0.1');
    expect(srv.url).toBe(`http://127.0.0.1:${srv.port}/`);
  });

  it('is not reachable on the machine\'s other addresses', async () => {
    const others = Object.values(networkInterfaces()).flat().filter((i) => i && i.family === 'IPv4' && !i.internal).map((i) => i!.address);
    for (const host of others) {
      const err = await new Promise<NodeJS.ErrnoException | undefined>((ok) => {
        const req = request({ host, port: srv.port, path: '/', timeout: 2000 }, () => ok(undefined));
        req.on('error', (e) => ok(e));
        req.end();
      });
      expect(err?.code, host).toBe('ECONNREFUSED');
    }
  });

  it('binds another address only when asked', async () => {
    const s = await startViewerServer(out, { distDir: dist, host: '0.0.0.0' });
    try {
      const a = s.server.address();
      expect(typeof a === 'object' && a?.address).toBe('0.0.0.0');
    } finally {
      await s.close();
    }
  });

  it('refuses a Host header that is not loopback on a loopback bind (DNS rebinding)', async () => {
    const r = await raw(srv.port, '/data/run.json', { headers: { Host: 'attacker.example:80' } });
    expect(r.status).toBe(403);
  });
});

describe('serves only its folder', () => {
  // Each must be refused (403 for traversal, 404 where the name simply does not exist inside) and never leak the file.
  const attempts = [
    '/data/../secret.txt',
    '/data/%2e%2e/secret.txt',
    '/data/%2E%2E/secret.txt',
    '/data/.%2e/secret.txt',
    '/data/%2e%2e%2fsecret.txt',
    '/data/..%2fsecret.txt',
    '/data/..%5csecret.txt',
    '/data/radargrams/../../secret.txt',
    '/data/radargrams/%2e%2e/%2e%2e/secret.txt',
    '/data/%252e%252e/secret.txt',
    '/data/run.json%00.txt',
    '/data/link-out.txt',
    '/data/link-dir/secret.txt',
    '/data//etc/passwd',
    '/../secret.txt',
    '/%2e%2e/secret.txt',
    '/assets/%2e%2e/%2e%2e/secret.txt',
  ];
  for (const path of attempts) {
    it(`refuses ${path}`, async () => {
      const r = await raw(srv.port, path);
      expect([400, 403, 404]).toContain(r.status);
      expect(r.body.toString()).not.toContain(SECRET);
    });
  }

  it('answers 403 (not 404) for dot segments and symlinks that leave the folder', async () => {
    for (const p of ['/data/../secret.txt', '/data/%2e%2e/secret.txt', '/data/..%2fsecret.txt', '/data/link-out.txt', '/data/link-dir/secret.txt']) {
      expect((await raw(srv.port, p)).status, p).toBe(403);
    }
  });

  it('follows a symlink that stays inside the folder', async () => {
    const r = await raw(srv.port, '/data/link-in.json');
    expect(r.status).toBe(200);
    expect(JSON.parse(r.body.toString()).identity.name).toBe('fixture-yard');
  });

  it('hides dot files (temporary files of atomic writes)', async () => {
    await writeFile(join(out, '.review.json.tmp'), '{}');
    expect((await raw(srv.port, '/data/.review.json.tmp')).status).toBe(404);
  });

  it('refuses writes to the static and data paths', async () => {
    expect((await raw(srv.port, '/data/run.json', { method: 'PUT', body: 'x' })).status).toBe(405);
  });
});

describe('content', () => {
  it('serves .mjs as text/javascript and .tif as image/tiff', async () => {
    const m = await raw(srv.port, '/assets/w.mjs');
    expect(m.status).toBe(200);
    expect(m.headers['content-type']).toMatch(/^text\/javascript/);
    const t = await raw(srv.port, '/data/slices.tif', { method: 'HEAD' });
    expect(t.status).toBe(200);
    expect(t.headers['content-type']).toBe('image/tiff');
    expect((await raw(srv.port, '/')).headers['content-type']).toMatch(/^text\/html/);
  });

  it('answers byte ranges as RFC 9110 says (206 + Content-Range; suffix ranges; 416)', async () => {
    const whole = await readFile(join(out, 'slices.tif'));
    const a = await raw(srv.port, '/data/slices.tif', { headers: { Range: 'bytes=0-7' } });
    expect(a.status).toBe(206);
    expect(a.headers['content-range']).toBe(`bytes 0-7/${whole.length}`);
    expect(a.body.equals(whole.subarray(0, 8))).toBe(true);
    // TIFF magic: "II*\0" little-endian (TIFF 6.0 spec, section 2)
    expect(a.body.subarray(0, 4).toString('latin1')).toBe('II*\0');
    const s = await raw(srv.port, '/data/slices.tif', { headers: { Range: 'bytes=-10' } });
    expect(s.body.equals(whole.subarray(whole.length - 10))).toBe(true);
    const o = await raw(srv.port, '/data/slices.tif', { headers: { Range: `bytes=${whole.length}-` } });
    expect(o.status).toBe(416);
  });
});

describe('review API', () => {
  it('rejects a body that fails validation, a non-JSON content type and an unknown anomaly', async () => {
    expect((await postJson(srv.port, '/api/review', { anomalyId: 'a1', decision: 'maybe' })).status).toBe(400);
    expect((await postJson(srv.port, '/api/review', { anomalyId: 'a1', utilityType: 'lava' })).status).toBe(400);
    expect((await postJson(srv.port, '/api/review', { anomalyId: 'a1', extra: 1 })).status).toBe(400);
    expect((await raw(srv.port, '/api/review', { method: 'POST', headers: { 'Content-Type': 'text/plain' }, body: '{"anomalyId":"a1"}' })).status).toBe(415);
    expect((await postJson(srv.port, '/api/review', { anomalyId: 'nope', decision: 'reject' })).status).toBe(404);
    const x = await raw(srv.port, '/api/review', { method: 'POST', headers: { 'Content-Type': 'application/json', Origin: 'http://attacker.example' }, body: '{"anomalyId":"a1"}' });
    expect(x.status).toBe(403);
  });

  it('merges fields into one decision and writes a valid review.json', async () => {
    expect((await postJson(srv.port, '/api/review', { anomalyId: 'a1', decision: 'accept' })).status).toBe(200);
    const r = await postJson(srv.port, '/api/review', { anomalyId: 'a1', utilityType: 'water', note: 'pipe, 0.3 m' });
    expect(r.status).toBe(200);
    const review = parseReview(JSON.parse(await readFile(join(out, 'review.json'), 'utf8')), 'review.json');
    const d = review.decisions.find((x) => x.anomalyId === 'a1')!;
    expect(d).toMatchObject({ decision: 'accept', utilityType: 'water', note: 'pipe, 0.3 m' });
    // anchor: centroid of the square outline, depth range from the anomaly
    expect(d.anchor.depthTopM).toBe(0);
    expect(d.anchor.depthBottomM).toBe(0.4);
    const cleared = await postJson(srv.port, '/api/review', { anomalyId: 'a1', note: null });
    expect(JSON.parse(cleared.body.toString()).decision.note).toBeUndefined();
  });

  it('loses no decision when two clients write at once', async () => {
    // Two clients, each sending 20 decisions on its own anomalies plus 10 edits of one shared anomaly, all in flight together.
    const a = Array.from({ length: 20 }, (_, i) => postJson(srv.port, '/api/review', { anomalyId: `c${i}`, decision: 'accept', by: 'client-a' }));
    const b = Array.from({ length: 20 }, (_, i) => postJson(srv.port, '/api/review', { anomalyId: `c${20 + i}`, decision: 'reject', by: 'client-b' }));
    const shared = Array.from({ length: 10 }, (_, i) => postJson(srv.port, '/api/review', i % 2 ? { anomalyId: 'a3', note: `note ${i}` } : { anomalyId: 'a3', label: `label ${i}` }));
    const all = await Promise.all([...a, ...b, ...shared]);
    expect(all.every((r) => r.status === 200)).toBe(true);
    const review = parseReview(JSON.parse(await readFile(join(out, 'review.json'), 'utf8')), 'review.json');
    for (let i = 0; i < 40; i++) {
      const d = review.decisions.find((x) => x.anomalyId === `c${i}`);
      expect(d?.decision, `c${i}`).toBe(i < 20 ? 'accept' : 'reject');
    }
    const a3 = review.decisions.filter((x) => x.anomalyId === 'a3');
    expect(a3).toHaveLength(1);
    expect(a3[0]).toMatchObject({ label: 'label 8', note: 'note 9' });
    expect(review.decisions.find((x) => x.anomalyId === 'a1')?.decision).toBe('accept');
  });

  it('refuses a review.json of another site with a message naming the file', async () => {
    const other = await mkdtemp(join(tmpdir(), 'lamina-viewer-other-'));
    await writeFixture(other);
    await writeFile(join(other, 'review.json'), JSON.stringify({ version: 1, site: { name: 'another-site', crs: 'EPSG:32617', extent: [0, 0, 1, 1] }, decisions: [] }));
    const s = await startViewerServer(other, { distDir: dist });
    try {
      const r = await raw(s.port, '/api/review');
      expect(r.status).toBe(422);
      expect(JSON.parse(r.body.toString()).error).toMatch(/review\.json: site: belongs to another site/);
    } finally {
      await s.close();
    }
  });

  it('runs exportTargets on the folder', async () => {
    const r = await postJson(srv.port, '/api/export', {});
    expect(r.status).toBe(200);
  });

  it('passes a basemap style URL to the page only when one is set', async () => {
    const s = await startViewerServer(out, { distDir: dist, basemap: 'https://tiles.example/style.json' });
    try {
      const c = JSON.parse((await raw(s.port, '/api/config')).body.toString());
      expect(c.basemap).toBe('https://tiles.example/style.json');
    } finally {
      await s.close();
    }
  });

  it('offers the cautions and no basemap unless one is set', async () => {
    const c = JSON.parse((await raw(srv.port, '/api/config')).body.toString());
    expect(c.basemap).toBeNull();
    expect(c.cautions.join(' ')).toMatch(/one-call/);
    expect(c.cautions.join(' ')).toMatch(/pothol/);
    expect(c.utilityTypes).toContain('gas');
  });
});

describe('picks and fit-here API', () => {
  // the fixture's L2 holds one diffraction: apex at stored trace 14 (0.5 m apart), 10 ns, v 0.1 m/ns
  const v = 0.1;
  const curve = (k: number) => ({ trace: (14 + k) * 2, timeNs: +((2 * Math.hypot((v * 10) / 2, k * 0.5)) / v).toFixed(4) });

  it('appends a hand match to picks.json in the format `lamina velocity --picks` reads, after fitting it', async () => {
    const { parsePicks } = await import('@lamina/velocity');
    const picks = [-4, -3, -2, -1, 0, 1, 2, 3, 4].map(curve);
    const r = await postJson(srv.port, '/api/picks', { line: 'L2', label: 'test', picks });
    expect(r.status, r.body.toString()).toBe(200);
    const body = JSON.parse(r.body.toString()) as { count: number; fit: { velocityMPerNs: number; origin: string } };
    expect(body.count).toBe(1);
    // monostatic curve read with the site's 0.1 m separation: within 1 %
    expect(Math.abs(body.fit.velocityMPerNs - v) / v).toBeLessThan(0.01);
    expect(body.fit.origin).toBe('subsurface');
    const file = parsePicks(await readFile(join(out, 'picks.json'), 'utf8'), 'picks.json');
    expect(file.hyperbolas).toEqual([{ line: 'L2', label: 'test', picks }]);
    // two clients at once: both land
    const [a, b] = await Promise.all([postJson(srv.port, '/api/picks', { line: 'L2', picks }), postJson(srv.port, '/api/picks', { line: 'L2', picks })]);
    expect([a.status, b.status]).toEqual([200, 200]);
    expect(parsePicks(await readFile(join(out, 'picks.json'), 'utf8'), 'picks.json').hyperbolas).toHaveLength(3);
    const rm = await postJson(srv.port, '/api/picks/remove', { index: 0 });
    expect(JSON.parse(rm.body.toString())).toEqual({ count: 2 });
  });

  it('refuses picks that do not fit a hyperbola, too few picks, and an unknown line', async () => {
    // times falling away from the middle: no diffraction does that
    const inverted = [-4, -3, -2, -1, 0, 1, 2, 3, 4].map((k) => ({ trace: (14 + k) * 2, timeNs: 60 - curve(k).timeNs }));
    const bad = await postJson(srv.port, '/api/picks', { line: 'L2', picks: inverted });
    expect(bad.status, bad.body.toString()).toBe(422);
    expect((await postJson(srv.port, '/api/picks', { line: 'L2', picks: [curve(0), curve(1)] })).status).toBe(400);
    expect((await postJson(srv.port, '/api/picks', { line: 'nope', picks: [-2, -1, 0, 1, 2].map(curve) })).status).toBe(404);
  });

  it('fit here finds the diffraction near the point asked, and nothing on a line of noise', async () => {
    // a line sampled as a survey is (0.05 m, 0.1 ns) with one point diffractor 0.6 m deep at 4 m, drawn
    // with straight rays (t = 2 sqrt(d^2 + x^2) / v, no model of ours) and a Ricker pulse
    const idx = JSON.parse(await readFile(join(out, 'radargrams', 'index.json'), 'utf8')) as { lines: Record<string, unknown>[] };
    const nT = 200;
    const nS = 300;
    const data = new Float32Array(nT * nS);
    let seed = 3;
    const rnd = () => ((seed = (seed * 1103515245 + 12345) % 2 ** 31) / 2 ** 31);
    for (let t = 0; t < nT; t++)
      for (let s = 0; s < nS; s++) {
        const tt = (2 * Math.hypot(0.6, t * 0.05 - 4)) / v + 2;
        const u = (s * 0.1 - tt) / 0.8;
        data[t * nS + s] = 0.01 * (rnd() - 0.5) + (1 - 2 * u * u) * Math.exp(-u * u);
      }
    await writeFile(join(out, 'radargrams', 'L9.f32'), new Uint8Array(data.buffer));
    const xs = Array.from({ length: nT }, (_, t) => 631000 + t * 0.05);
    idx.lines.push({ id: 'L9', file: 'radargrams/L9.f32', nTraces: nT, nSamples: nS, dtNs: 0.1, timeZeroNs: 2, traceStep: 1, x: xs, y: xs.map(() => 3985000), lon: xs.map(() => -79.6), lat: xs.map(() => 36) });
    await writeFile(join(out, 'radargrams', 'index.json'), JSON.stringify(idx));
    const r = await postJson(srv.port, '/api/fit', { line: 'L9', trace: 82, timeNs: 12.5 });
    expect(r.status, r.body.toString()).toBe(200);
    const { fit } = JSON.parse(r.body.toString()) as { fit: { x0M: number; t0Ns: number; velocityMPerNs: number } | null };
    expect(fit).not.toBeNull();
    // the site's 0.1 m antenna separation against a monostatic curve: a few per cent
    expect(Math.abs(fit!.velocityMPerNs - v) / v).toBeLessThan(0.05);
    expect(Math.abs(fit!.x0M - 4)).toBeLessThan(0.1);
    expect(Math.abs(fit!.t0Ns - 12)).toBeLessThan(0.5);
    const none = JSON.parse((await postJson(srv.port, '/api/fit', { line: 'L4', trace: 15, timeNs: 10 })).body.toString()) as { fit: unknown };
    expect(none.fit).toBeNull();
  });
});
