import { createServer, type IncomingMessage, type Server, type ServerResponse } from 'node:http';
import { createReadStream } from 'node:fs';
import { resolve } from 'node:path';
import { isInputError } from '@lamina/errors';
import { APWA_COLOURS, UTILITY_TYPES } from '@lamina/targets';
import { contentType } from './mime';
import { parseRange, resolveInside } from './paths';
import { decisionInputSchema, HttpError, ReviewStore } from './review-store';
import { DIST_DIR } from './build';
import { CAUTION, CAUTIONS } from '@lamina/constants';
import { PicksStore, pickInputSchema } from './picks-store';
import { fitHere, fitInputSchema } from './fit-here';
import type { z } from 'zod';

function parseBody<T>(schema: z.ZodType<T>, body: unknown): T {
  const parsed = schema.safeParse(body);
  if (!parsed.success) {
    const i = parsed.error.issues[0]!;
    throw new HttpError(400, `${i.path.join('.') || '(body)'}: ${i.message}`);
  }
  return parsed.data;
}

export interface ViewerServerOptions {
  /** @default 0 (a free port) */
  port?: number;
  /** Address to bind. @default '127.0.0.1' */
  host?: string;
  /** Optional basemap style URL offered to the page; without it the page makes no outside request. */
  basemap?: string;
  /** The built viewer. @default apps/viewer/dist */
  distDir?: string;
}

export interface ViewerServer {
  url: string;
  host: string;
  port: number;
  server: Server;
  store: ReviewStore;
  picks: PicksStore;
  close(): Promise<void>;
}

const MAX_BODY = 64 * 1024;
const LOOPBACK = new Set(['127.0.0.1', '::1', 'localhost']);

function sendJson(res: ServerResponse, status: number, body: unknown): void {
  const text = JSON.stringify(body);
  res.writeHead(status, { 'Content-Type': 'application/json; charset=utf-8', 'Cache-Control': 'no-store', 'Content-Length': Buffer.byteLength(text) });
  res.end(text);
}

async function readBody(req: IncomingMessage): Promise<unknown> {
  const ct = req.headers['content-type'] ?? '';
  if (!/^application\/json\b/i.test(ct)) throw new HttpError(415, `expected Content-Type application/json, found "${ct}"`);
  const chunks: Buffer[] = [];
  let n = 0;
  for await (const c of req) {
    n += (c as Buffer).length;
    if (n > MAX_BODY) throw new HttpError(413, `request body over ${MAX_BODY} bytes`);
    chunks.push(c as Buffer);
  }
  try {
    return JSON.parse(Buffer.concat(chunks).toString('utf8'));
  } catch (e) {
    throw new HttpError(400, `body is not valid JSON (${(e as Error).message})`);
  }
}

async function sendFile(req: IncomingMessage, res: ServerResponse, root: string, rawPath: string, cache: string): Promise<void> {
  const r = await resolveInside(root, rawPath);
  if (!r.ok) {
    res.writeHead(r.status, { 'Content-Type': 'text/plain; charset=utf-8' });
    res.end(`${r.status}: ${r.reason}\n`);
    return;
  }
  const headers: Record<string, string | number> = {
    'Content-Type': contentType(r.path),
    'Accept-Ranges': 'bytes',
    'Cache-Control': cache,
    'Last-Modified': new Date(r.mtimeMs).toUTCString(),
    'X-Content-Type-Options': 'nosniff',
  };
  const range = parseRange(req.headers.range, r.size);
  if (range === null) {
    res.writeHead(416, { 'Content-Range': `bytes */${r.size}` });
    res.end();
    return;
  }
  const { start, end } = range ?? { start: 0, end: r.size - 1 };
  headers['Content-Length'] = Math.max(0, end - start + 1);
  if (range) headers['Content-Range'] = `bytes ${start}-${end}/${r.size}`;
  res.writeHead(range ? 206 : 200, headers);
  if (req.method === 'HEAD' || r.size === 0) {
    res.end();
    return;
  }
  await new Promise<void>((ok, fail) => {
    const s = createReadStream(r.path, { start, end });
    s.on('error', fail);
    res.on('close', () => {
      s.destroy();
      ok();
    });
    s.pipe(res);
  });
}

/**
 * The local server of `lamina view`: the built viewer at `/`, the output folder (read-only) under
 * `/data/`, and a JSON API: GET /api/config, GET|POST /api/review, GET|POST /api/picks (picks.json),
 * POST /api/picks/remove, POST /api/fit (the automatic fitter near a point of a line), POST /api/export.
 * Binds 127.0.0.1 unless `host` says otherwise; on a loopback bind it answers only requests whose Host
 * header names a loopback address (a guard against DNS rebinding), and POSTs only same-origin JSON.
 */
export async function startViewerServer(outDir: string, options: ViewerServerOptions = {}): Promise<ViewerServer> {
  const root = resolve(outDir);
  const dist = resolve(options.distDir ?? DIST_DIR);
  const host = options.host ?? '127.0.0.1';
  const store = new ReviewStore(root);
  const picks = new PicksStore(root);
  const loopbackBind = LOOPBACK.has(host);
  let port = options.port ?? 0;

  const handle = async (req: IncomingMessage, res: ServerResponse): Promise<void> => {
    const raw = req.url ?? '/';
    const path = raw.split(/[?#]/, 1)[0] ?? '/';
    if (loopbackBind) {
      const h = (req.headers.host ?? '').replace(/:\d+$/, '').replace(/^\[|\]$/g, '');
      if (!LOOPBACK.has(h)) throw new HttpError(403, `Host "${req.headers.host}" is not a loopback address`);
    }
    const method = req.method ?? 'GET';
    if (method === 'POST') {
      const origin = req.headers.origin;
      if (origin && new URL(origin).host !== req.headers.host) throw new HttpError(403, `cross-origin request from ${origin}`);
    }
    if (path.startsWith('/api/')) {
      if (path === '/api/config' && method === 'GET') {
        sendJson(res, 200, {
          basemap: options.basemap ?? null,
          utilityTypes: UTILITY_TYPES,
          apwa: APWA_COLOURS,
          cautions: CAUTIONS,
          caution: CAUTION,
        });
        return;
      }
      if (path === '/api/review' && method === 'GET') {
        sendJson(res, 200, await store.read());
        return;
      }
      if (path === '/api/review' && method === 'POST') {
        const body = await readBody(req);
        const parsed = decisionInputSchema.safeParse(body);
        if (!parsed.success) {
          const i = parsed.error.issues[0]!;
          throw new HttpError(400, `${i.path.join('.') || '(body)'}: ${i.message}`);
        }
        sendJson(res, 200, await store.apply(parsed.data));
        return;
      }
      if (path === '/api/picks' && method === 'GET') {
        sendJson(res, 200, await picks.read());
        return;
      }
      if (path === '/api/picks' && method === 'POST') {
        sendJson(res, 200, await picks.add(parseBody(pickInputSchema, await readBody(req))));
        return;
      }
      if (path === '/api/picks/remove' && method === 'POST') {
        const { index } = (await readBody(req)) as { index?: unknown };
        if (typeof index !== 'number' || !Number.isInteger(index)) throw new HttpError(400, `index: expected an integer, found ${JSON.stringify(index)}`);
        sendJson(res, 200, await picks.remove(index));
        return;
      }
      if (path === '/api/fit' && method === 'POST') {
        sendJson(res, 200, { fit: await fitHere(root, parseBody(fitInputSchema, await readBody(req))) });
        return;
      }
      if (path === '/api/export' && method === 'POST') {
        const result = await store.export();
        sendJson(res, 200, { ok: true, result: result ?? null, cautions: CAUTIONS });
        return;
      }
      throw new HttpError(404, `no API ${method} ${path}`);
    }
    if (method !== 'GET' && method !== 'HEAD') throw new HttpError(405, `${method} not allowed`);
    if (path.startsWith('/data/')) {
      await sendFile(req, res, root, path.slice('/data/'.length), 'no-store');
      return;
    }
    if (path === '/' || path === '/index.html') {
      await sendFile(req, res, dist, 'index.html', 'no-store');
      return;
    }
    await sendFile(req, res, dist, path, path.startsWith('/assets/') ? 'public, max-age=31536000, immutable' : 'no-cache');
  };

  const server = createServer((req, res) => {
    handle(req, res).catch((e: unknown) => {
      if (res.headersSent) {
        res.destroy();
        return;
      }
      if (e instanceof HttpError) sendJson(res, e.status, { error: e.message });
      else if (isInputError(e)) sendJson(res, 422, { error: e.message });
      else sendJson(res, 500, { error: e instanceof Error ? e.message : String(e) });
    });
  });
  await new Promise<void>((ok, fail) => {
    server.once('error', fail);
    server.listen(port, host, () => {
      server.off('error', fail);
      ok();
    });
  });
  const addr = server.address();
  port = typeof addr === 'object' && addr ? addr.port : port;
  const urlHost = host.includes(':') ? `[${host}]` : host === '0.0.0.0' ? '127.0.0.1' : host;
  return {
    url: `http://${urlHost}:${port}/`,
    host,
    port,
    server,
    store,
    picks,
    close: () =>
      new Promise<void>((ok) => {
        server.closeAllConnections();
        server.close(() => ok());
      }),
  };
}
