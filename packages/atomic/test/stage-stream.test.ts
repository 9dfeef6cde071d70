import { describe, expect, it } from 'vitest';
import { mkdtemp, readFile, readdir, writeFile } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { stageStream } from '../src';

describe('stageStream', () => {
  it('shows the old file until commit, then exactly the chunks written, with no temp left', async () => {
    const dir = await mkdtemp(join(tmpdir(), 'atomic-'));
    const path = join(dir, 'big.txt');
    await writeFile(path, 'old');
    const s = await stageStream(path);
    const want: Buffer[] = [];
    for (let i = 0; i < 5000; i++) {
      const chunk = i % 3 ? `line ${i} ${'x'.repeat(i % 97)} é\n` : Buffer.from([i & 255, 0, 255]);
      want.push(Buffer.from(chunk));
      await s.write(chunk);
    }
    expect(await readFile(path, 'utf8')).toBe('old');
    await s.commit();
    expect((await readFile(path)).equals(Buffer.concat(want))).toBe(true);
    expect(await readdir(dir)).toEqual(['big.txt']);
    await s.abort(); // after commit: nothing to undo
    expect(await readdir(dir)).toEqual(['big.txt']);
  });

  it('abort deletes the temp file and leaves the target as it was', async () => {
    const dir = await mkdtemp(join(tmpdir(), 'atomic-'));
    const s = await stageStream(join(dir, 'out.csv'));
    await s.write('a,b\r\n'.repeat(50000));
    expect((await readdir(dir)).filter((f) => f.endsWith('.tmp'))).toHaveLength(1);
    await s.abort();
    expect(await readdir(dir)).toEqual([]);
    await expect(s.write('more')).rejects.toThrow(/write after commit or abort/);
  });
});
