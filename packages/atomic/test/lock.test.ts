import { spawn } from 'node:child_process';
import { existsSync, mkdtempSync, readdirSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { lockFolder } from '../src';

const dir = mkdtempSync(join(tmpdir(), 'lamina-lock-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));

describe('lockFolder', () => {
  it('one holder at a time: a second is refused naming the folder and the holder, or waits for the release', async () => {
    const out = join(dir, 'a', 'out');
    const a = await lockFolder(out, { what: 'lamina process' });
    expect(readdirSync(join(dir, 'a'))).toEqual(['.lamina-write-lock-out']);
    await expect(lockFolder(out, { shown: 'out' })).rejects.toThrow(new RegExp(`^out: expected no other writer, found lamina process \\(process ${process.pid}, since .*\\) working on it; wait for it to finish or use another output folder$`));
    // the run lock is another file
    const run = await lockFolder(out, { kind: 'run' });
    const waiting = lockFolder(out, { waitMs: 5000 });
    setTimeout(() => void a.release(), 100);
    const b = await waiting;
    await b.release();
    await run.release();
    await a.release();
    expect(readdirSync(join(dir, 'a'))).toEqual([]);
  });

  it('takes over the lock of a process that is gone', async () => {
    const out = join(dir, 'b', 'out');
    const child = spawn(process.execPath, ['-e', 'process.exit(0)']);
    const pid = child.pid!;
    await new Promise((r) => child.on('exit', r));
    await lockFolder(out).then((l) => l.release()); // makes the folder's parent
    writeFileSync(join(dir, 'b', '.lamina-write-lock-out'), JSON.stringify({ pid, what: 'lamina process', since: '2026-12-01T00:00:00Z' }));
    const l = await lockFolder(out);
    await l.release();
    expect(existsSync(l.path)).toBe(false);
  });
});
