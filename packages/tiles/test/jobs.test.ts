// Job files of `lamina tiles --emit` and the array index of a task (issue 17, part 2).
import { execFileSync } from 'node:child_process';
import { describe, expect, it } from 'vitest';
import { Job } from 'kubernetes-models/batch/v1/Job';
import { arrayIndexFromEnv, jobFile, tileMemoryMiB, type TilesManifest } from '../src';

const manifest = {
  version: 1,
  site: { name: 'Corridor A', dir: '/x', crs: 'EPSG:32617', units: 'm', metresPerUnit: 1 },
  sizeM: 50, overlapM: 5, planMarginM: 30, sizeUnits: 50, traces: 100,
  tiles: Array.from({ length: 7 }, (_, i) => ({ id: `tile_${i}_0`, dir: `tile_${i}_0`, col: i, row: 0, core: [0, 0, 1, 1], bounds: [0, 0, 1, 1], traces: 10, lines: [], planFeatures: 0, command: '' })),
} as unknown as TilesManifest;

describe('array index from the engine', () => {
  it('reads Slurm, Kubernetes indexed Jobs and AWS Batch, in that order; refuses a value that is not an index', () => {
    expect(arrayIndexFromEnv({ SLURM_ARRAY_TASK_ID: '3' })).toEqual({ variable: 'SLURM_ARRAY_TASK_ID', index: 3 });
    expect(arrayIndexFromEnv({ JOB_COMPLETION_INDEX: '0' })).toEqual({ variable: 'JOB_COMPLETION_INDEX', index: 0 });
    expect(arrayIndexFromEnv({ AWS_BATCH_JOB_ARRAY_INDEX: '12' })).toEqual({ variable: 'AWS_BATCH_JOB_ARRAY_INDEX', index: 12 });
    expect(arrayIndexFromEnv({ SLURM_ARRAY_TASK_ID: '1', AWS_BATCH_JOB_ARRAY_INDEX: '2' })!.index).toBe(1);
    expect(arrayIndexFromEnv({})).toBeUndefined();
    expect(() => arrayIndexFromEnv({ SLURM_ARRAY_TASK_ID: 'x' })).toThrow(/not an array index/);
  });
});

describe('job files', () => {
  it('slurm: an array of one task per tile with the threads and memory of a tile', () => {
    const s = jobFile('slurm', manifest, { lamina: 'node /opt/lamina.mjs', threads: 2, bandMemoryMiB: 384 });
    expect(s).toContain('#SBATCH --array=0-6');
    expect(s).toContain('#SBATCH --cpus-per-task=2');
    expect(s).toContain(`#SBATCH --mem=${tileMemoryMiB(384, 2)}M`);
    expect(s).toContain('exec node /opt/lamina.mjs process-tile tiles.json --threads 2 --band-memory 384');
    expect(s).toMatch(/#SBATCH --job-name=lamina-corridor-a\n/);
    execFileSync('bash', ['-n'], { input: s }); // bash parses it
  });

  it('parallel: a script bash parses, one job per index, retries', () => {
    const s = jobFile('parallel', manifest, { lamina: 'node /opt/lamina.mjs' });
    expect(s).toContain('seq 0 6 | parallel');
    expect(s).toContain("'node /opt/lamina.mjs process-tile tiles.json --threads 2 --band-memory 384 --index {}'");
    expect(s).toContain('--retries 3');
    execFileSync('bash', ['-n'], { input: s });
  });

  it('k8s: an indexed Job manifest (read back with PyYAML, Debian python3-yaml), one completion per tile', () => {
    const s = jobFile('k8s', manifest, { lamina: 'lamina', threads: 4 });
    const j = JSON.parse(execFileSync('/usr/bin/python3', ['-c', 'import sys, yaml, json; print(json.dumps(yaml.safe_load(sys.stdin)))'], { input: s, encoding: 'utf8' }));
    expect(j).toMatchObject({ apiVersion: 'batch/v1', kind: 'Job', spec: { completionMode: 'Indexed', completions: 7, backoffLimitPerIndex: 2 } });
    const c = j.spec.template.spec.containers[0];
    expect(c.command).toEqual(['lamina', 'process-tile', 'tiles.json', '--threads', '4', '--band-memory', '384']);
    expect(c.resources.requests).toEqual({ cpu: '4', memory: `${tileMemoryMiB(384, 4)}Mi` });
    expect(j.spec.template.spec.restartPolicy).toBe('Never'); // required for backoffLimitPerIndex
    // the Job schema of the Kubernetes API (JSON schemas generated from its OpenAPI spec, npm
    // kubernetes-models 5.1.0): no cluster needed; the manifest is untested on a live cluster
    expect(() => new Job(j).validate()).not.toThrow();
    expect(() => new Job({ ...j, spec: { ...j.spec, completions: 'seven' } }).validate()).toThrow(/completions must be integer/);
  });
});
