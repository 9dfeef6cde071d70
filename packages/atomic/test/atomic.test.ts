import { describe, expect, it } from 'vitest';
import { mkdtemp, readFile, readdir, writeFile, mkdir } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { stageFolder, writeFileAtomic } from '../src';

describe('atomic output', () => {
  it('writes a file with no temporary left beside it', async () => {
    const dir = await mkdtemp(join(tmpdir(), 'atomic-'));
    await writeFileAtomic(join(dir, 'a.json'), '{"a":1}');
    await writeFileAtomic(join(dir, 'a.json'), '{"a":2}');
    expect(await readFile(join(dir, 'a.json'), 'utf8')).toBe('{"a":2}');
    expect(await readdir(dir)).toEqual(['a.json']);
  });

  it('shows nothing in the target until commit, and keeps previous outputs on abort', async () => {
    const root = await mkdtemp(join(tmpdir(), 'atomic-'));
    const target = join(root, 'out');
    await mkdir(target);
    await writeFile(join(target, 'old.txt'), 'old');
    await writeFile(join(target, 'review.json'), '{"kept":true}');
    const stage = await stageFolder(target, { keep: ['review.json'] });
    expect(await readFile(join(stage.path, 'review.json'), 'utf8')).toBe('{"kept":true}');
    await writeFile(join(stage.path, 'new.txt'), 'new');
    expect((await readdir(target)).sort()).toEqual(['old.txt', 'review.json']);
    await stage.abort();
    expect((await readdir(target)).sort()).toEqual(['old.txt', 'review.json']);
    expect(await readdir(root)).toEqual(['out']);

    const again = await stageFolder(target, { keep: ['review.json'] });
    await writeFile(join(again.path, 'new.txt'), 'new');
    await again.commit();
    expect((await readdir(target)).sort()).toEqual(['new.txt', 'review.json']);
    expect(await readdir(root)).toEqual(['out']);
  });

  it('restores the previous outputs when a run died between the two renames', async () => {
    const root = await mkdtemp(join(tmpdir(), 'atomic-'));
    await mkdir(join(root, 'out.lamina-old-12345'));
    await writeFile(join(root, 'out.lamina-old-12345', 'slices.tif'), 'x');
    const stage = await stageFolder(join(root, 'out'));
    await stage.abort();
    expect(await readdir(join(root, 'out'))).toEqual(['slices.tif']);
  });
});
