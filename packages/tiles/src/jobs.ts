/**
 * Job files for batch engines, written beside tiles.json by `lamina tiles --emit`: one array task per
 * tile, each running `lamina process-tile tiles.json` (the task's index comes from the engine's
 * environment, `arrayIndexFromEnv`). A finished tile is skipped when the array is submitted again, and a
 * failed one is retried alone (by the engine's own retry: Slurm requeue, the Job's per-index backoff,
 * parallel's --retries).
 */
import type { TilesManifest } from './manifest';

export const ENGINES = ['slurm', 'k8s', 'parallel'] as const;
export type Engine = (typeof ENGINES)[number];

/** File each engine's job goes to, beside tiles.json. */
export const JOB_FILES: Record<Engine, string> = { slurm: 'run-slurm.sbatch', k8s: 'job-k8s.yaml', parallel: 'run-parallel.sh' };

/** Environment variables that carry an array task's index, in the order they are tried. */
export const ARRAY_INDEX_VARIABLES = ['SLURM_ARRAY_TASK_ID', 'JOB_COMPLETION_INDEX', 'AWS_BATCH_JOB_ARRAY_INDEX'] as const;

/** The array index of this task from the engine's environment: the variable and its value; undefined when none is set. */
export function arrayIndexFromEnv(env: NodeJS.ProcessEnv = process.env): { variable: string; index: number } | undefined {
  for (const variable of ARRAY_INDEX_VARIABLES) {
    const v = env[variable];
    if (v === undefined || v === '') continue;
    const index = Number(v);
    if (!Number.isInteger(index) || index < 0) throw new Error(`${variable} is ${JSON.stringify(v)}, not an array index`);
    return { variable, index };
  }
  return undefined;
}

export interface JobOptions {
  /** How a task starts Lamina (a command line; quoted as needed). @default 'lamina' */
  lamina?: string;
  /** Worker threads of each tile's `lamina process`. @default 2 */
  threads?: number;
  /** The band budget of `lamina process` (`--band-memory`), MiB. @default 384 */
  bandMemoryMiB?: number;
  /** Container image of the Kubernetes Job (the cluster must be able to pull it). @default 'lamina:latest' */
  image?: string;
  /** Retries of a failed tile. @default 2 */
  retries?: number;
}

/**
 * Memory a tile's `lamina process` is given, MiB: the band budget, a base for the process and its
 * outputs, and a share per worker thread (each holds one line and its f-k work arrays). From the scale
 * bench's peaks (835 MB at the default 384 MiB budget with 2 threads, issue 15's note), rounded up.
 */
export function tileMemoryMiB(bandMemoryMiB: number, threads: number): number {
  return Math.ceil((bandMemoryMiB + 384 + 192 * Math.max(1, threads)) / 64) * 64;
}

const shq = (s: string) => (/^[\w@%+=:,./-]+$/.test(s) ? s : `'${s.replace(/'/g, `'\\''`)}'`);

/** The text of one engine's job file for the tiles of `manifest` (run from the folder of tiles.json). */
export function jobFile(engine: Engine, manifest: TilesManifest, options: JobOptions = {}): string {
  const n = manifest.tiles.length;
  if (n === 0) throw new Error('tiles.json has no tiles: nothing to run');
  const lamina = options.lamina ?? 'lamina';
  const threads = options.threads ?? 2;
  const band = options.bandMemoryMiB ?? 384;
  const mem = tileMemoryMiB(band, threads);
  const retries = options.retries ?? 2;
  const name = `lamina-${manifest.site.name}`.replace(/[^A-Za-z0-9-]+/g, '-').toLowerCase().slice(0, 50).replace(/-+$/, '');
  const task = `process-tile tiles.json --threads ${threads} --band-memory ${band}`;
  switch (engine) {
    case 'slurm':
      return [
        '#!/bin/bash',
        `# One array task per tile of ${manifest.site.name} (${n} tiles), written by lamina tiles --emit slurm.`,
        '# Submit from this folder: sbatch run-slurm.sbatch (add --wait to block). A finished tile is skipped',
        '# when the array is submitted again; a failed task is requeued alone by Slurm.',
        `#SBATCH --job-name=${name}`,
        `#SBATCH --array=0-${n - 1}`,
        `#SBATCH --cpus-per-task=${threads}`,
        `#SBATCH --mem=${mem}M`,
        '#SBATCH --requeue',
        '#SBATCH --output=slurm-%A_%a.out',
        'set -euo pipefail',
        'cd "${SLURM_SUBMIT_DIR:-.}"',
        `exec ${lamina} ${task}`,
        '',
      ].join('\n');
    case 'parallel':
      return [
        '#!/bin/bash',
        `# Every tile of ${manifest.site.name} (${n} tiles) with GNU parallel on this machine, written by lamina tiles`,
        `# --emit parallel. JOBS tiles at a time (default: cores / ${threads}); a failed tile is retried alone`,
        `# (${retries} times); a finished one is skipped when this script is run again. Log: parallel.log.`,
        'set -euo pipefail',
        'cd "$(dirname "$0")"',
        `JOBS="\${JOBS:-$(( ( $(nproc) + ${threads - 1} ) / ${threads} ))}"`,
        `seq 0 ${n - 1} | parallel --will-cite --jobs "$JOBS" --retries ${retries + 1} --halt never --joblog parallel.log ${shq(`${lamina} ${task} --index {}`)}`,
        '',
      ].join('\n');
    case 'k8s':
      return [
        `# An indexed Job: one pod per tile of ${manifest.site.name} (${n} tiles), written by lamina tiles --emit k8s.`,
        '# Not tried on a live cluster here. The pods must see this folder (and the original SEG-Y files) at',
        '# /survey: replace the hostPath volume by your storage. JOB_COMPLETION_INDEX gives each pod its tile;',
        '# backoffLimitPerIndex retries a failed tile alone (Kubernetes 1.29+).',
        'apiVersion: batch/v1',
        'kind: Job',
        'metadata:',
        `  name: ${name}`,
        'spec:',
        '  completionMode: Indexed',
        `  completions: ${n}`,
        `  parallelism: ${Math.min(n, 8)}`,
        `  backoffLimitPerIndex: ${retries}`,
        `  maxFailedIndexes: ${n}`,
        '  template:',
        '    spec:',
        '      restartPolicy: Never',
        '      containers:',
        '        - name: tile',
        `          image: ${options.image ?? 'lamina:latest'}`,
        '          workingDir: /survey',
        `          command: [${[...lamina.split(/\s+/), ...task.split(' ')].map((a) => JSON.stringify(a)).join(', ')}]`,
        '          resources:',
        `            requests: { cpu: "${threads}", memory: "${mem}Mi" }`,
        `            limits: { memory: "${mem}Mi" }`,
        '          volumeMounts:',
        '            - { name: survey, mountPath: /survey }',
        '      volumes:',
        '        - name: survey',
        '          hostPath: { path: /survey, type: Directory }',
        '',
      ].join('\n');
  }
}
