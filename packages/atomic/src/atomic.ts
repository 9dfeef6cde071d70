import { mkdir, mkdtemp, rename, rm, open, readdir, cp, stat } from 'node:fs/promises';
import { dirname, basename, join, resolve } from 'node:path';

/** Write a file so that readers see the old content or the new, never a part: temp file + fsync + rename. */
export async function writeFileAtomic(path: string, data: string | Uint8Array): Promise<void> {
  await (await stageFile(path, data)).commit();
}

export interface StagedFile {
  /** Rename the written temp file into place. */
  commit(): Promise<void>;
  /** Delete the temp file (safe after commit). */
  abort(): Promise<void>;
}

/**
 * Write `data` to a temp file beside `path` (fsync'd) and return how to rename it into place: several
 * files can be written one after another (each dropped from memory once written) and committed together.
 */
export async function stageFile(path: string, data: string | Uint8Array): Promise<StagedFile> {
  const tmp = await tempBeside(path);
  try {
    const fh = await open(tmp, 'w');
    try {
      await fh.writeFile(data);
      await fh.sync();
    } finally {
      await fh.close();
    }
  } catch (e) {
    await rm(tmp, { force: true });
    throw e;
  }
  let done = false;
  return {
    commit: async () => {
      try {
        await rename(tmp, path);
        done = true;
      } catch (e) {
        await rm(tmp, { force: true });
        throw e;
      }
    },
    abort: async () => {
      if (!done) await rm(tmp, { force: true });
    },
  };
}

export interface StagedStream extends StagedFile {
  /** Append to the temp file (buffered; call in order, awaiting each). */
  write(chunk: string | Uint8Array): Promise<void>;
}

/** Bytes gathered before a write to the temp file: few syscalls for many small chunks. */
const STREAM_BUFFER = 1 << 16;

/**
 * A temp file beside `path` written in chunks, so a large output is never whole in memory; `commit()`
 * flushes, fsyncs and renames it into place, `abort()` deletes it. Same temp naming as `stageFile`.
 */
export async function stageStream(path: string): Promise<StagedStream> {
  const tmp = await tempBeside(path);
  const fh = await open(tmp, 'w');
  let parts: Uint8Array[] = [];
  let held = 0;
  let closed = false;
  let done = false;
  const flush = async () => {
    if (!held) return;
    const data = parts.length === 1 ? parts[0]! : Buffer.concat(parts, held);
    parts = [];
    held = 0;
    await fh.write(data);
  };
  const close = async () => {
    if (closed) return;
    closed = true;
    await fh.close();
  };
  return {
    async write(chunk) {
      if (closed) throw new Error(`stageStream ${path}: write after commit or abort`);
      const b = typeof chunk === 'string' ? Buffer.from(chunk, 'utf8') : chunk;
      parts.push(b);
      held += b.length;
      if (held >= STREAM_BUFFER) await flush();
    },
    async commit() {
      try {
        await flush();
        await fh.sync();
        await close();
        await rename(tmp, path);
        done = true;
      } catch (e) {
        await close().catch(() => {});
        await rm(tmp, { force: true });
        throw e;
      }
    },
    async abort() {
      if (done) return;
      await close().catch(() => {});
      await rm(tmp, { force: true });
    },
  };
}

async function tempBeside(path: string): Promise<string> {
  const dir = dirname(resolve(path));
  await mkdir(dir, { recursive: true });
  return join(dir, `.${basename(path)}.${process.pid}.${Date.now()}.${Math.random().toString(36).slice(2)}.tmp`);
}

export interface StagedFolder {
  /** The staging folder to write into; it sits beside the target so the final rename stays on one device. */
  readonly path: string;
  /** Move the staged outputs into place. Previous outputs are replaced only now, file by file via rename. */
  commit(): Promise<void>;
  /** Remove the staging folder; the target is untouched. */
  abort(): Promise<void>;
}

/**
 * Stage outputs for `target`. Nothing appears in `target` until `commit()`; a crash before that leaves
 * only a `.lamina-stage-*` folder beside it, which the next run removes.
 * With `keep`, named files already in `target` (such as review.json) are copied into the stage first
 * so the writer can read and merge them.
 */
export async function stageFolder(target: string, options: { keep?: string[] } = {}): Promise<StagedFolder> {
  const abs = resolve(target);
  const parent = dirname(abs);
  await mkdir(parent, { recursive: true });
  for (const name of await readdir(parent)) {
    if (name.startsWith(`.lamina-stage-${basename(abs)}-`)) await rm(join(parent, name), { recursive: true, force: true });
    // A run killed between the two renames of commit() left the previous outputs as a backup: restore them.
    if (name.startsWith(`${basename(abs)}.lamina-old-`)) {
      if (!(await exists(abs))) await rename(join(parent, name), abs);
      else await rm(join(parent, name), { recursive: true, force: true });
    }
  }
  const path = await mkdtemp(join(parent, `.lamina-stage-${basename(abs)}-`));
  for (const name of options.keep ?? []) {
    const from = join(abs, name);
    if (await exists(from)) await cp(from, join(path, name), { recursive: true });
  }
  return {
    path,
    async commit() {
      if (!(await exists(abs))) {
        await rename(path, abs);
        return;
      }
      // Swap whole folders: old -> backup, stage -> target, then drop the backup.
      const backup = `${abs}.lamina-old-${process.pid}`;
      await rm(backup, { recursive: true, force: true });
      await rename(abs, backup);
      try {
        await rename(path, abs);
      } catch (e) {
        await rename(backup, abs);
        throw e;
      }
      await rm(backup, { recursive: true, force: true });
    },
    async abort() {
      await rm(path, { recursive: true, force: true });
    },
  };
}

async function exists(p: string): Promise<boolean> {
  try {
    await stat(p);
    return true;
  } catch {
    return false;
  }
}
