import { mkdir, readFile, stat, unlink, writeFile } from 'node:fs/promises';
import { basename, dirname, join, resolve } from 'node:path';
import { InputError } from '@lamina/errors';

/** A lock held on a folder; `release` is safe to call more than once. */
export interface FolderLock {
  readonly path: string;
  release(): Promise<void>;
}

export interface LockOptions {
  /**
   * Which lock: `write` (whoever writes into the folder: the end of `process`, `export`, a review save)
   * or `run` (one `process` per output folder). @default 'write'
   */
  kind?: 'write' | 'run';
  /** What holds it, for the message the other side gets. @default 'lamina' */
  what?: string;
  /** How long to wait for another holder, ms; 0 refuses at once. @default 0 */
  waitMs?: number;
  /** The folder as shown in messages. @default the path given */
  shown?: string;
}

interface Holder {
  pid: number;
  what: string;
  since: string;
}

function alive(pid: number): boolean {
  try {
    process.kill(pid, 0);
    return true;
  } catch (e) {
    return (e as NodeJS.ErrnoException).code === 'EPERM';
  }
}

/**
 * Take a lock on folder `target`: a file `.lamina-<kind>-lock-<name>` beside it (not in it: `process`
 * replaces the folder by a rename), created exclusively. A lock whose process is gone (killed) is taken
 * over. Another live holder is waited for up to `waitMs`, then refused with an `InputError` naming the
 * folder and the holder. Holders on other machines sharing the folder are not seen (pids are local).
 */
export async function lockFolder(target: string, options: LockOptions = {}): Promise<FolderLock> {
  const abs = resolve(target);
  const path = join(dirname(abs), `.lamina-${options.kind ?? 'write'}-lock-${basename(abs)}`);
  const me: Holder = { pid: process.pid, what: options.what ?? 'lamina', since: new Date().toISOString() };
  const deadline = Date.now() + (options.waitMs ?? 0);
  await mkdir(dirname(abs), { recursive: true });
  for (;;) {
    try {
      await writeFile(path, JSON.stringify(me), { flag: 'wx' });
      let held = true;
      return {
        path,
        async release() {
          if (!held) return;
          held = false;
          await unlink(path).catch(() => {});
        },
      };
    } catch (e) {
      if ((e as NodeJS.ErrnoException).code !== 'EEXIST') throw e;
    }
    let holder: Holder | undefined;
    try {
      holder = JSON.parse(await readFile(path, 'utf8')) as Holder;
    } catch {
      holder = undefined; // being written this instant, or gone: look again
    }
    // a lock of a process that is gone, or one left empty by a crash while it was written
    const old = !holder && Date.now() - ((await stat(path).catch(() => undefined))?.mtimeMs ?? Date.now()) > 10_000;
    if ((holder && Number.isInteger(holder.pid) && !alive(holder.pid)) || old) {
      await unlink(path).catch(() => {});
      continue;
    }
    if (Date.now() >= deadline) {
      const who = holder ? `${holder.what} (process ${holder.pid}, since ${holder.since})` : 'another lamina process';
      throw new InputError(options.shown ?? target, `expected no other writer, found ${who} working on it${options.waitMs ? ` after waiting ${Math.round(options.waitMs / 1000)} s` : ''}; wait for it to finish or use another output folder`);
    }
    await new Promise((r) => setTimeout(r, 50));
  }
}
