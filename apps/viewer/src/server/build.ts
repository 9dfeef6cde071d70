import { readdir, rename, rm, stat } from 'node:fs/promises';
import { dirname, join, resolve } from 'node:path';
import { fileURLToPath } from 'node:url';

/** apps/viewer: the Vite root. */
export const VIEWER_ROOT = resolve(dirname(fileURLToPath(import.meta.url)), '..', '..');
export const DIST_DIR = join(VIEWER_ROOT, 'dist');
const SOURCES = ['index.html', 'package.json', 'src/client'];

async function newestMtime(path: string): Promise<number> {
  const st = await stat(path);
  if (!st.isDirectory()) return st.mtimeMs;
  let m = st.mtimeMs;
  for (const e of await readdir(path)) m = Math.max(m, await newestMtime(join(path, e)));
  return m;
}

/** True when dist/index.html is missing or older than any viewer source. */
export async function viewerBuildIsStale(): Promise<boolean> {
  let built: number;
  try {
    built = (await stat(join(DIST_DIR, 'index.html'))).mtimeMs;
  } catch {
    return true;
  }
  let src = 0;
  for (const s of SOURCES) src = Math.max(src, await newestMtime(join(VIEWER_ROOT, s)));
  return src > built;
}

let building: Promise<string> | undefined;

/**
 * Build the viewer with Vite's JS API into apps/viewer/dist when it is missing or stale; returns the
 * dist folder. The build goes to a fresh folder that is swapped in, so a server reading the old build
 * (or a second process building at the same time) never sees half a build.
 */
export function ensureViewerBuilt(options: { force?: boolean; log?: (s: string) => void } = {}): Promise<string> {
  building ??= (async () => {
    try {
      if (!options.force && !(await viewerBuildIsStale())) return DIST_DIR;
      options.log?.('building the viewer (first run or sources changed) ...');
      const { build } = await import('vite');
      const tmp = `${DIST_DIR}.build-${process.pid}-${Date.now()}`;
      await build({
        root: VIEWER_ROOT,
        configFile: false,
        base: './',
        logLevel: 'warn',
        build: { outDir: tmp, emptyOutDir: true, chunkSizeWarningLimit: 8000, reportCompressedSize: false, sourcemap: false },
      });
      const old = `${DIST_DIR}.old-${process.pid}-${Date.now()}`;
      await rename(DIST_DIR, old).catch(() => undefined);
      await rename(tmp, DIST_DIR);
      await rm(old, { recursive: true, force: true });
      return DIST_DIR;
    } finally {
      building = undefined;
    }
  })();
  return building;
}
