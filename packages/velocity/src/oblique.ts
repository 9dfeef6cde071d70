import type { RadarLine } from '@lamina/radar-data';
import type { HyperbolaFit } from './model';
import { permittivityFromVelocity } from './physics';
import { classifyVelocity, EARLY_APEX_FLAG } from './site-model';

/**
 * Oblique crossings of linear reflectors. A pipe (or a wall edge above ground) crossing a survey line at
 * angle beta is at horizontal distance |u| sin(beta) from an antenna u metres along the line from the
 * crossing, so its hyperbola is that of a point at z / sin(beta) seen with v / sin(beta): a pipe at 27
 * degrees in soil of K 7.5 reads K 1.5 and would pass for an air wave. The same pipe crosses the
 * neighbouring lines, and its apexes line up along its strike; from that strike beta follows and the fit
 * is corrected: v = v_apparent sin(beta), depth = z_apparent sin(beta), radius = R_apparent sin(beta) (t0 unchanged).
 */
export interface ObliqueOptions {
  /** Metres per site CRS unit. @default 1 */
  metresPerUnit?: number;
  /** Apexes on different lines further apart than this are not linked, m. @default 2.5 */
  maxLinkM?: number;
  /** Linked apexes need t0 within this fraction of each other. @default 0.15 */
  timeTolerance?: number;
  /** Linked apexes need apparent velocities within this fraction of each other. @default 0.2 */
  velocityTolerance?: number;
  /** A feature needs fits on at least this many lines. @default 3 */
  minLines?: number;
  /** Largest RMS distance of the apexes from the fitted strike line, m. @default 0.2 */
  maxScatterM?: number;
  /** Corrections are applied only below this crossing angle (above it they are within the noise), degrees. @default 80 */
  maxCorrectedAngleDeg?: number;
  /**
   * Largest relative error of sin(beta), and so of the corrected velocity, that the strike's direction
   * may bring (cot(beta) times its uncertainty); a fit whose correction is less certain is left as it is.
   * The same bound as detection's `maxRelativeUncertainty`. @default 0.1
   */
  maxRelativeUncertainty?: number;
  /** Permittivity limit for above-ground, passed on to the re-classification. @default 2 */
  aboveGroundMaxPermittivity?: number;
}

/** Unit direction of a line (first to last trace) in the site CRS. */
export function lineDirection(line: RadarLine): [number, number] {
  const n = line.nTraces;
  const dx = line.x[n - 1]! - line.x[0]!;
  const dy = line.y[n - 1]! - line.y[0]!;
  const L = Math.hypot(dx, dy);
  return L > 0 ? [dx / L, dy / L] : [1, 0];
}

/**
 * Correct the fits of linear reflectors seen crossing several lines obliquely. `directions` maps line id
 * to its unit direction (`lineDirection`). Returns new fit objects; uncorrected fits are returned as given.
 */
export function correctObliqueCrossings(fits: HyperbolaFit[], directions: Record<string, [number, number]>, options: ObliqueOptions = {}): HyperbolaFit[] {
  const mpu = options.metresPerUnit ?? 1;
  const maxLink = options.maxLinkM ?? 2.5;
  const tTol = options.timeTolerance ?? 0.15;
  const vTol = options.velocityTolerance ?? 0.2;
  const minLines = options.minLines ?? 3;
  const maxScatter = options.maxScatterM ?? 0.2;
  const sinMax = Math.sin(((options.maxCorrectedAngleDeg ?? 80) * Math.PI) / 180);
  const maxRel = options.maxRelativeUncertainty ?? 0.1;
  const n = fits.length;
  const parent = Int32Array.from({ length: n }, (_, i) => i);
  const find = (i: number): number => {
    while (parent[i] !== i) i = parent[i] = parent[parent[i]!]!;
    return i;
  };
  for (let i = 0; i < n; i++) {
    const a = fits[i]!;
    for (let j = i + 1; j < n; j++) {
      const b = fits[j]!;
      if (a.line === b.line) continue;
      if (Math.hypot(a.x - b.x, a.y - b.y) * mpu > maxLink) continue;
      if (Math.abs(a.t0Ns - b.t0Ns) > tTol * Math.max(a.t0Ns, b.t0Ns)) continue;
      if (Math.abs(a.velocityMPerNs - b.velocityMPerNs) > vTol * Math.max(a.velocityMPerNs, b.velocityMPerNs)) continue;
      parent[find(i)] = find(j);
    }
  }
  const groups = new Map<number, number[]>();
  for (let i = 0; i < n; i++) {
    const r = find(i);
    const g = groups.get(r);
    if (g) g.push(i);
    else groups.set(r, [i]);
  }
  const out = fits.slice();
  let feature = 0;
  for (const members of groups.values()) {
    // One linked group can hold several objects (single linkage chains a pipe to the stones and the
    // pipes beside it): its strikes are taken out one at a time, the one through most lines first.
    const free = new Set(members);
    for (;;) {
      const idx = nextStrike(fits, members, free, { mpu, maxLink, minLines, maxScatter, velocityTolerance: vTol, directions });
      if (!idx) break;
      for (const i of idx) free.delete(i);
      const axis = strikeOf(fits, idx, mpu);
      const { sx, sy, scatter, spread } = axis;
      // Strike direction uncertainty (radians), a small-angle estimate from the scatter.
      const sigmaTheta = scatter / (spread * Math.sqrt(idx.length));
      feature++;
      for (const i of idx) {
        const f = fits[i]!;
        const d = directions[f.line];
        if (!d) continue;
        const sinB = Math.abs(sx * d[1] - sy * d[0]);
        // On the strike either way: the site model counts a strike's fits as one object.
        if (!(sinB < sinMax) || !(sinB > 0.05)) {
          out[i] = { ...f, strike: `linear-${feature}` };
          continue;
        }
        const cosB = Math.sqrt(Math.max(0, 1 - sinB * sinB));
        // the correction is only as good as the strike's direction: d(sin beta) / sin beta = cot(beta) dtheta;
        // a strike through a few apexes of a compact object (any direction fits them) corrects nothing
        if ((cosB / sinB) * sigmaTheta > maxRel) continue;
        const v = f.velocityMPerNs * sinB;
        const sigma = Math.hypot(f.uncertaintyMPerNs * sinB, f.velocityMPerNs * cosB * sigmaTheta);
        const { origin, flags } = classifyVelocity(v, options);
        const g: HyperbolaFit = {
          ...f,
          velocityMPerNs: v,
          permittivity: permittivityFromVelocity(v),
          depthM: f.depthM * sinB,
          // The line cuts the pipe's circle at beta: its apparent radius is R / sin(beta) as its axis depth
          // is zc / sin(beta), so the same factor gives R back.
          ...(f.radiusM !== undefined ? { radiusM: f.radiusM * sinB } : {}),
          ...(f.radiusFreeVelocityMPerNs !== undefined ? { radiusFreeVelocityMPerNs: f.radiusFreeVelocityMPerNs * sinB } : {}),
          ...(f.radiusUncertaintyM !== undefined ? { radiusUncertaintyM: f.radiusUncertaintyM * sinB } : {}),
          uncertaintyMPerNs: sigma,
          origin,
          strike: `linear-${feature}`,
          crossing: {
            feature: `linear-${feature}`,
            angleDeg: (Math.asin(sinB) * 180) / Math.PI,
            apparentVelocityMPerNs: f.velocityMPerNs,
            apparentDepthM: f.depthM,
            ...(f.radiusM !== undefined ? { apparentRadiusM: f.radiusM } : {}),
            lines: idx.length,
          },
        };
        // the velocity's flags anew; where the apex lies stays as it was
        const all = [...flags, ...(f.flags ?? []).filter((x) => x === EARLY_APEX_FLAG)];
        if (all.length > 0) g.flags = all;
        else delete g.flags;
        out[i] = g;
      }
    }
  }
  return out;
}

/** Principal axis of the apexes `idx` (metres): direction, RMS and largest perpendicular distance, spread along. */
function strikeOf(fits: HyperbolaFit[], idx: number[], mpu: number) {
  let cx = 0;
  let cy = 0;
  for (const i of idx) {
    cx += fits[i]!.x;
    cy += fits[i]!.y;
  }
  cx /= Math.max(1, idx.length);
  cy /= Math.max(1, idx.length);
  let sxx = 0;
  let syy = 0;
  let sxy = 0;
  for (const i of idx) {
    const dx = (fits[i]!.x - cx) * mpu;
    const dy = (fits[i]!.y - cy) * mpu;
    sxx += dx * dx;
    syy += dy * dy;
    sxy += dx * dy;
  }
  const theta = 0.5 * Math.atan2(2 * sxy, sxx - syy);
  const sx = Math.cos(theta);
  const sy = Math.sin(theta);
  let along2 = 0;
  let perp2 = 0;
  let maxPerp = 0;
  let worst = 0;
  const perp: number[] = [];
  idx.forEach((i, m) => {
    const dx = (fits[i]!.x - cx) * mpu;
    const dy = (fits[i]!.y - cy) * mpu;
    const p = Math.abs(-dx * sy + dy * sx);
    perp.push(p);
    along2 += (dx * sx + dy * sy) ** 2;
    perp2 += p * p;
    if (p > maxPerp) {
      maxPerp = p;
      worst = m;
    }
  });
  const n = Math.max(1, idx.length);
  return { sx, sy, scatter: Math.sqrt(perp2 / n), spread: Math.sqrt(along2 / n), maxPerp, worst, perp };
}

interface StrikeSearch {
  mpu: number;
  maxLink: number;
  minLines: number;
  maxScatter: number;
  velocityTolerance: number;
  directions: Record<string, [number, number]>;
}

/**
 * The fits of `idx` whose apparent velocity lies within `tol` of the median of the fits on lines of the
 * same direction: a straight pipe crosses parallel lines at one angle, so it reads one apparent velocity
 * on all of them; point fits that happen to line up read what their own depth and radius give.
 */
function sameApparentVelocity(fits: HyperbolaFit[], idx: number[], o: StrikeSearch): number[] {
  const byDir = new Map<number, number[]>();
  for (const i of idx) {
    const d = o.directions[fits[i]!.line];
    const key = d ? Math.round(((((Math.atan2(d[0], d[1]) * 180) / Math.PI) % 180) + 180) % 180 / 10) % 18 : -1;
    const g = byDir.get(key);
    if (g) g.push(i);
    else byDir.set(key, [i]);
  }
  const keep: number[] = [];
  for (const g of byDir.values()) {
    const vs = g.map((i) => fits[i]!.velocityMPerNs).sort((a, b) => a - b);
    const med = vs[vs.length >> 1]!;
    for (const i of g) if (Math.abs(fits[i]!.velocityMPerNs - med) <= o.velocityTolerance * Math.max(med, fits[i]!.velocityMPerNs)) keep.push(i);
  }
  return idx.filter((i) => keep.includes(i));
}

/**
 * The apexes of `free` (fits of one linked group) that lie on the straight strike through most lines:
 * each pair of linked apexes on two lines proposes the line through them; its apexes are those within
 * 2.5 `maxScatter` of it, the nearest one per line, in one run along it with no gap over `maxLink`. The
 * proposals are tried from the most lines down: the first whose apexes, gathered again along their own
 * refitted axis (total least squares), kept where they read the same apparent velocity
 * (`sameApparentVelocity`) and trimmed of the worst apex until the rest lie within `maxScatter` RMS,
 * still cross `minLines` lines and spread over 0.3 m along the strike is returned. Null when none does.
 */
function nextStrike(fits: HyperbolaFit[], members: number[], free: Set<number>, o: StrikeSearch): number[] | null {
  const cand = members.filter((i) => free.has(i));
  if (new Set(cand.map((i) => fits[i]!.line)).size < o.minLines) return null;
  const near = 2.5 * o.maxScatter;
  // apexes of `cand` on the line through (cx, cy) along (ux, uy), one per survey line, in the run holding `seed`
  const onLine = (cx: number, cy: number, ux: number, uy: number, seed: number): { idx: number[]; rss: number } => {
    const best = new Map<string, { i: number; p: number; a: number }>();
    for (const i of cand) {
      const f = fits[i]!;
      const dx = (f.x - cx) * o.mpu;
      const dy = (f.y - cy) * o.mpu;
      const p = Math.abs(-dx * uy + dy * ux);
      if (p > near) continue;
      const k = best.get(f.line);
      if (!k || p < k.p) best.set(f.line, { i, p, a: dx * ux + dy * uy });
    }
    const row = [...best.values()].sort((a, b) => a.a - b.a);
    const at = row.findIndex((e) => e.i === seed);
    if (at < 0) return { idx: [], rss: Infinity };
    let lo = at;
    let hi = at;
    while (lo > 0 && row[lo]!.a - row[lo - 1]!.a <= o.maxLink) lo--;
    while (hi < row.length - 1 && row[hi + 1]!.a - row[hi]!.a <= o.maxLink) hi++;
    const run = row.slice(lo, hi + 1);
    return { idx: run.map((e) => e.i), rss: run.reduce((s, e) => s + e.p * e.p, 0) };
  };
  const proposals: { idx: number[]; rss: number; seed: number }[] = [];
  for (let m = 0; m < cand.length; m++) {
    const a = fits[cand[m]!]!;
    for (let q = m + 1; q < cand.length; q++) {
      const b = fits[cand[q]!]!;
      if (a.line === b.line) continue;
      const L = Math.hypot(b.x - a.x, b.y - a.y) * o.mpu;
      if (!(L > 1e-6) || L > o.maxLink) continue;
      const r = onLine(a.x, a.y, ((b.x - a.x) * o.mpu) / L, ((b.y - a.y) * o.mpu) / L, cand[m]!);
      if (r.idx.length >= o.minLines) proposals.push({ ...r, seed: cand[m]! });
    }
  }
  proposals.sort((p, q) => q.idx.length - p.idx.length || p.rss - q.rss);
  const tried = new Set<string>();
  for (const pr of proposals) {
    const key = [...pr.idx].sort((x, y) => x - y).join(',');
    if (tried.has(key)) continue;
    tried.add(key);
    // refit the strike to its apexes and gather them again along it, then trim as the scatter asks
    let axis = strikeOf(fits, pr.idx, o.mpu);
    const c = pr.idx.reduce((s, i) => [s[0]! + fits[i]!.x / pr.idx.length, s[1]! + fits[i]!.y / pr.idx.length], [0, 0]);
    let idx = onLine(c[0]!, c[1]!, axis.sx, axis.sy, pr.seed).idx;
    if (idx.length < o.minLines) idx = pr.idx;
    idx = sameApparentVelocity(fits, idx, o);
    if (idx.length < o.minLines) continue;
    axis = strikeOf(fits, idx, o.mpu);
    while (idx.length > o.minLines && (axis.scatter > o.maxScatter || axis.maxPerp > near)) {
      idx = idx.filter((_, k) => k !== axis.worst);
      axis = strikeOf(fits, idx, o.mpu);
    }
    if (idx.length >= o.minLines && axis.scatter <= o.maxScatter && axis.spread >= 0.3) return idx;
  }
  return null;
}
