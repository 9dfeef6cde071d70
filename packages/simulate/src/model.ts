import type { Scenario } from './scenario';
import { buildMedium, type Medium } from './medium';
import { MATERIAL_PERMITTIVITY, materialReflection, type Material } from './physics';
import { ringArea } from './geometry';

/**
 * The scenario turned into what the forward model needs: reflectors in local metres (x east and y north
 * of the survey origin, z depth), each with its reflection coefficient and spreading law, and the survey
 * lines as antenna-midpoint positions. Truth entries keep the scenario's CRS units.
 */

export type Spreading = 'plane' | 'cylinder' | 'sphere';
export type AboveGroundKind = 'wall' | 'building-edge' | 'fence' | 'post' | 'tree' | 'column';

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
  scatterers: Scatterer[];
  buried: TruthBuried[];
  above: TruthAbove[];
  /** Clutter points (not targets): [x, y, depthM] in CRS units. */
  clutter: [number, number, number][];
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
      scatterers.push({ type: 'segment', truth: t, medium: 'soil', ax, ay, az, bx, by, bz, radius: b.radiusM, r, spread: 'cylinder', polarised: true });
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
      const panel = f.panelReflectivity ?? 0.1;
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
  const nLines = Math.floor(sv.widthM / sv.lineSpacingM + 1e-9) + 1;
  const nTraces = Math.floor(sv.lengthM / sv.traceSpacingM + 1e-9) + 1;
  const ids = Array.from({ length: nLines }, (_, i) => lineId(i, nLines));
  const startEnd = new Set(sv.startEndLines ?? (nLines >= 3 ? [ids[1]!] : []));
  const csv = new Set(sv.csvLines ?? (nLines >= 3 ? [ids[2]!] : []));
  const lines: LineGeom[] = [];
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
    const radius = 0.02 + clutterRng() * 0.06;
    const r = (clutterRng() < 0.5 ? -1 : 1) * (0.1 + 0.3 * clutterRng());
    const x = a * ux + b * rx, y = a * uy + b * ry;
    clutter.push([ox + x / mpu, oy + y / mpu, z]);
    scatterers.push({ type: 'point', truth: -1, medium: 'soil', x, y, z, radius, r, spread: 'sphere' });
  }

  const a = s.antenna;
  const rec = s.recording;
  return {
    scenario: s,
    metresPerUnit: mpu,
    origin: [ox, oy],
    medium,
    frequencyMHz: a.frequencyMHz,
    separationM: a.separationM,
    beamExponent: a.beamExponent ?? 1,
    shielding: a.shielding ?? 0.35,
    directWave: a.directWave ?? 1,
    groundWave: a.groundWave ?? 0.6,
    dtNs: rec.sampleIntervalNs,
    nSamples: rec.samples,
    timeZeroNs: rec.timeZeroNs,
    timeZeroJitterNs: rec.timeZeroJitterNs ?? 0,
    timeZeroDriftNs: rec.timeZeroDriftNs ?? 0,
    noiseRms: s.noise?.rms ?? 0.002,
    wow: s.noise?.wow ?? 0.2,
    ringing: s.noise?.ringing ?? 0.02,
    scatterers,
    buried,
    above,
    clutter,
    lines,
  };
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
