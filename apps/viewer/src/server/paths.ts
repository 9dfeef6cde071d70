import { realpath, stat } from 'node:fs/promises';
import { join, sep } from 'node:path';

export type Resolved =
  | { ok: true; path: string; size: number; mtimeMs: number }
  | { ok: false; status: 400 | 403 | 404; reason: string };

/**
 * Resolve a raw (still percent-encoded) URL path below `root` to a regular file inside it.
 * Works on the raw request path, because WHATWG URL parsing already folds `..` and `%2e%2e` away and
 * would hide the attempt. Refused with 403: `.`/`..` segments in any encoding, encoded `/` or `\`, NUL,
 * and any file whose real path (after symlinks) lies outside the real root. Hidden names (a leading
 * dot: temp files of atomic writes) and folders are 404.
 */
export async function resolveInside(root: string, rawPath: string): Promise<Resolved> {
  const segments: string[] = [];
  for (const raw of rawPath.split('/')) {
    if (raw === '') continue;
    let s: string;
    try {
      s = decodeURIComponent(raw);
    } catch {
      return { ok: false, status: 400, reason: `bad percent-encoding in path segment "${raw}"` };
    }
    if (s === '.' || s === '..') return { ok: false, status: 403, reason: 'path traversal (dot segment)' };
    if (/[/\\\0]/.test(s)) return { ok: false, status: 403, reason: 'encoded separator or NUL in path segment' };
    if (s.startsWith('.')) return { ok: false, status: 404, reason: 'hidden file' };
    segments.push(s);
  }
  if (segments.length === 0) return { ok: false, status: 404, reason: 'no file named' };
  let realRoot: string;
  let real: string;
  try {
    realRoot = await realpath(root);
    real = await realpath(join(realRoot, ...segments));
  } catch {
    return { ok: false, status: 404, reason: 'not found' };
  }
  if (!real.startsWith(realRoot.endsWith(sep) ? realRoot : realRoot + sep)) {
    return { ok: false, status: 403, reason: 'resolves outside the served folder' };
  }
  const st = await stat(real);
  if (!st.isFile()) return { ok: false, status: 404, reason: 'not a file' };
  return { ok: true, path: real, size: st.size, mtimeMs: st.mtimeMs };
}

/** Parse a single `Range: bytes=` header against a file size; undefined = whole file, null = unsatisfiable. */
export function parseRange(header: string | undefined, size: number): { start: number; end: number } | undefined | null {
  if (!header) return undefined;
  const m = /^bytes=(\d*)-(\d*)$/.exec(header.trim());
  if (!m) return undefined; // multiple or odd ranges: RFC 9110 lets a server ignore Range and send the whole file
  const [, a, b] = m;
  if (a === '' && b === '') return null;
  let start: number;
  let end: number;
  if (a === '') {
    const n = Number(b);
    if (n === 0) return null;
    start = Math.max(0, size - n);
    end = size - 1;
  } else {
    start = Number(a);
    end = b === '' ? size - 1 : Math.min(Number(b), size - 1);
  }
  if (start >= size || start > end) return null;
  return { start, end };
}
