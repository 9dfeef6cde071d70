// Processing onto a full filesystem (issue 16): a small tmpfs, mounted by the test (needs root; skipped
// with a message otherwise). A run that cannot fit is refused before pass 1 from the free space; one that
// fills the disk while it writes ends with one input-error line naming the output folder, and the previous
// outputs and review.json are byte for byte as they were, with no stage folder left.
import { execFileSync } from 'node:child_process';
import { createHash } from 'node:crypto';
import { mkdirSync, mkdtempSync, readFileSync, readdirSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join, resolve } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { runProcess } from '@lamina/pipeline';
import { simulateScenarioFile } from '@lamina/simulate';

const repo = resolve(import.meta.dirname, '..');
const work = mkdtempSync(join(tmpdir(), 'lamina-full-disk-'));
const disk = join(work, 'disk');
let mounted = false;
let why = '';

function tree(dir: string): Record<string, string> {
  const out: Record<string, string> = {};
  for (const e of readdirSync(dir, { recursive: true, withFileTypes: true })) {
    if (e.isFile()) out[join(e.parentPath, e.name).slice(dir.length + 1)] = createHash('sha256').update(readFileSync(join(e.parentPath, e.name))).digest('hex');
  }
  return out;
}

beforeAll(async () => {
  await simulateScenarioFile(join(repo, 'test/fixtures/fuzz-scenario.json'), join(work, 'site'));
  mkdirSync(disk);
  if (process.getuid?.() !== 0) why = 'not root';
  else {
    try {
      // room for one run's outputs (about 270 KB) and its stage, not for a second set beside them
      execFileSync('mount', ['-t', 'tmpfs', '-o', 'size=420k', 'tmpfs', disk], { stdio: 'pipe' });
      mounted = true;
    } catch (e) {
      why = `mount failed: ${(e as Error).message.split('\n')[0]}`;
    }
  }
  if (!mounted) console.log(`full-disk test skipped: ${why}`);
});

afterAll(() => {
  if (mounted) execFileSync('umount', [disk]);
  rmSync(work, { recursive: true, force: true });
});

describe('a full filesystem', () => {
  it('is refused before pass 1, or ends in one clear line with the previous outputs and review.json intact', async (ctx) => {
    if (!mounted) ctx.skip();
    const site = join(work, 'site');
    const out = join(disk, 'out');
    // the first run fits (its estimate, an upper bound, would not: it is taken as unlimited)
    await runProcess(site, out, { threads: 0, freeBytes: Infinity });
    const run = JSON.parse(readFileSync(join(out, 'run.json'), 'utf8')) as { identity: unknown };
    writeFileSync(join(out, 'review.json'), JSON.stringify({ version: 1, site: run.identity, decisions: [] }));
    const before = tree(out);

    // the estimate from the headers does not fit what is left: refused at once, nothing touched
    await expect(runProcess(site, out, { threads: 0 })).rejects.toThrow(/out: expected room for the run's files \(up to .*\), found .* free on its filesystem/);
    expect(tree(out)).toEqual(before);

    // the disk fills while the run writes (the free space is taken as unlimited before pass 1)
    let message = '';
    await runProcess(site, out, { threads: 0, freeBytes: Infinity }).catch((e: Error) => {
      expect(e.name).toBe('InputError');
      message = e.message;
    });
    expect(message).toMatch(/out: expected room for the run's files, found its filesystem full while writing them \(ENOSPC.*\); the previous outputs are kept: free space or write elsewhere$/);
    expect(message).not.toContain('\n');
    expect(tree(out)).toEqual(before);
    expect(readdirSync(disk)).toEqual(['out']);
  });
});
