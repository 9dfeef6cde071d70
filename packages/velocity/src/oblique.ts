import type { RadarLine } from '@lamina/radar-data';
import type { HyperbolaFit } from './model';
import { permittivityFromVelocity } from './physics';
import { classifyVelocity } from './site-model';

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
    // Strike: principal axis of the apex positions (total least squares, metres), trimmed of the worst
    // apex until the rest lie on a line; then one fit per line, the one nearest the strike.
    let idx = members.slice();
    let axis = strikeOf(fits, idx, mpu);
    while (idx.length >= minLines && (axis.scatter > maxScatter || axis.maxPerp > 2.5 * maxScatter)) {
      idx.splice(axis.worst, 1);
      axis = strikeOf(fits, idx, mpu);
    }
    const perLine = new Map<string, { i: number; d: number }>();
    idx.forEach((i, m) => {
      const f = fits[i]!;
      const d = axis.perp[m]!;
      const k = perLine.get(f.line);
      if (!k || d < k.d) perLine.set(f.line, { i, d });
    });
    // Most of the group's lines must stay on the strike, so a cluster of compact targets is not read as a line.
    const groupLines = new Set(members.map((i) => fits[i]!.line)).size;
    if (perLine.size < Math.max(minLines, 0.5 * groupLines)) continue;
    idx = [...perLine.values()].map((e) => e.i);
    axis = strikeOf(fits, idx, mpu);
    const { sx, sy, scatter, spread } = axis;
    if (scatter > maxScatter || spread < 0.3) continue;
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
      if (flags.length > 0) g.flags = flags;
      else delete g.flags;
      out[i] = g;
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
