// How far the field bench's pooled figures move with the choice of scenes alone (a bootstrap over scenes):
// with 24 scenes a pooled precision moves by about +-8 to 15 points, so a gap between two populations or
// two runs is a result only where it is wider than that. Reporting only: the figures themselves are
// @lamina/scoring's frozen definitions, pooled by `pool` (bench/field-lib.ts).
import { mulberry32 } from '../packages/random/src/index';
import { pool, type FieldRow, type Pooled } from './field-lib';

/** The pooled figures that get an interval. */
export const INTERVAL_KEYS = ['precisionByCount', 'utilityRecall', 'piecesMean', 'airTargetShare', 'airFlagRecall', 'realFlaggedShare', 'kAbsErrorMean'] as const;
export type IntervalKey = (typeof INTERVAL_KEYS)[number];

export interface IntervalOptions {
  /** Central share of the bootstrap values. @default 0.9 */
  level?: number;
  /** Populations drawn. @default 2000 */
  draws?: number;
  /** Seed of the draws (the same rows give the same intervals). @default 1 */
  seed?: number;
}

type Figures = Record<IntervalKey, number | null>;
type Intervals = Record<IntervalKey, [number, number] | null>;

/** The figures of one pooled row (null where the pool has nothing to divide by). */
const figuresOf = (p: Pooled): Figures => Object.fromEntries(INTERVAL_KEYS.map((k) => [k, p[k]])) as Figures;

/** The central `level` share of `values` (nulls left out), or null when none is left. */
function central(values: (number | null)[], level: number): [number, number] | null {
  const v = values.filter((x): x is number => x !== null && Number.isFinite(x)).sort((a, b) => a - b);
  if (!v.length) return null;
  const tail = (1 - level) / 2;
  return [v[Math.floor(tail * (v.length - 1))]!, v[Math.ceil((1 - tail) * (v.length - 1))]!];
}

/**
 * The bootstrap over `n` scenes: `draws` populations of n scenes' indices drawn with replacement (a fixed
 * seed), `figures` of each, and the central `level` share of every figure (none when n is 0).
 */
function bootstrap(n: number, figures: (idx: number[]) => Figures, options: IntervalOptions): Intervals {
  const values = Object.fromEntries(INTERVAL_KEYS.map((k) => [k, [] as (number | null)[]])) as Record<IntervalKey, (number | null)[]>;
  if (n > 0) {
    const next = mulberry32(options.seed ?? 1);
    for (let d = 0; d < (options.draws ?? 2000); d++) {
      const f = figures(Array.from({ length: n }, () => Math.floor(next() * n)));
      for (const k of INTERVAL_KEYS) values[k].push(f[k]);
    }
  }
  return Object.fromEntries(INTERVAL_KEYS.map((k) => [k, central(values[k], options.level ?? 0.9)])) as Intervals;
}

/**
 * Bootstrap intervals of the pooled figures over the scenes of `rows` (failed scenes left out): `draws`
 * populations of as many scenes drawn with replacement, each pooled by `pool`, and the central `level`
 * share of each figure.
 */
export function poolIntervals(rows: FieldRow[], options: IntervalOptions = {}): Intervals {
  const ok = rows.filter((r) => !r.error);
  return bootstrap(ok.length, (idx) => figuresOf(pool('draw', idx.map((i) => ok[i]!))), options);
}

/**
 * Two runs on the same scenes (rows matched by name; scenes failed in either are left out): each figure's
 * difference b - a of the pooled rows, and its bootstrap interval with every draw taking the same scenes
 * from both runs (far tighter than the two runs' own intervals, since most of a scene's figure is the scene).
 */
export function pairedIntervals(a: FieldRow[], b: FieldRow[], options: IntervalOptions = {}): { scenes: number; diff: Record<IntervalKey, { diff: number | null; interval: [number, number] | null }> } {
  const byName = new Map(b.filter((r) => !r.error).map((r) => [r.name, r]));
  const pairs = a.filter((r) => !r.error && byName.has(r.name)).map((r) => [r, byName.get(r.name)!] as const);
  /** The figures' differences b - a of the pairs `idx` pooled. */
  const deltas = (idx: number[]): Figures => {
    const fa = figuresOf(pool('a', idx.map((i) => pairs[i]![0]))), fb = figuresOf(pool('b', idx.map((i) => pairs[i]![1])));
    return Object.fromEntries(INTERVAL_KEYS.map((k) => [k, fa[k] === null || fb[k] === null ? null : fb[k] - fa[k]])) as Figures;
  };
  const all = pairs.length ? deltas(pairs.map((_, i) => i)) : null;
  const intervals = bootstrap(pairs.length, deltas, options);
  const diff = Object.fromEntries(INTERVAL_KEYS.map((k) => [k, { diff: all ? all[k] : null, interval: intervals[k] }]));
  return { scenes: pairs.length, diff: diff as Record<IntervalKey, { diff: number | null; interval: [number, number] | null }> };
}

const LABELS: Record<IntervalKey, [string, number]> = {
  precisionByCount: ['prec#', 100],
  utilityRecall: ['util', 100],
  piecesMean: ['pcs', 1],
  airTargetShare: ['air', 100],
  airFlagRecall: ['airflag', 100],
  realFlaggedShare: ['realflag', 100],
  kAbsErrorMean: ['K|err|', 100],
};

/** One line: each figure's interval (percentages as the table prints them). */
export function intervalLine(name: string, iv: Intervals): string {
  const cell = (k: IntervalKey) => {
    const v = iv[k], [label, s] = LABELS[k];
    return `${label} ${v ? `${(s * v[0]).toFixed(1)}..${(s * v[1]).toFixed(1)}` : '-'}`;
  };
  return `${name}: ${INTERVAL_KEYS.map(cell).join(', ')}`;
}

/** One line: each figure's paired difference b - a and its interval. */
export function differenceLine(name: string, d: ReturnType<typeof pairedIntervals>): string {
  const sign = (x: number) => (x > 0 ? '+' : '') + x.toFixed(1);
  const cell = (k: IntervalKey) => {
    const { diff, interval } = d.diff[k], [label, s] = LABELS[k];
    return `${label} ${diff === null ? '-' : sign(s * diff)}${interval ? ` (${sign(s * interval[0])}..${sign(s * interval[1])})` : ''}`;
  };
  return `${name} (${d.scenes} scenes): ${INTERVAL_KEYS.map(cell).join(', ')}`;
}
