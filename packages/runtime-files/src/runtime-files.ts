import { Worker, type WorkerOptions } from 'node:worker_threads';
import { basename, dirname } from 'node:path';
import { fileURLToPath } from 'node:url';

// Set to true by the CLI build (esbuild `define`); absent when running from source (tsx, vitest).
declare const __LAMINA_BUNDLE__: boolean | undefined;

/** True inside the built CLI (apps/cli/dist), false when running from the TypeScript sources. */
export const bundled: boolean = typeof __LAMINA_BUNDLE__ !== 'undefined' && __LAMINA_BUNDLE__ === true;

/**
 * The folder of the built CLI: the bundle, its worker entries and its assets all sit in it, so this
 * module's own URL (inlined into whichever bundled file runs) names it. Meaningful only when `bundled`.
 */
export function bundleDir(): string {
  return dirname(fileURLToPath(import.meta.url));
}

/** The bundled file name of a worker entry module: `line-worker.ts` -> `line-worker.mjs`. */
export function bundledWorkerName(entry: URL | string): string {
  const name = basename(typeof entry === 'string' ? entry : fileURLToPath(entry));
  if (!name.endsWith('.ts')) throw new Error(`Expected a worker entry ending in .ts, found ${name}.`);
  return `${name.slice(0, -3)}.mjs`;
}

/**
 * The file a worker thread starts from for the TypeScript entry module `entry`: in the build, the
 * bundled `<name>.mjs` beside the CLI; from source, a boot module that registers tsx in the worker
 * (Node 20 workers do not inherit the parent's loader) and imports `entry` (given as workerData).
 */
export function workerFile(entry: URL): { file: URL; workerData?: { entry: string } } {
  if (bundled) return { file: new URL(`./${bundledWorkerName(entry)}`, import.meta.url) };
  return { file: new URL('./tsx-boot.mjs', import.meta.url), workerData: { entry: entry.href } };
}

/**
 * A worker thread running the TypeScript module `entry`, from the build or from source (see
 * `workerFile`). Entry modules take their input by messages, not workerData (the source boot uses it).
 * The CLI build finds worker entries in the sources by the literal `new URL('./<name>.ts', import.meta.url)`.
 */
export function startWorker(entry: URL, options: Omit<WorkerOptions, 'workerData'> = {}): Worker {
  const { file, workerData } = workerFile(entry);
  return new Worker(file, workerData ? { ...options, workerData } : options);
}
