import { C_M_PER_NS } from '@lamina/constants';
import { rng, type Rng } from './prng';
import { parseScenario, type Scenario } from './scenario';

/**
 * A seeded generator of random survey scenes for the field benchmark (issue 12): layout, soil, antenna,
 * buried objects, obstructions, clutter and noise drawn from the ranges in the README ("Random scenes").
 * The same seed gives the same scenario on every run; every scenario validates.
 */
export interface RandomScenarioOptions {
  /**
   * Largest number of traces (all lines); a larger draw shrinks the rectangle (not below 10 m a side),
   * then coarsens trace and line spacing within their ranges. Keeps simulate + process at about 5-20 s
   * on 2 cores. @default 14000
   */
  maxTraces?: number;
  /** Side range of the surveyed rectangle, m. @default [10, 30] */
  sideM?: [number, number];
  /** Projected CRS in metres (EPSG code). @default 'EPSG:32617' */
  crs?: string;
}

const round = (v: number, step: number): number => Math.round(v / step) * step;
const r3 = (v: number): number => Math.round(v * 1000) / 1000;

function pick<T>(r: Rng, items: readonly T[]): T {
  return items[Math.floor(r.next() * items.length)]!;
}
function logUniform(r: Rng, lo: number, hi: number): number {
  return lo * Math.pow(hi / lo, r.next());
}
function int(r: Rng, lo: number, hi: number): number {
  return lo + Math.floor(r.next() * (hi - lo + 1));
}

/** Half the width of a survey cart (carts are about 0.5-0.7 m wide; common practice, no source). */
export const CART_HALF_WIDTH_M = 0.3;

/** A random scene (see the README for the ranges). */
export function randomScenario(seed: number, options: RandomScenarioOptions = {}): Scenario {
  const r = rng(seed, 'random-scene');
  const [sideLo, sideHi] = options.sideM ?? [10, 30];
  const maxTraces = options.maxTraces ?? 14000;

  // Soil and antenna.
  const K = r3(4 + 21 * r.next() ** 1.3);
  const f = Math.round(logUniform(r, 100, 900));
  const v = C_M_PER_NS / Math.sqrt(K);
  const lambda = v / (f / 1000);
  const att = r3(0.5 + (K / 25) * 8 * r.next() + 0.5 * r.next());
  // depth of interest: a few wavelengths, fewer in lossy soil (common practice, no source)
  const maxDepth = r3(Math.min(5, Math.max(0.8, (6 * lambda) / (1 + att / 6))));

  // Layout.
  let length = sideLo + (sideHi - sideLo) * r.next();
  let width = sideLo + (sideHi - sideLo) * r.next();
  let traceSpacing = Math.min(0.15, Math.max(0.01, round(lambda / 10, 0.005)));
  let lineSpacing = Math.min(1, Math.max(0.25, round((lambda / 2) * (0.8 + 0.8 * r.next()), 0.05)));
  const cross = r.next() < 0.3;
  const traces = () => (Math.floor(width / lineSpacing) + 1) * (length / traceSpacing + 1) + (cross ? (Math.floor(length / lineSpacing) + 1) * (width / traceSpacing + 1) : 0);
  if (traces() > maxTraces) {
    const s = Math.sqrt(maxTraces / traces());
    length = Math.max(sideLo, length * s);
    width = Math.max(sideLo, width * s);
  }
  while (traces() > maxTraces && traceSpacing < Math.min(0.15, lambda / 5)) traceSpacing = r3(traceSpacing * 1.15);
  while (traces() > maxTraces && lineSpacing < 1) lineSpacing = Math.min(1, r3(lineSpacing * 1.15));
  length = round(length, 0.5);
  width = r3(Math.floor(width / lineSpacing + 1e-9) * lineSpacing);
  const az = pick(r, [0, 90, round(360 * r.next(), 1)]);
  const E0 = round(400000 + 200000 * r.next(), 1);
  const N0 = round(4000000 + 400000 * r.next(), 1);
  const azr = (az * Math.PI) / 180;
  const ux = Math.sin(azr), uy = Math.cos(azr), rx = Math.cos(azr), ry = -Math.sin(azr);
  /** Site CRS point at `a` m along the lines and `b` m to their right of the origin. */
  const P = (a: number, b: number): [number, number] => [r3(E0 + a * ux + b * rx), r3(N0 + a * uy + b * ry)];

  // Recording: about 12 samples per period, the record long enough for maxDepth and some more.
  const dt = Math.max(0.005, round(1000 / f / 12, 0.005));
  const timeZero = round(3 + 4 * r.next(), 0.1) + round(1.5 * (1000 / f), 0.1);
  const samples = Math.min(4096, Math.ceil((timeZero + (2.6 * maxDepth) / v) / dt));

  const layers: NonNullable<Scenario['soil']['layers']> = [];
  if (r.next() < 0.5) {
    const n = r.next() < 0.3 ? 2 : 1;
    let depth = maxDepth * (0.25 + 0.3 * r.next());
    for (let i = 0; i < n; i++) {
      const layer: (typeof layers)[number] = { depthM: r3(depth), permittivity: r3(Math.min(30, Math.max(3, K * (0.6 + 0.9 * r.next())))) };
      if (r.next() < 0.5) {
        layer.dipDeg = r3(8 * r.next());
        layer.dipAzimuthDeg = round(360 * r.next(), 1);
      }
      if (r.next() < 0.5) {
        layer.patchiness = r3(0.2 + 0.5 * r.next());
        layer.patchSizeM = r3(1 + 5 * r.next());
      }
      layers.push(layer);
      depth += maxDepth * (0.2 + 0.3 * r.next());
    }
  }

  // Buried utilities: straight runs across the rectangle (often past its edges), some big pipes.
  const buried: Scenario['buried'] = [];
  const nUtil = int(r, 1, 5);
  const utilities = ['water', 'gas', 'sewer', 'storm', 'electric', 'telecom'] as const;
  for (let i = 0; i < nUtil; i++) {
    const cable = r.next() < 0.3;
    const big = !cable && r.next() < 0.3;
    const radius = r3(cable ? 0.01 + 0.02 * r.next() : big ? 0.3 + 0.3 * r.next() : 0.03 + 0.2 * r.next());
    const material = cable ? 'metal' : pick(r, ['metal', 'plastic', 'concrete', 'water', 'air'] as const);
    const zMax = Math.max(0.4, 0.85 * maxDepth);
    const depth0 = r3(Math.max(radius + 0.15, 0.25 + (zMax - 0.25) * r.next()));
    const depth1 = r3(Math.max(radius + 0.15, depth0 + (r.next() - 0.5) * 0.3));
    // from one side to another: both ends on the rectangle's border grown by 0-3 m
    const grow = 3 * r.next();
    const edgePoint = (side: number): [number, number] => {
      const t = r.next();
      if (side === 0) return [-grow, t * width];
      if (side === 1) return [length + grow, t * width];
      if (side === 2) return [t * length, -grow];
      return [t * length, width + grow];
    };
    const s0 = int(r, 0, 3);
    const s1 = (s0 + pick(r, [1, 2, 3])) % 4;
    const a = edgePoint(s0), b = edgePoint(s1);
    const utility = cable ? pick(r, ['electric', 'telecom'] as const) : pick(r, utilities);
    buried.push({
      kind: cable ? 'cable' : 'pipe',
      id: `${utility}-${i + 1}`,
      utility,
      from: [...P(a[0], a[1]), depth0],
      to: [...P(b[0], b[1]), depth1],
      radiusM: radius,
      material,
      ...(big && (material === 'metal' || material === 'air') ? { multiples: 2 } : {}),
    });
  }
  // Compact objects: footings, tanks, grave-sized boxes, voids.
  const nCompact = int(r, 0, 8);
  for (let i = 0; i < nCompact; i++) {
    const type = pick(r, ['footing', 'tank', 'grave', 'void'] as const);
    const at = P(1 + (length - 2) * r.next(), 1 + Math.max(0, width - 2) * r.next());
    const zCap = Math.max(0.5, 0.85 * maxDepth);
    if (type === 'void') {
      const radius = r3(0.15 + 0.3 * r.next());
      buried.push({ kind: 'compact', id: `void-${i + 1}`, shape: 'sphere', center: [...at, r3(Math.min(zCap, radius + 0.2 + (zCap - radius) * r.next()))], radiusM: radius, material: 'air' });
      continue;
    }
    const size: [number, number, number] =
      type === 'footing' ? [r3(0.6 + 0.6 * r.next()), r3(0.6 + 0.6 * r.next()), r3(0.3 + 0.3 * r.next())] : type === 'tank' ? [r3(1 + r.next()), r3(0.8 + 0.6 * r.next()), r3(0.6 + 0.6 * r.next())] : [2, 0.8, 0.5];
    const depth = r3(Math.min(zCap, size[2] / 2 + 0.2 + (type === 'grave' ? 0.8 : 0.2) * r.next() + (zCap - size[2]) * 0.5 * r.next()));
    buried.push({
      kind: 'compact',
      id: `${type}-${i + 1}`,
      shape: 'box',
      center: [...at, Math.max(depth, r3(size[2] / 2 + 0.1))],
      sizeM: size,
      azimuthDeg: round(180 * r.next(), 1),
      material: type === 'footing' ? 'concrete' : type === 'tank' ? 'metal' : pick(r, ['wood', 'air'] as const),
    });
  }

  // Obstructions: none in about a fifth of the scenes; otherwise a mix beside or inside the rectangle.
  const plan: Scenario['plan'] = [];
  const nObs = r.next() < 0.2 ? 0 : int(r, 1, 5);
  for (let i = 0; i < nObs; i++) {
    const kind = pick(r, ['wall', 'fence', 'mesh', 'posts', 'tree', 'column', 'building', 'cable', 'beam'] as const);
    const id = `${kind}-${i + 1}`;
    const off = 0.5 + 4 * r.next(); // distance beside the rectangle
    const side = int(r, 0, 3);
    const along = (t0: number, t1: number): [[number, number], [number, number]] =>
      side === 0 ? [P(t0 * length, -off), P(t1 * length, -off)] : side === 1 ? [P(t0 * length, width + off), P(t1 * length, width + off)] : side === 2 ? [P(-off, t0 * width), P(-off, t1 * width)] : [P(length + off, t0 * width), P(length + off, t1 * width)];
    const t0 = 0.3 * r.next() - 0.1, t1 = 0.7 + 0.4 * r.next();
    if (kind === 'wall') plan.push({ kind: 'wall', id, path: along(t0, t1), heightM: r3(1 + 2 * r.next()), material: pick(r, ['concrete', 'brick', 'stone'] as const) });
    else if (kind === 'fence' || kind === 'mesh')
      plan.push({ kind: 'fence', id, path: along(t0, t1), postSpacingM: r3(1.5 + 1.5 * r.next()), heightM: r3(1.2 + r.next()), ...(kind === 'mesh' ? { mesh: true } : {}) });
    else if (kind === 'building') {
      const [p, q] = along(t0, t1);
      const dx = q[0] - p[0], dy = q[1] - p[1], l = Math.hypot(dx, dy) || 1;
      const depth = 4 + 6 * r.next();
      // outward: away from the rectangle's centre
      const c = P(length / 2, width / 2);
      let nx = -dy / l, ny = dx / l;
      if ((p[0] - c[0]) * nx + (p[1] - c[1]) * ny < 0) (nx = -nx), (ny = -ny);
      plan.push({ kind: 'building', id, footprint: [p, q, [r3(q[0] + nx * depth), r3(q[1] + ny * depth)], [r3(p[0] + nx * depth), r3(p[1] + ny * depth)]], heightM: r3(3 + 6 * r.next()) });
    } else if (kind === 'posts' || kind === 'tree' || kind === 'column') {
      const n = kind === 'posts' ? int(r, 1, 5) : int(r, 1, 3);
      for (let k = 0; k < n; k++) {
        const inside = r.next() < 0.4;
        const at = inside ? P(length * r.next(), width * r.next()) : along(r.next(), r.next())[0];
        plan.push({ kind: kind === 'posts' ? 'post' : kind, id: `${id}-${k + 1}`, at, ...(kind === 'tree' ? { radiusM: r3(0.1 + 0.3 * r.next()) } : {}) });
      }
    } else {
      // overhead: a cable crossing over the rectangle, or a short beam / canopy edge over part of it
      const a = P(-2, width * r.next()), b = P(length + 2, width * r.next());
      if (kind === 'cable') plan.push({ kind: 'overhead', id, heightM: r3(3 + 4 * r.next()), path: [a, b], material: 'metal', radiusM: 0.015 });
      else {
        const m0 = length * r.next() * 0.6;
        plan.push({ kind: 'overhead', id, heightM: r3(2.2 + 2 * r.next()), path: [P(m0, -1), P(m0, Math.min(width + 1, 3 + width * r.next()))], material: pick(r, ['metal', 'wood', 'concrete'] as const), radiusM: 0.1 });
      }
    }
  }

  const noisy = r.next();
  const scenario = {
    name: `random-${seed}`,
    description: `Random scene ${seed} of the field benchmark (randomScenario): invented, not field data.`,
    seed,
    crs: options.crs ?? 'EPSG:32617',
    antenna: { frequencyMHz: f, separationM: r3(Math.min(1, Math.max(0.05, 0.3 * lambda))), shielding: r3(0.2 + 0.3 * r.next()) },
    recording: {
      sampleIntervalNs: r3(dt),
      samples,
      timeZeroNs: r3(timeZero),
      timeZeroJitterNs: r3(0.1 * r.next() * (1000 / f) / 2.5),
      timeZeroDriftNs: r3((r.next() - 0.5) * (1000 / f)),
    },
    soil: {
      permittivity: K,
      attenuationDbPerM: att,
      ...(layers.length ? { layers } : {}),
      ...(r.next() < 0.5 ? { roughness: { rmsM: r3(0.005 + 0.035 * r.next()), correlationM: r3(0.3 + 2 * r.next()) } } : {}),
    },
    noise: {
      rms: r3(Math.max(0.001, logUniform(r, 0.001, 0.03))),
      wow: r3(0.1 + 0.3 * r.next()),
      ringing: r3(0.01 + 0.05 * r.next()),
      colour: noisy < 0.4 ? 'pink' : 'band',
      clutterPerM2: r3(1.5 * r.next() ** 1.5),
      clutterMaxDepthM: r3(Math.max(0.3, maxDepth)),
      clutterRadiusM: [0.01, r3(0.05 + 0.1 * r.next())],
      ...(r.next() < 0.5 ? { rootsPerM2: r3(0.5 * r.next()) } : {}),
      ...(r.next() < 0.6 ? { couplingGainRms: r3(0.3 * r.next()), couplingLengthM: r3(2 + 8 * r.next()) } : {}),
      ...(r.next() < 0.4 ? { timeZeroStepsPerLine: int(r, 1, 2), timeZeroStepNs: r3((0.2 + 0.6 * r.next()) * (1000 / f) / 2.5) } : {}),
    },
    survey: {
      origin: [E0, N0],
      azimuthDeg: az,
      lengthM: length,
      widthM: width,
      lineSpacingM: r3(lineSpacing),
      traceSpacingM: r3(traceSpacing),
      pattern: r.next() < 0.7 ? 'zigzag' : 'parallel',
      positionNoiseM: r3(0.02 * r.next()),
      // no cart drives through a post or a column: lines go around what stands on the ground
      cartHalfWidthM: CART_HALF_WIDTH_M,
      ...(cross ? { crossAzimuthDeg: (az + 90) % 360 } : {}),
    },
    plan,
    buried,
  };
  return parseScenario(scenario, `randomScenario(${seed})`);
}
