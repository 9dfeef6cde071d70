// Builds the lamina CLI into apps/cli/dist: one ESM bundle (esbuild) for the command line, one for each
// worker entry of the sources, sql.js's wasm and the viewer's built assets, side by side, so the
// folder runs on its own (`npm pack`, `npm i -g`). Plain JavaScript so that `pnpm lamina` can check
// staleness without loading a TypeScript loader or esbuild.
//
//   node apps/cli/build.mjs                  build apps/cli/dist when stale
//   node apps/cli/build.mjs --force          build anyway
//   node apps/cli/build.mjs --out <dir>      build into another folder (tests)
import { cp, mkdir, rename, rm, writeFile } from 'node:fs/promises';
import { readdirSync, readFileSync, statSync } from 'node:fs';
import { createRequire } from 'node:module';
import { dirname, join, relative, resolve } from 'node:path';
import { fileURLToPath } from 'node:url';

export const CLI_ROOT = dirname(fileURLToPath(import.meta.url));
export const REPO_ROOT = join(CLI_ROOT, '..', '..');
export const DIST = join(CLI_ROOT, 'dist');
export const MAIN = join(DIST, 'lamina.mjs');
const STAMP = 'build.json';

/** What the bundle is made from: every workspace package's sources and manifest, the lockfile, this script. */
function sourceRoots() {
  const roots = [join(REPO_ROOT, 'pnpm-lock.yaml'), fileURLToPath(import.meta.url)];
  for (const group of ['packages', 'apps']) {
    for (const p of readdirSync(join(REPO_ROOT, group))) {
      const dir = join(REPO_ROOT, group, p);
      for (const f of ['src', 'package.json', 'index.html']) roots.push(join(dir, f));
    }
  }
  return roots;
}

function newestMtime(path) {
  let st;
  try {
    st = statSync(path);
  } catch {
    return 0;
  }
  if (!st.isDirectory()) return st.mtimeMs;
  let m = st.mtimeMs;
  for (const e of readdirSync(path, { withFileTypes: true })) {
    if (e.name === 'node_modules' || e.name === 'dist') continue;
    m = Math.max(m, e.isDirectory() ? newestMtime(join(path, e.name)) : statSync(join(path, e.name)).mtimeMs);
  }
  return m;
}

/**
 * True when dist/ is missing or any source changed since the build started (the stamp records the
 * start, so a file saved during a build counts as changed). Only mtimes are read: a few ms.
 */
export function isStale(dist = DIST) {
  let startedAt;
  try {
    startedAt = JSON.parse(readFileSync(join(dist, STAMP), 'utf8')).startedAt;
  } catch {
    return true;
  }
  if (typeof startedAt !== 'number') return true;
  return sourceRoots().some((r) => newestMtime(r) > startedAt);
}

/**
 * Worker entry modules of the sources, found by the literal `new URL('./<name>.ts', import.meta.url)` that
 * a pool hands to `startWorker` (@lamina/runtime-files), so no list of them is kept here.
 */
export function workerEntries() {
  const found = new Map();
  const pattern = /new URL\(\s*'\.\/([\w.-]+)\.ts'\s*,\s*import\.meta\.url\s*\)/g;
  for (const group of ['packages', 'apps']) {
    for (const p of readdirSync(join(REPO_ROOT, group))) {
      const src = join(REPO_ROOT, group, p, 'src');
      let files;
      try {
        files = readdirSync(src, { recursive: true });
      } catch {
        continue;
      }
      for (const f of files) {
        if (!f.endsWith('.ts') || f.endsWith('.test.ts')) continue;
        const file = join(src, f);
        for (const m of readFileSync(file, 'utf8').matchAll(pattern)) {
          const entry = join(dirname(file), `${m[1]}.ts`);
          const name = m[1];
          const other = found.get(name);
          if (other && other !== entry) throw new Error(`Two worker entries bundle to ${name}.mjs: ${relative(REPO_ROOT, other)} and ${relative(REPO_ROOT, entry)}.`);
          found.set(name, entry);
        }
      }
    }
  }
  return found;
}

/** The viewer's built assets (apps/viewer/dist), built by the viewer's own `ensureViewerBuilt` when stale. */
async function viewerDist(log) {
  const { register } = await import('tsx/esm/api');
  const unregister = register();
  try {
    const viewer = await import('@lamina/viewer');
    return await viewer.ensureViewerBuilt({ log });
  } finally {
    await unregister();
  }
}

/**
 * Builds into a fresh folder and swaps it in, so a process running the old build (or a second build at
 * the same time) never sees half a build. Returns the path of the CLI bundle.
 */
export async function build(options = {}) {
  const dist = options.outDir ?? DIST;
  const log = options.log ?? (() => {});
  const startedAt = Date.now();
  const esbuild = await import('esbuild');
  const tmp = `${dist}.build-${process.pid}-${startedAt}`;
  await rm(tmp, { recursive: true, force: true });
  await mkdir(tmp, { recursive: true });
  try {
    const workers = workerEntries();
    const entryPoints = [{ in: join(CLI_ROOT, 'src', 'main.ts'), out: 'lamina' }, ...[...workers].map(([name, file]) => ({ in: file, out: name }))];
    await esbuild.build({
      entryPoints,
      outdir: tmp,
      outExtension: { '.js': '.mjs' },
      bundle: true,
      platform: 'node',
      format: 'esm',
      target: 'node20',
      // @lamina/runtime-files: workers and assets are looked up beside the bundle. CommonJS dependencies
      // call require() for Node's built-ins, and sql.js reads __dirname (the bundle's folder, where its
      // wasm is copied); `define` replaces only free uses, so a module's own __dirname stays its own.
      define: { __LAMINA_BUNDLE__: 'true', __dirname: '__laminaBundleDir', __filename: '__laminaBundleFile' },
      banner: {
        js: [
          "import { createRequire as __laminaCreateRequire } from 'node:module';",
          "import { dirname as __laminaDirname } from 'node:path';",
          "import { fileURLToPath as __laminaFileURLToPath } from 'node:url';",
          'const require = __laminaCreateRequire(import.meta.url);',
          'const __laminaBundleFile = __laminaFileURLToPath(import.meta.url);',
          'const __laminaBundleDir = __laminaDirname(__laminaBundleFile);',
        ].join('\n'),
      },
      // only `ensureViewerBuilt` imports vite, and the built CLI serves the viewer assets it carries
      external: ['vite'],
      legalComments: 'none',
      logLevel: 'warning',
    });
    const targets = createRequire(join(REPO_ROOT, 'packages', 'targets', 'package.json'));
    await cp(join(dirname(targets.resolve('sql.js')), 'sql-wasm.wasm'), join(tmp, 'sql-wasm.wasm'));
    await cp(await viewerDist(log), join(tmp, 'viewer'), { recursive: true });
    await writeFile(join(tmp, STAMP), JSON.stringify({ startedAt, esbuild: esbuild.version, workers: [...workers.keys()].map((w) => `${w}.mjs`) }, null, 1) + '\n');
    const old = `${dist}.old-${process.pid}-${startedAt}`;
    await rename(dist, old).catch(() => undefined);
    await rename(tmp, dist);
    await rm(old, { recursive: true, force: true });
    log(`built ${relative(process.cwd(), dist) || '.'} in ${((Date.now() - startedAt) / 1000).toFixed(1)} s`);
    return join(dist, 'lamina.mjs');
  } catch (e) {
    await rm(tmp, { recursive: true, force: true });
    throw e;
  }
}

/** The CLI bundle, built first when stale. */
export async function ensureBuilt(options = {}) {
  const dist = options.outDir ?? DIST;
  if (!options.force && !isStale(dist)) return join(dist, 'lamina.mjs');
  options.log?.('building the lamina CLI (first run or sources changed) ...');
  return build(options);
}

if (process.argv[1] && fileURLToPath(import.meta.url) === process.argv[1]) {
  const args = process.argv.slice(2);
  const out = args.indexOf('--out');
  if (out >= 0 && !args[out + 1]) throw new Error('Expected a folder after --out.');
  await ensureBuilt({ force: args.includes('--force'), log: (s) => process.stderr.write(`${s}\n`), ...(out >= 0 ? { outDir: resolve(args[out + 1]) } : {}) });
}
