// Tiles as a job array on real batch engines (issue 17): a tiny invented site is fitted once
// (`lamina velocity`), tiled with that model and job files (`lamina tiles --velocity --emit`), and the
// emitted files are run by GNU parallel and by a single-node Slurm on localhost (Debian's slurm-wlm and
// munge; the daemons are started and stopped by this test, as root). Every tile must be processed with
// the survey's one model, and a second submission must skip the finished tiles. Then `lamina merge`
// joins the tiles and the result is compared with the untiled `lamina process` of the site with the same
// model: equal cell for cell, though every line is cut into pieces, and every anomaly, utility and target
// the same, on tile edges too (what is compared and why: test/merge-compare.ts).
import { spawnSync } from 'node:child_process';
import { existsSync, mkdirSync, readFileSync, writeFileSync } from 'node:fs';
import { mkdtemp } from 'node:fs/promises';
import { hostname, tmpdir, cpus } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { FOLDER_FILES, checkFolder } from '@lamina/contracts';
import { compareWithUntiled, expectMosaicOfCores } from './merge-compare';
import { env, root, lamina, buildCli } from './built-cli';


let work: string;

// 3 m tiles with 1 m of overlap on the 6 x 4 m site: every line is cut into pieces (two or three), and
// the pipe and the post lie on a tile edge; the merge must still equal the untiled run cell for cell and
// object for object.
async function makeTiles(name: string): Promise<string> {
  const dir = join(work, name);
  await lamina('tiles', join(work, 'site'), '--size', '3', '--overlap', '1', '--velocity', join(work, 'survey', 'velocity.json'), '--emit', 'slurm,parallel,k8s', '--threads', '1', '--out', dir);
  return dir;
}

/** `lamina merge` of the processed tiles: a complete output folder, its mosaic made of the tiles' cores, and it against the untiled run. */
async function expectMerged(dir: string): Promise<void> {
  const out = `${dir}-merged`;
  const r = await lamina('merge', join(dir, 'tiles.json'), '--out', out, '-q');
  expect(r.stdout).toMatch(/tiles merged/);
  expect(await checkFolder(out)).toEqual(FOLDER_FILES.map(([f]) => f));
  expect(expectMosaicOfCores(dir, out)).toBeGreaterThan(1);
  // every anomaly, utility and target once, on core edges and at the four-tile corner too (test/merge-compare.ts)
  const c = compareWithUntiled(out, join(work, 'untiled'), dir);
  process.stdout.write(`merged vs untiled: ${c.equalCells} cells equal; ${c.anomalies} anomalies matched (${c.objects} utilities and targets, ${c.atEdges} within a cell of a core edge)\n`);
  expect(c.equalCells).toBeGreaterThan(0);
  expect(c.objects).toBeGreaterThan(0);
  expect(c.atEdges).toBeGreaterThan(0);
  // the objects and their evidence are the untiled run's, byte for byte (same numbering, same fits named)
  for (const f of ['anomalies.geojson', 'interfaces.geojson', 'forecast.geojson', 'targets.csv']) expect(readFileSync(join(out, f), 'utf8'), f).toBe(readFileSync(join(work, 'untiled', f), 'utf8'));
  // `lamina export` works on the merged folder unchanged
  expect((await lamina('export', out)).stdout).toMatch(/targets/);
}

/** Each tile's output holds a finished run whose depth model is the survey's. */
function expectTilesDone(dir: string): void {
  const m = JSON.parse(readFileSync(join(dir, 'tiles.json'), 'utf8'));
  const survey = JSON.parse(readFileSync(join(work, 'survey', 'velocity.json'), 'utf8'));
  const windows = JSON.parse(readFileSync(join(work, 'survey', 'windows.json'), 'utf8')).windows;
  expect(m.tiles.length).toBeGreaterThan(1);
  for (const t of m.tiles) {
    const out = join(dir, `${t.dir}-out`);
    expect(existsSync(join(out, 'run.json')), t.id).toBe(true);
    const v = JSON.parse(readFileSync(join(out, 'velocity.json'), 'utf8'));
    expect(v.model).toEqual(survey.model);
    expect(v.site.velocityMPerNs).toBe(survey.site.velocityMPerNs);
    expect(v.site.note).toMatch(/the survey's model/);
    // the survey's depth windows, exactly (not the tile's own, cut from its shallowest record)
    const slices = JSON.parse(readFileSync(join(out, 'slices.json'), 'utf8')).slices;
    expect(slices.map((w: { topM: number; bottomM: number }) => [w.topM, w.bottomM])).toEqual(windows.map((w: { topM: number; bottomM: number }) => [w.topM, w.bottomM]));
  }
}

beforeAll(async () => {
  work = await mkdtemp(join(tmpdir(), 'lamina-batch-'));
  buildCli();
  await lamina('simulate', join(root, 'test/fixtures/tiny-scenario.json'), '--out', join(work, 'site'));
  await lamina('velocity', join(work, 'site'), '--out', join(work, 'survey'));
  await lamina('process', join(work, 'site'), '--velocity', join(work, 'survey', 'velocity.json'), '--out', join(work, 'untiled'));
}, 600_000);

describe('tiles on GNU parallel (Debian parallel)', () => {
  it('run-parallel.sh processes every tile with the one model; run again, every tile is skipped; merged, it matches the untiled run', async () => {
    const dir = await makeTiles('tiles-parallel');
    const first = spawnSync('bash', [join(dir, 'run-parallel.sh')], { env: { ...env, JOBS: '2' }, encoding: 'utf8' });
    expect(first.status, first.stderr).toBe(0);
    expectTilesDone(dir);
    const again = spawnSync('bash', [join(dir, 'run-parallel.sh')], { env: { ...env, JOBS: '2' }, encoding: 'utf8' });
    expect(again.status).toBe(0);
    const log = readFileSync(join(dir, 'parallel.log'), 'utf8').trim().split('\n').slice(1);
    expect(log.every((l) => l.split('\t')[6] === '0')).toBe(true); // Exitval column of the joblog
    // the skip message of every tile on the second run
    const m = JSON.parse(readFileSync(join(dir, 'tiles.json'), 'utf8'));
    for (let i = 0; i < m.tiles.length; i++) {
      const r = await lamina('process-tile', join(dir, 'tiles.json'), '--index', String(i));
      expect(r.stdout).toMatch(/is finished .*: skipped/);
    }
    await expectMerged(dir);
  }, 600_000);
});

// Slurm needs root (its daemons and munge run as root/munge here) and the Debian packages.
const slurmOk = process.getuid?.() === 0 && existsSync('/usr/sbin/slurmctld') && existsSync('/usr/sbin/munged');

describe.skipIf(!slurmOk)('tiles on a single-node Slurm (Debian slurm-wlm 22.05, munge)', () => {
  const pids: string[] = ['/run/slurmctld.pid', '/run/slurmd.pid', '/run/munge/munged.pid'];
  const stop = () => {
    for (const f of pids) {
      if (!existsSync(f)) continue;
      spawnSync('kill', [readFileSync(f, 'utf8').trim()]);
    }
  };

  beforeAll(async () => {
    stop();
    // munge: the key made at install, the daemon as its own user
    mkdirSync('/run/munge', { recursive: true });
    spawnSync('chown', ['munge:munge', '/run/munge']);
    expect(spawnSync('su', ['-s', '/bin/sh', 'munge', '-c', '/usr/sbin/munged']).status).toBe(0);
    const host = hostname().split('.')[0]!;
    for (const d of ['/var/spool/slurmctld', '/var/spool/slurmd', '/etc/slurm']) mkdirSync(d, { recursive: true });
    writeFileSync(
      '/etc/slurm/slurm.conf',
      [
        'ClusterName=local', `SlurmctldHost=${host}`, 'SlurmUser=root', 'AuthType=auth/munge', 'ProctrackType=proctrack/linuxproc',
        'TaskPlugin=task/none', 'SelectType=select/cons_tres', 'SelectTypeParameters=CR_Core_Memory', 'ReturnToService=2',
        'StateSaveLocation=/var/spool/slurmctld', 'SlurmdSpoolDir=/var/spool/slurmd', 'SlurmctldPidFile=/run/slurmctld.pid',
        'SlurmdPidFile=/run/slurmd.pid', 'JobAcctGatherType=jobacct_gather/none', 'MpiDefault=none',
        `NodeName=${host} CPUs=${cpus().length} RealMemory=8000 State=UNKNOWN`, `PartitionName=main Nodes=${host} Default=YES MaxTime=INFINITE State=UP`, '',
      ].join('\n'),
    );
    expect(spawnSync('/usr/sbin/slurmctld').status).toBe(0);
    expect(spawnSync('/usr/sbin/slurmd').status).toBe(0);
    for (let i = 0; i < 60; i++) {
      const s = spawnSync('sinfo', ['-h', '-o', '%T'], { encoding: 'utf8' });
      if (/idle|mixed/.test(s.stdout)) return;
      await new Promise((r) => setTimeout(r, 500));
    }
    throw new Error('the Slurm node did not come up idle within 30 s');
  }, 120_000);

  afterAll(() => stop());

  it('sbatch --wait run-slurm.sbatch: one array task per tile, each with the one model; resubmitted, every task skips; merged, it matches the untiled run', async () => {
    const dir = await makeTiles('tiles-slurm');
    const first = spawnSync('sbatch', ['--wait', 'run-slurm.sbatch'], { cwd: dir, env, encoding: 'utf8', timeout: 900_000 });
    expect(first.status, `${first.stdout}\n${first.stderr}`).toBe(0);
    expectTilesDone(dir);
    const again = spawnSync('sbatch', ['--wait', 'run-slurm.sbatch'], { cwd: dir, env, encoding: 'utf8', timeout: 300_000 });
    expect(again.status).toBe(0);
    const job = /Submitted batch job (\d+)/.exec(again.stdout)![1];
    const m = JSON.parse(readFileSync(join(dir, 'tiles.json'), 'utf8'));
    for (let i = 0; i < m.tiles.length; i++) expect(readFileSync(join(dir, `slurm-${job}_${i}.out`), 'utf8')).toMatch(/is finished .*: skipped/);
    await expectMerged(dir);
  }, 1_200_000);
});
