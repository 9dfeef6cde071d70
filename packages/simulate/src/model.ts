import { crossSign, surveyGridCounts, type Scenario } from './scenario';
import { buildMedium, type Medium } from './medium';
import { C_M_PER_NS } from '@lamina/constants';
import { MATERIAL_PERMITTIVITY, materialReflection, type Material } from './physics';
import { ringArea } from './geometry';
import { linesAroundObstructions } from './swath';

/**
 * The scenario turned into what the forward model needs: reflectors in local metres (x east and y north
 * of the survey origin, z depth), each with its reflection coefficient and spreading law, and the survey
 * lines as antenna-midpoint positions. Truth entries keep the scenario's CRS units.
 */

export type Spreading = 'plane' | 'cylinder' | 'sphere';
export type AboveGroundKind = 'wall' | 'building-edge' | 'fence' | 'post' | 'tree' | 'column' | 'overhead';

export interface SegmentScatterer {
  type: 'segment';
  /** Index into the truth list this reflector reports to. */
  truth: number;
  medium: 'soil' | 'air';
  ax: number; ay: number; az: number;
  bx: number; by: number; bz: number;
  radius: number;
  r: number;
  spread: 'cylinder' | 'plane';
  /** Linear buried targets couple to the antenna by their angle to the line (polarisation). */
  polarised: boolean;
  /** For building edges: only the outward side sees the face. Unit outward normal in plan. */
  outward?: [number, number];
  /** Echoes below a pipe: count, delay between echoes (ns) and amplitude factor per echo. */
  echoes?: { n: number; dtNs: number; factor: number };
}

export interface PointScatterer {
  type: 'point';
  truth: number;
  medium: 'soil' | 'air';
  x: number; y: number; z: number;
  radius: number;
  r: number;
  /** Spheres (compact targets, stones) spread as 1/L^2; vertical posts, trunks and columns as cylinders. */
  spread: 'sphere' | 'cylinder';
}

export interface BoxScatterer {
  type: 'box';
  truth: number;
  medium: 'soil';
  cx: number; cy: number; cz: number;
  /** Half sizes along the box's length, width and height. */
  hl: number; hw: number; hh: number;
  /** Unit vector of the box length in plan. */
  ux: number; uy: number;
  r: number;
}

export type Scatterer = SegmentScatterer | PointScatterer | BoxScatterer;

export interface TruthBuried {
  id: string;
  kind: 'pipe' | 'cable' | 'compact';
  utility?: string;
  group?: string;
  from?: [number, number, number];
  to?: [number, number, number];
  center?: [number, number, number];
  radiusM: number;
  shape?: 'cylinder' | 'sphere' | 'box';
  sizeM?: [number, number, number];
  azimuthDeg?: number;
  material: Material;
  reflectionCoefficient: number;
}

export interface TruthAbove {
  id: string;
  planFeatureId: string;
  kind: AboveGroundKind;
  from?: [number, number];
  to?: [number, number];
  center?: [number, number];
  heightM?: number;
  radiusM?: number;
  material: Material;
  reflectionCoefficient: number;
}

export interface LineGeom {
  id: string;
  index: number;
  /** Antenna midpoints, local metres. */
  mx: Float64Array;
  my: Float64Array;
  /** Unit direction of travel (the receiver leads), local metres. */
  dx: number;
  dy: number;
  positionSource: 'headers' | 'startEnd' | 'csv';
}

export interface Model {
  scenario: Scenario;
  metresPerUnit: number;
  origin: [number, number];
  medium: Medium;
  frequencyMHz: number;
  separationM: number;
  beamExponent: number;
  shielding: number;
  directWave: number;
  groundWave: number;
  dtNs: number;
  nSamples: number;
  timeZeroNs: number;
  timeZeroJitterNs: number;
  timeZeroDriftNs: number;
  noiseRms: number;
  wow: number;
  ringing: number;
  noiseColour: 'band' | 'pink';
  couplingGainRms: number;
  couplingLengthM: number;
  timeZeroStepsPerLine: number;
  timeZeroStepNs: number;
  /** Rough ground (RMS height and correlation length, m); rms 0 = flat. */
  roughness: { rmsM: number; correlationM: number };
  /** Per interface of `medium`: share of the plan without a reflection and the patch size (m). */
  patches: { patchiness: number; sizeM: number }[];
  scatterers: Scatterer[];
  buried: TruthBuried[];
  above: TruthAbove[];
  /** Clutter points (not targets): [x, y, depthM] in CRS units. */
  clutter: [number, number, number][];
  /** Roots (not targets): [x0, y0, z0, x1, y1, z1], CRS units and depth m. */
  roots: [number, number, number, number, number, number][];
  lines: LineGeom[];
}

/** Defaults by kind for above-ground faces (common practice, no source: typical materials and sizes). */
const ABOVE_DEFAULTS: Record<'building' | 'wall' | 'post' | 'tree' | 'column', { material: Material; radiusM: number; permittivity?: number }> = {
  building: { material: 'brick', radiusM: 0 },
  wall: { material: 'concrete', radiusM: 0 },
  post: { material: 'metal', radiusM: 0.04 },
  tree: { material: 'wood', radiusM: 0.2, permittivity: 20 }, // living trunk: wet wood
  column: { material: 'concrete', radiusM: 0.2 },
};

export function lineId(i: number, n: number): string {
  return `l${String(i + 1).padStart(Math.max(2, String(n).length), '0')}`;
}

function airReflection(material: Material, permittivity: number | undefined, fallbackK?: number): number {
  return materialReflection(material, 1, permittivity ?? fallbackK ?? (material === 'metal' ? undefined : MATERIAL_PERMITTIVITY[material]));
}

export function buildModel(s: Scenario, metresPerUnit: number, clutterRng: () => number): Model {
  const mpu = metresPerUnit;
  const antenna = s.antenna;
  const [ox, oy] = s.survey.origin;
  const lx = (x: number): number => (x - ox) * mpu;
  const ly = (y: number): number => (y - oy) * mpu;
  const medium = buildMedium(s.soil.permittivity, s.soil.attenuationDbPerM, s.soil.layers ?? []);
  const scatterers: Scatterer[] = [];
  const buried: TruthBuried[] = [];
  const above: TruthAbove[] = [];
  const kAt = (x: number, y: number, z: number): number => localK(medium, x, y, z);

  // Buried targets.
  for (const b of s.buried) {
    if (b.kind === 'pipe' || b.kind === 'cable') {
      const ax = lx(b.from[0]), ay = ly(b.from[1]), az = b.from[2];
      const bx = lx(b.to[0]), by = ly(b.to[1]), bz = b.to[2];
      const k = kAt((ax + bx) / 2, (ay + by) / 2, (az + bz) / 2);
      const r = materialReflection(b.material, k, b.permittivity);
      const t = buried.push({ id: b.id, kind: b.kind, ...(b.utility ? { utility: b.utility } : {}), ...(b.group ? { group: b.group } : {}), from: [...b.from], to: [...b.to], radiusM: b.radiusM, shape: 'cylinder', material: b.material, reflectionCoefficient: r }) - 1;
      const echoes = b.multiples ? pipeEchoes(b.material, b.radiusM, b.multiples, frequencyOf(s)) : undefined;
      scatterers.push({ type: 'segment', truth: t, medium: 'soil', ax, ay, az, bx, by, bz, radius: b.radiusM, r, spread: 'cylinder', polarised: true, ...(echoes ? { echoes } : {}) });
    } else if (b.kind === 'compact') {
      const n = b.repeat?.count ?? 1;
      const rep = b.repeat;
      const ra = ((rep?.azimuthDeg ?? 0) * Math.PI) / 180;
      for (let i = 0; i < n; i++) {
        const id = n > 1 ? `${b.id}-${i + 1}` : b.id;
        const off = rep ? (i * rep.spacingM) / mpu : 0;
        const cxCrs = b.center[0] + off * Math.sin(ra);
        const cyCrs = b.center[1] + off * Math.cos(ra);
        const cx = lx(cxCrs), cy = ly(cyCrs), cz = b.center[2];
        const k = kAt(cx, cy, cz);
        const r = materialReflection(b.material, k, b.permittivity);
        const group = b.group ?? (n > 1 ? b.id : undefined);
        if (b.shape === 'sphere') {
          const radius = b.radiusM ?? 0.2;
          const t = buried.push({ id, kind: 'compact', ...(group ? { group } : {}), center: [cxCrs, cyCrs, cz], radiusM: radius, shape: 'sphere', material: b.material, reflectionCoefficient: r }) - 1;
          scatterers.push({ type: 'point', truth: t, medium: 'soil', x: cx, y: cy, z: cz, radius, r, spread: 'sphere' });
        } else {
          const size = b.sizeM ?? [1, 1, 1];
          const az = ((b.azimuthDeg ?? 0) * Math.PI) / 180;
          const t = buried.push({ id, kind: 'compact', ...(group ? { group } : {}), center: [cxCrs, cyCrs, cz], radiusM: Math.hypot(size[0], size[1]) / 2, shape: 'box', sizeM: [...size], azimuthDeg: b.azimuthDeg ?? 0, material: b.material, reflectionCoefficient: r }) - 1;
          scatterers.push({ type: 'box', truth: t, medium: 'soil', cx, cy, cz, hl: size[0] / 2, hw: size[1] / 2, hh: size[2] / 2, ux: Math.sin(az), uy: Math.cos(az), r });
        }
      }
    }
  }

  // Above-ground reflectors from the plan.
  const shielded = (t: number, seg: Omit<SegmentScatterer, 'truth' | 'type' | 'medium' | 'az' | 'bz' | 'polarised'>): void => {
    scatterers.push({ type: 'segment', truth: t, medium: 'air', az: 0, bz: 0, polarised: false, ...seg });
  };
  for (const f of s.plan) {
    if (f.kind === 'building' || f.kind === 'wall') {
      const d = ABOVE_DEFAULTS[f.kind];
      const material = f.material ?? d.material;
      let r = airReflection(material, f.permittivity, d.permittivity);
      if (f.kind === 'wall' && f.reflectivity !== undefined) r = -f.reflectivity;
      let pts = f.kind === 'building' ? f.footprint : f.path;
      if (f.kind === 'building') {
        const first = pts[0]!, last = pts[pts.length - 1]!;
        if (first[0] === last[0] && first[1] === last[1]) pts = pts.slice(0, -1);
      }
      const ccw = f.kind === 'building' ? ringArea(pts) > 0 : true;
      const nSeg = f.kind === 'building' ? pts.length : pts.length - 1;
      for (let i = 0; i < nSeg; i++) {
        const p = pts[i]!, q = pts[(i + 1) % pts.length]!;
        const id = nSeg > 1 || f.kind === 'building' ? `${f.id}-${f.kind === 'building' ? 'edge' : 'seg'}-${i + 1}` : f.id;
        const kind: AboveGroundKind = f.kind === 'building' ? 'building-edge' : 'wall';
        const t = above.push({ id, planFeatureId: f.id, kind, from: [p[0], p[1]], to: [q[0], q[1]], ...(f.heightM ? { heightM: f.heightM } : {}), material, reflectionCoefficient: r }) - 1;
        const ax = lx(p[0]), ay = ly(p[1]), bx = lx(q[0]), by = ly(q[1]);
        const len = Math.hypot(bx - ax, by - ay);
        // Outward normal: to the right of the edge direction for a counter-clockwise ring.
        const nx = (by - ay) / len, ny = -(bx - ax) / len;
        shielded(t, { ax, ay, bx, by, radius: 0, r, spread: 'plane', ...(f.kind === 'building' ? { outward: ccw ? [nx, ny] as [number, number] : [-nx, -ny] as [number, number] } : {}) });
      }
    } else if (f.kind === 'fence') {
      const postMaterial = f.postMaterial ?? 'metal';
      const postRadius = f.postRadiusM ?? ABOVE_DEFAULTS.post.radiusM;
      const rPost = airReflection(postMaterial, undefined);
      const panel = f.panelReflectivity ?? (f.mesh ? 0.9 : 0.1);
      let k = 0;
      const addPost = (X: number, Y: number): void => {
        k++;
        const t = above.push({ id: `${f.id}-post-${k}`, planFeatureId: f.id, kind: 'post', center: [X, Y], ...(f.heightM ? { heightM: f.heightM } : {}), radiusM: postRadius, material: postMaterial, reflectionCoefficient: rPost }) - 1;
        scatterers.push({ type: 'point', truth: t, medium: 'air', x: lx(X), y: ly(Y), z: 0, radius: postRadius, r: rPost, spread: 'cylinder' });
      };
      for (let i = 0; i + 1 < f.path.length; i++) {
        const p = f.path[i]!, q = f.path[i + 1]!;
        const lenM = Math.hypot(q[0] - p[0], q[1] - p[1]) * mpu;
        // Posts at the segment start and every postSpacingM along it; the next segment (or the end) adds the far vertex.
        for (let j = 0; ; j++) {
          const u = (j * f.postSpacingM) / lenM;
          if (u >= 1 - 1e-9) break;
          addPost(p[0] + u * (q[0] - p[0]), p[1] + u * (q[1] - p[1]));
        }
        if (panel > 0) {
          const t = above.push({ id: `${f.id}-panel-${i + 1}`, planFeatureId: f.id, kind: 'fence', from: [p[0], p[1]], to: [q[0], q[1]], ...(f.heightM ? { heightM: f.heightM } : {}), material: f.material ?? 'metal', reflectionCoefficient: -panel }) - 1;
          shielded(t, { ax: lx(p[0]), ay: ly(p[1]), bx: lx(q[0]), by: ly(q[1]), radius: 0, r: -panel, spread: 'plane' });
        }
      }
      const end = f.path[f.path.length - 1]!;
      addPost(end[0], end[1]);
    } else if (f.kind === 'overhead') {
      // A cable, beam or branch in the air: its air wave travels the slant distance to the height h.
      const material = f.material ?? 'metal';
      const radius = f.radiusM ?? 0.02;
      const r = airReflection(material, f.permittivity);
      const h = f.heightM;
      if (f.path) {
        for (let i = 0; i + 1 < f.path.length; i++) {
          const p = f.path[i]!, q = f.path[i + 1]!;
          const id = f.path.length > 2 ? `${f.id}-seg-${i + 1}` : f.id;
          const t = above.push({ id, planFeatureId: f.id, kind: 'overhead', from: [p[0], p[1]], to: [q[0], q[1]], heightM: h, radiusM: radius, material, reflectionCoefficient: r }) - 1;
          scatterers.push({ type: 'segment', truth: t, medium: 'air', ax: lx(p[0]), ay: ly(p[1]), az: h, bx: lx(q[0]), by: ly(q[1]), bz: h, radius, r, spread: 'cylinder', polarised: false });
        }
      } else {
        const at = f.at!;
        const t = above.push({ id: f.id, planFeatureId: f.id, kind: 'overhead', center: [at[0], at[1]], heightM: h, radiusM: radius, material, reflectionCoefficient: r }) - 1;
        scatterers.push({ type: 'point', truth: t, medium: 'air', x: lx(at[0]), y: ly(at[1]), z: h, radius, r, spread: 'sphere' });
      }
    } else {
      const d = ABOVE_DEFAULTS[f.kind];
      const material = f.material ?? d.material;
      const radius = f.radiusM ?? d.radiusM;
      const r = airReflection(material, f.permittivity, f.material ? undefined : d.permittivity);
      const t = above.push({ id: f.id, planFeatureId: f.id, kind: f.kind, center: [f.at[0], f.at[1]], ...(f.heightM ? { heightM: f.heightM } : {}), radiusM: radius, material, reflectionCoefficient: r }) - 1;
      scatterers.push({ type: 'point', truth: t, medium: 'air', x: lx(f.at[0]), y: ly(f.at[1]), z: 0, radius, r, spread: 'cylinder' });
    }
  }

  // Survey lines.
  const sv = s.survey;
  const az = (sv.azimuthDeg * Math.PI) / 180;
  const ux = Math.sin(az), uy = Math.cos(az);
  const rx = Math.cos(az), ry = -Math.sin(az);
  const [nLines, nCross] = surveyGridCounts(s);
  const nTraces = Math.floor(sv.lengthM / sv.traceSpacingM + 1e-9) + 1;
  const ids = Array.from({ length: nLines + nCross }, (_, i) => lineId(i, nLines + nCross));
  const startEnd = new Set(sv.startEndLines ?? (nLines >= 3 ? [ids[1]!] : []));
  const csv = new Set(sv.csvLines ?? (nLines >= 3 ? [ids[2]!] : []));
  let lines: LineGeom[] = [];
  for (let i = 0; i < nLines; i++) {
    const reverse = (sv.pattern ?? 'zigzag') === 'zigzag' && i % 2 === 1;
    const mx = new Float64Array(nTraces);
    const my = new Float64Array(nTraces);
    for (let j = 0; j < nTraces; j++) {
      const a = (reverse ? nTraces - 1 - j : j) * sv.traceSpacingM;
      mx[j] = a * ux + i * sv.lineSpacingM * rx;
      my[j] = a * uy + i * sv.lineSpacingM * ry;
    }
    const id = ids[i]!;
    lines.push({ id, index: i, mx, my, dx: reverse ? -ux : ux, dy: reverse ? -uy : uy, positionSource: startEnd.has(id) ? 'startEnd' : csv.has(id) ? 'csv' : 'headers' });
  }
  if (nCross > 0) {
    // The second grid: lines across the rectangle (along +-r), stepped along u from the origin's edge.
    const sign = crossSign(sv.azimuthDeg, sv.crossAzimuthDeg!);
    const step = sv.crossLineSpacingM ?? sv.lineSpacingM;
    const nT = Math.floor(sv.widthM / sv.traceSpacingM + 1e-9) + 1;
    for (let i = 0; i < nCross; i++) {
      const reverse = (sv.pattern ?? 'zigzag') === 'zigzag' && i % 2 === 1;
      const mx = new Float64Array(nT);
      const my = new Float64Array(nT);
      for (let j = 0; j < nT; j++) {
        const k = reverse ? nT - 1 - j : j;
        const b = sign > 0 ? k * sv.traceSpacingM : sv.widthM - k * sv.traceSpacingM;
        mx[j] = i * step * ux + b * rx;
        my[j] = i * step * uy + b * ry;
      }
      const id = ids[nLines + i]!;
      const d = (reverse ? -1 : 1) * sign;
      lines.push({ id, index: nLines + i, mx, my, dx: d * rx, dy: d * ry, positionSource: startEnd.has(id) ? 'startEnd' : csv.has(id) ? 'csv' : 'headers' });
    }
  }

  if (sv.cartHalfWidthM !== undefined) lines = linesAroundObstructions(lines, scatterers, sv.cartHalfWidthM, antenna.separationM);

  // Clutter: stones and roots, uniformly over the surveyed rectangle plus a metre around it.
  const density = s.noise?.clutterPerM2 ?? 0.3;
  const maxDepth = s.noise?.clutterMaxDepthM ?? 1.5;
  const area = (sv.lengthM + 2) * (sv.widthM + 2);
  const nClutter = Math.round(density * area);
  const clutter: [number, number, number][] = [];
  for (let i = 0; i < nClutter; i++) {
    const a = -1 + clutterRng() * (sv.lengthM + 2);
    const b = -1 + clutterRng() * (sv.widthM + 2);
    const z = 0.05 + clutterRng() * (maxDepth - 0.05);
    const u = clutterRng();
    const cr = s.noise?.clutterRadiusM;
    const radius = cr ? cr[0] * Math.pow(cr[1] / cr[0], u) : 0.02 + u * 0.06;
    const r = (clutterRng() < 0.5 ? -1 : 1) * (0.1 + 0.3 * clutterRng());
    const x = a * ux + b * rx, y = a * uy + b * ry;
    clutter.push([ox + x / mpu, oy + y / mpu, z]);
    scatterers.push({ type: 'point', truth: -1, medium: 'soil', x, y, z, radius, r, spread: 'sphere' });
  }
  // Roots: short shallow linear reflectors (wet wood in soil), drawn after the stones so that sites
  // without roots keep their clutter.
  const roots: Model['roots'] = [];
  const nRoots = Math.round((s.noise?.rootsPerM2 ?? 0) * area);
  for (let i = 0; i < nRoots; i++) {
    const a = -1 + clutterRng() * (sv.lengthM + 2);
    const b = -1 + clutterRng() * (sv.widthM + 2);
    const z0 = 0.05 + clutterRng() * 0.45;
    const len = 0.3 + clutterRng() * 1.2;
    const th = clutterRng() * 2 * Math.PI;
    const z1 = Math.max(0.03, z0 + (clutterRng() - 0.5) * 0.3);
    const radius = 0.005 + clutterRng() * 0.025;
    const r = 0.1 + 0.25 * clutterRng();
    const x0 = a * ux + b * rx, y0 = a * uy + b * ry;
    const x1 = x0 + len * Math.sin(th), y1 = y0 + len * Math.cos(th);
    roots.push([ox + x0 / mpu, oy + y0 / mpu, z0, ox + x1 / mpu, oy + y1 / mpu, z1]);
    scatterers.push({ type: 'segment', truth: -1, medium: 'soil', ax: x0, ay: y0, az: z0, bx: x1, by: y1, bz: z1, radius, r, spread: 'cylinder', polarised: true });
  }

  const rec = s.recording;
  return {
    scenario: s,
    metresPerUnit: mpu,
    origin: [ox, oy],
    medium,
    frequencyMHz: antenna.frequencyMHz,
    separationM: antenna.separationM,
    beamExponent: antenna.beamExponent ?? 1,
    shielding: antenna.shielding ?? 0.35,
    directWave: antenna.directWave ?? 1,
    groundWave: antenna.groundWave ?? 0.6,
    dtNs: rec.sampleIntervalNs,
    nSamples: rec.samples,
    timeZeroNs: rec.timeZeroNs,
    timeZeroJitterNs: rec.timeZeroJitterNs ?? 0,
    timeZeroDriftNs: rec.timeZeroDriftNs ?? 0,
    noiseRms: s.noise?.rms ?? 0.002,
    wow: s.noise?.wow ?? 0.2,
    ringing: s.noise?.ringing ?? 0.02,
    noiseColour: s.noise?.colour ?? 'band',
    couplingGainRms: s.noise?.couplingGainRms ?? 0,
    couplingLengthM: s.noise?.couplingLengthM ?? 5,
    timeZeroStepsPerLine: s.noise?.timeZeroStepsPerLine ?? 0,
    timeZeroStepNs: s.noise?.timeZeroStepNs ?? 0,
    roughness: { rmsM: s.soil.roughness?.rmsM ?? 0, correlationM: s.soil.roughness?.correlationM ?? 1 },
    patches: (s.soil.layers ?? []).map((l) => ({ patchiness: l.patchiness ?? 0, sizeM: l.patchSizeM ?? 3 })),
    scatterers,
    buried,
    above,
    clutter,
    roots,
    lines,
  };
}

function frequencyOf(s: Scenario): number {
  return s.antenna.frequencyMHz;
}

/**
 * Echoes below a pipe (common practice, no source; a kinematic sketch, not a full-wave result): an
 * air-filled pipe returns its far wall 4 r / c after the near one, with the opposite sign and each echo
 * weaker (transmission in and out of the wall); a metal pipe rings at about the antenna's period
 * (surface waves around the pipe and the antenna-pipe reverberation), alternating in sign.
 */
export function pipeEchoes(material: Material, radiusM: number, n: number, frequencyMHz: number): { n: number; dtNs: number; factor: number } | undefined {
  if (material === 'air') return { n, dtNs: (4 * radiusM) / C_M_PER_NS, factor: -0.6 };
  if (material === 'metal') return { n, dtNs: 1000 / frequencyMHz, factor: -0.5 };
  return undefined;
}

/** Permittivity of the layer containing depth z at (x, y). */
export function localK(m: Medium, x: number, y: number, z: number): number {
  let k = m.k;
  for (const i of m.interfaces) {
    if (i.d0 + i.gx * x + i.gy * y <= z) k = i.k;
    else break;
  }
  return k;
}
