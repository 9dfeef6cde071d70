import { execFileSync } from 'node:child_process';
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { dirname, join } from 'node:path';
import { fileURLToPath } from 'node:url';
export { mulberry32 as rng } from '@lamina/random';

export const DATA = join(dirname(fileURLToPath(import.meta.url)), 'data');

/** Debian's interpreter (numpy, segyio): not the `python3` first on PATH. */
export { PYTHON } from '@lamina/test-utils';
import { PYTHON } from '@lamina/test-utils';

export function python(args: string[], input?: string): string {
  return execFileSync(PYTHON, args, { encoding: 'utf8', input, maxBuffer: 256 << 20 });
}

export function pythonJson<T>(script: string, args: string[] = []): T {
  return JSON.parse(python(['-c', script, ...args])) as T;
}

export function tempDir(prefix = 'lamina-segy-'): { dir: string; remove(): void } {
  const dir = mkdtempSync(join(tmpdir(), prefix));
  return { dir, remove: () => rmSync(dir, { recursive: true, force: true }) };
}

