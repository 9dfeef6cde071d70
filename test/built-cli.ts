// The built CLI as the tiles tests run it (a child process, one thread, no progress), shared by
// merge.test.ts, merge-air-events.test.ts and batch-engines.test.ts.
import { execFile, execFileSync } from 'node:child_process';
import { dirname, join, resolve } from 'node:path';
import { fileURLToPath } from 'node:url';
import { promisify } from 'node:util';

const run = promisify(execFile);
export const root = resolve(dirname(fileURLToPath(import.meta.url)), '..');
const cli = join(root, 'apps/cli/dist/lamina.mjs');
/** The environment the CLI runs in (job scripts started by a test get it too). */
export const env = { ...process.env, LAMINA_PROGRESS: '0', LAMINA_THREADS: '1' };
/** Runs `lamina <args>` from the repository root. */
export const lamina = (...args: string[]) => run(process.execPath, [cli, ...args], { cwd: root, env, maxBuffer: 1 << 26 });
/** Builds the bundled CLI (apps/cli/build.mjs) so the tests run the sources of this tree. */
export const buildCli = (): void => {
  execFileSync(process.execPath, [join(root, 'apps/cli/build.mjs')], { cwd: root, stdio: 'ignore' });
};
