import { addRicker, ricker, rickerHalfWidthNs } from './wavelet';
import { C_M_PER_NS } from '@lamina/constants';
import { attenuationFactor } from './physics';
import { bistaticOnSegment, edgeFactor, projectOnLine, type SegmentHit, type Vec3 } from './geometry';
import { rayAverages, interfaceDepth, type RayAverages } from './medium';
import type { LineGeom, Model, Scatterer } from './model';
import { rng } from './prng';
import { normalQuantile, pinkNoise, randomField } from './fields';
import { reflectionCoefficient } from './physics';

/**
 * The forward model of one common-offset line (see README "Physics"). Each trace is a sum of Ricker
 * wavelets, one per ray: the direct air wave, the ground wave, each layer interface, each buried target
 * and each above-ground reflector reached through the air, plus antenna ringing, a low-frequency
 * transient ("wow") and band-limited random noise. Every wavelet is placed at its exact bistatic time
 * after the trace's own time-zero.
 */

/** Per-reflector statistics: peak |amplitude|, min and max of half the bistatic path (m), traces hit above the noise. */
export const STAT_FIELDS = 4;

export interface LineResult {
  /** nTraces * nSamples, trace-major. */
  data: Float32Array;
  /** Time-zero of each trace (ns from the first sample). */
  timeZeroNs: Float64Array;
  /** STAT_FIELDS values per scatterer of the model. */
  stats: Float64Array;
}

/** Shortest path length (m) the spreading laws are evaluated at: the antennas' near field. */
const MIN_PATH_M = 0.15;
/** The same for reflectors in the air: an antenna brushing past a post or wall does not see it as a point at zero range. */
const MIN_AIR_PATH_M = 0.5;

export function newStats(n: number): Float64Array {
  const s = new Float64Array(n * STAT_FIELDS);
  for (let i = 0; i < n; i++) {
    s[i * STAT_FIELDS + 1] = Infinity;
    s[i * STAT_FIELDS + 2] = -Infinity;
  }
  return s;
}

export function mergeStats(into: Float64Array, from: Float64Array): void {
  for (let i = 0; i < into.length; i += STAT_FIELDS) {
    into[i] = Math.max(into[i]!, from[i]!);
    into[i + 1] = Math.min(into[i + 1]!, from[i + 1]!);
    into[i + 2] = Math.max(into[i + 2]!, from[i + 2]!);
    into[i + 3] = into[i + 3]! + from[i + 3]!;
  }
}

/** Band-limiting kernel for the random noise: the Ricker wavelet itself, scaled to unit energy so the noise keeps its RMS. */
function noiseKernel(m: Model): Float64Array {
  const half = Math.ceil(rickerHalfWidthNs(m.frequencyMHz) / m.dtNs);
  const k = new Float64Array(2 * half + 1);
  let e = 0;
  for (let i = -half; i <= half; i++) {
    const v = ricker(i * m.dtNs, m.frequencyMHz);
    k[i + half] = v;
    e += v * v;
  }
  const s = 1 / Math.sqrt(e);
  for (let i = 0; i < k.length; i++) k[i] = k[i]! * s;
  return k;
}

export function simulateLine(m: Model, line: LineGeom): LineResult {
  const n = line.mx.length;
  const ns = m.nSamples;
  const dt = m.dtNs;
  const f = m.frequencyMHz;
  const fGHz = f / 1000;
  const data = new Float32Array(n * ns);
  const t0s = new Float64Array(n);
  const stats = newStats(m.scatterers.length);
  const r = rng(m.scenario.seed, `line:${line.id}`);
  // the receiver noise: its own stream with a noiseSeed (a repeat survey), else the line's
  const rn = m.scenario.noiseSeed === undefined ? r : rng(m.scenario.noiseSeed, `noise:${line.id}`);
  const trace = new Float64Array(ns);
  const white = new Float64Array(ns);
  const kernel = noiseKernel(m);
  const kh = (kernel.length - 1) / 2;
  const recordEnd = ns * dt + rickerHalfWidthNs(f);
  const half = m.separationM / 2;
  const tx: Vec3 = { x: 0, y: 0, z: 0 };
  const rx: Vec3 = { x: 0, y: 0, z: 0 };
  const hit: SegmentHit = { u: 0, sum: 0, dTx: 0, dRx: 0 };
  const ray: RayAverages = { slowness: 0, attDbPerM: 0, transmission: 1 };
  const lambdaAir = C_M_PER_NS / fGHz;
  const beamN = m.beamExponent;
  const detect = 3 * m.noiseRms;
  // Ringing: a decaying train after the direct wave, the same on every trace (common practice, no source).
  const ringPeriod = 1.3 / fGHz;
  const ringDecay = 3 * ringPeriod;
  const wowTau = 6 / fGHz;
  const active = reachable(m, line, recordEnd);
  const extra = lineEffects(m, line);

  const record = (s: Scatterer, idx: number, amp: number, halfPath: number, arrival: number): void => {
    if (s.truth < 0) return;
    const o = idx * STAT_FIELDS;
    const a = Math.abs(amp);
    if (a > stats[o]!) stats[o] = a;
    if (a >= detect && arrival < ns * dt) {
      if (halfPath < stats[o + 1]!) stats[o + 1] = halfPath;
      if (halfPath > stats[o + 2]!) stats[o + 2] = halfPath;
      stats[o + 3] = stats[o + 3]! + 1;
    }
  };

  for (let j = 0; j < n; j++) {
    trace.fill(0);
    const mx = line.mx[j]!;
    const my = line.my[j]!;
    tx.x = mx - half * line.dx;
    tx.y = my - half * line.dy;
    rx.x = mx + half * line.dx;
    rx.y = my + half * line.dy;
    const jitter = Math.max(-3, Math.min(3, r.gauss())) * m.timeZeroJitterNs;
    const t0 = m.timeZeroNs + (n > 1 ? (m.timeZeroDriftNs * j) / (n - 1) : 0) + jitter + (extra.timeZeroStep ? extra.timeZeroStep[j]! : 0);
    t0s[j] = t0;
    // Rough ground: the antenna rides an air gap a over the surface; everything in the soil comes 2a/c later.
    const gap = extra.gap ? extra.gap(mx, my) : 0;
    const soilDelay = (2 * gap) / C_M_PER_NS;

    // Direct air wave and ground wave between the antennas.
    addRicker(trace, dt, t0 + m.separationM / C_M_PER_NS, m.directWave, f);
    addRicker(trace, dt, t0 + soilDelay + m.separationM / m.medium.v, m.groundWave, f);
    if (gap > 0) {
      const surf = reflectionCoefficient(1, m.medium.k) * ((2 * gap) / (2 * gap + lambdaAir / 4));
      addRicker(trace, dt, t0 + Math.hypot(m.separationM, 2 * gap) / C_M_PER_NS, surf, f);
    }
    for (let k = 1; k <= 8; k++) {
      const a = m.ringing * (k % 2 === 0 ? 1 : -1) * Math.exp((-k * ringPeriod) / ringDecay);
      addRicker(trace, dt, t0 + m.separationM / C_M_PER_NS + k * ringPeriod, a, f);
    }
    const wowAmp = m.wow * (1 + 0.05 * r.gauss());
    for (let i = Math.max(0, Math.ceil(t0 / dt)); i < ns; i++) {
      const q = (i * dt - t0) / wowTau;
      trace[i] = trace[i]! + wowAmp * q * Math.exp(1 - q);
    }

    // Layer interfaces: mirror the transmitter in the (dipping) plane.
    for (let ii = 0; ii < m.medium.interfaces.length; ii++) {
      const itf = m.medium.interfaces[ii]!;
      const nn = Math.hypot(itf.gx, itf.gy, 1);
      const nx = -itf.gx / nn, ny = -itf.gy / nn, nz = 1 / nn;
      const h = (-itf.gx * tx.x - itf.gy * tx.y - itf.d0) / nn; // signed distance of Tx to the plane (negative: above)
      const ix = tx.x - 2 * h * nx, iy = tx.y - 2 * h * ny, iz = -2 * h * nz;
      const L = Math.hypot(ix - rx.x, iy - rx.y, iz - rx.z);
      const zs = interfaceDepth(itf, mx, my);
      if (zs <= 0) continue;
      rayAverages(m.medium, mx, my, zs * (1 - 1e-9), ray);
      const arrival = t0 + soilDelay + L * ray.slowness;
      if (arrival > recordEnd) continue;
      const cos = Math.min(1, (2 * Math.abs(h)) / L);
      const patch = extra.patch[ii] ? extra.patch[ii]!(mx, my) : 1;
      if (patch <= 0) continue;
      const amp = (patch * itf.r * ray.transmission * Math.pow(cos, 2 * beamN) * attenuationFactor(ray.attDbPerM, L)) / Math.max(L, MIN_PATH_M);
      addRicker(trace, dt, arrival, amp, f);
    }

    for (let ai = 0; ai < active.length; ai++) {
      const si = active[ai]!;
      const s = m.scatterers[si]!;
      let L: number;
      let amp: number;
      let arrival: number;
      if (s.medium === 'air') {
        // Reached through the air: no soil attenuation, no soil beam; the shield lets little energy out.
        if (s.type === 'segment') {
          if (s.outward && (mx - s.ax) * s.outward[0] + (my - s.ay) * s.outward[1] <= 0) continue;
          bistaticOnSegment(tx, rx, s.ax, s.ay, s.az, s.bx, s.by, s.bz, hit);
          L = hit.sum;
          arrival = t0 + L / C_M_PER_NS;
          if (arrival > recordEnd) continue;
          const segLen = Math.hypot(s.bx - s.ax, s.by - s.ay);
          const u = projectOnLine(mx, my, 0, s.ax, s.ay, 0, s.bx, s.by, 0);
          const rf = Math.sqrt((lambdaAir * L) / 4);
          amp = (m.shielding * s.r * edgeFactor(Math.min(u, 1 - u) * segLen, rf)) / Math.max(L, MIN_AIR_PATH_M);
        } else if (s.type === 'point') {
          // s.z: the height of an overhead point (0 for posts, trees and columns standing on the ground)
          const d1 = s.z === 0 ? Math.hypot(tx.x - s.x, tx.y - s.y) : Math.hypot(tx.x - s.x, tx.y - s.y, s.z);
          const d2 = s.z === 0 ? Math.hypot(rx.x - s.x, rx.y - s.y) : Math.hypot(rx.x - s.x, rx.y - s.y, s.z);
          L = Math.max(d1 + d2 - 2 * s.radius, 0);
          arrival = t0 + L / C_M_PER_NS;
          if (arrival > recordEnd) continue;
          const a = Math.max(s.radius, lambdaAir / 16);
          const Ls = Math.max(L, MIN_AIR_PATH_M);
          amp = m.shielding * s.r * Math.sqrt(a / Ls) * (2 / Ls);
        } else continue;
        addRicker(trace, dt, arrival, amp, f);
        record(s, si, amp, L / 2, arrival);
        continue;
      }

      // Buried: straight rays through the layered soil.
      let zRef: number;
      let cosTx: number;
      let cosRx: number;
      let geom: number;
      if (s.type === 'segment') {
        bistaticOnSegment(tx, rx, s.ax, s.ay, s.az, s.bx, s.by, s.bz, hit);
        const pz = s.az + hit.u * (s.bz - s.az);
        L = Math.max(hit.sum - 2 * s.radius, MIN_PATH_M);
        zRef = Math.max(pz - s.radius, 1e-3);
        cosTx = pz / hit.dTx;
        cosRx = pz / hit.dRx;
        rayAverages(m.medium, mx, my, zRef, ray);
        const lambda = 1 / (ray.slowness * fGHz);
        const a = Math.max(s.radius, lambda / 16);
        const ex = s.bx - s.ax, ey = s.by - s.ay;
        const planLen = Math.hypot(ex, ey);
        let pol = 1;
        if (s.polarised && planLen > 1e-9) {
          const c = (ex * line.dx + ey * line.dy) / planLen;
          pol = 0.35 + 0.65 * (1 - c * c);
        }
        const segLen = Math.hypot(ex, ey, s.bz - s.az);
        const u = projectOnLine(mx, my, 0, s.ax, s.ay, s.az, s.bx, s.by, s.bz);
        const rf = Math.sqrt((lambda * L) / 4);
        geom = pol * edgeFactor(Math.min(u, 1 - u) * segLen, rf) * Math.sqrt(a / L) * (2 / L);
      } else if (s.type === 'point') {
        const d1 = Math.hypot(tx.x - s.x, tx.y - s.y, s.z);
        const d2 = Math.hypot(rx.x - s.x, rx.y - s.y, s.z);
        L = Math.max(d1 + d2 - 2 * s.radius, MIN_PATH_M);
        zRef = Math.max(s.z - s.radius, 1e-3);
        cosTx = s.z / d1;
        cosRx = s.z / d2;
        rayAverages(m.medium, mx, my, zRef, ray);
        const lambda = 1 / (ray.slowness * fGHz);
        const a = Math.max(s.radius, lambda / 16);
        geom = (2 * a) / (L * L);
      } else {
        const px = mx - s.cx, py = my - s.cy;
        const along = px * s.ux + py * s.uy;
        const across = px * s.uy - py * s.ux;
        const ca = Math.max(-s.hl, Math.min(s.hl, along));
        const cw = Math.max(-s.hw, Math.min(s.hw, across));
        const qx = s.cx + ca * s.ux + cw * s.uy;
        const qy = s.cy + ca * s.uy - cw * s.ux;
        const qz = Math.max(s.cz - s.hh, 1e-3);
        const d1 = Math.hypot(tx.x - qx, tx.y - qy, qz);
        const d2 = Math.hypot(rx.x - qx, rx.y - qy, qz);
        L = Math.max(d1 + d2, MIN_PATH_M);
        zRef = qz;
        cosTx = qz / d1;
        cosRx = qz / d2;
        rayAverages(m.medium, mx, my, zRef, ray);
        const lambda = 1 / (ray.slowness * fGHz);
        const rf = Math.sqrt((lambda * L) / 4);
        const inside = Math.min(s.hl - Math.abs(along), s.hw - Math.abs(across));
        geom = (edgeFactor(inside, rf) * Math.min(1, (4 * s.hl * s.hw) / (Math.PI * rf * rf))) / L;
      }
      arrival = t0 + soilDelay + L * ray.slowness;
      if (arrival > recordEnd) continue;
      const beam = Math.pow(Math.max(0, cosTx) * Math.max(0, cosRx), beamN);
      amp = s.r * ray.transmission * attenuationFactor(ray.attDbPerM, L) * beam * geom;
      if (Math.abs(amp) < 1e-7) continue;
      addRicker(trace, dt, arrival, amp, f);
      record(s, si, amp, L / 2, arrival);
      if (s.type === 'segment' && s.echoes) for (let k = 1; k <= s.echoes.n; k++) addRicker(trace, dt, arrival + k * s.echoes.dtNs, amp * s.echoes.factor ** k, f);
    }

    // Coupling: a slowly varying amplitude of everything the antenna receives (not of the electronics' noise).
    if (extra.gain) {
      const g = extra.gain[j]!;
      for (let i = 0; i < ns; i++) trace[i] = trace[i]! * g;
    }

    if (m.noiseRms > 0 && m.noiseColour === 'pink') {
      pinkNoise(rn, ns, white);
      for (let i = 0; i < ns; i++) trace[i] = trace[i]! + white[i]! * m.noiseRms;
    } else if (m.noiseRms > 0) {
      // Band-limited random noise.
      for (let i = 0; i < ns; i++) white[i] = rn.gauss() * m.noiseRms;
      for (let i = 0; i < ns; i++) {
        let acc = 0;
        const k0 = Math.max(-kh, -i);
        const k1 = Math.min(kh, ns - 1 - i);
        for (let k = k0; k <= k1; k++) acc += (kernel[k + kh] as number) * (white[i + k] as number);
        trace[i] = trace[i]! + acc;
      }
    }
    const o = j * ns;
    for (let i = 0; i < ns; i++) data[o + i] = trace[i]!;
  }
  return { data, timeZeroNs: t0s, stats };
}

/**
 * Indices of the scatterers that can reach a trace of this line within the record: those whose plan
 * bounding box lies within the farthest one-way distance a wave travels in the record (at c in the air,
 * at the fastest layer velocity in the soil) of the line's bounding box. Keeps long lines and dense
 * clutter from costing (traces x scatterers of the whole site).
 */
function reachable(m: Model, line: LineGeom, recordEnd: number): Int32Array {
  let x0 = Infinity, y0 = Infinity, x1 = -Infinity, y1 = -Infinity;
  for (let j = 0; j < line.mx.length; j++) {
    const x = line.mx[j]!, y = line.my[j]!;
    if (x < x0) x0 = x;
    if (x > x1) x1 = x;
    if (y < y0) y0 = y;
    if (y > y1) y1 = y;
  }
  let vSoil = m.medium.v;
  for (const i of m.medium.interfaces) vSoil = Math.max(vSoil, i.v);
  const t = Math.max(0, recordEnd - m.timeZeroNs + 3 * m.timeZeroJitterNs + Math.abs(m.timeZeroDriftNs));
  const half = m.separationM / 2;
  const out: number[] = [];
  m.scatterers.forEach((s, i) => {
    const reach = ((s.medium === 'air' ? C_M_PER_NS : vSoil) * t) / 2 + half + 1;
    let sx0: number, sy0: number, sx1: number, sy1: number;
    if (s.type === 'segment') {
      sx0 = Math.min(s.ax, s.bx); sx1 = Math.max(s.ax, s.bx);
      sy0 = Math.min(s.ay, s.by); sy1 = Math.max(s.ay, s.by);
    } else if (s.type === 'point') {
      sx0 = sx1 = s.x; sy0 = sy1 = s.y;
    } else {
      const r = Math.hypot(s.hl, s.hw);
      sx0 = s.cx - r; sx1 = s.cx + r; sy0 = s.cy - r; sy1 = s.cy + r;
    }
    const dx = Math.max(0, sx0 - x1, x0 - sx1);
    const dy = Math.max(0, sy0 - y1, y0 - sy1);
    if (Math.hypot(dx, dy) <= reach) out.push(i);
  });
  return Int32Array.from(out);
}

interface LineEffects {
  /** Time-zero offset per trace (ns), steps along the line. */
  timeZeroStep: Float64Array | null;
  /** Relative amplitude per trace (coupling). */
  gain: Float64Array | null;
  /** Air gap under the antenna (m) at a plan position. */
  gap: ((x: number, y: number) => number) | null;
  /** Per interface: share of its reflection kept at a plan position (patchy layers). */
  patch: (((x: number, y: number) => number) | null)[];
}

/**
 * The optional effects of a richer scene, each from its own random stream (so a scene without them
 * keeps its bytes): steps of time-zero and a slowly varying coupling along the line; the same rough
 * ground and patches for every line (site-wide streams).
 */
function lineEffects(m: Model, line: LineGeom): LineEffects {
  const n = line.mx.length;
  const out: LineEffects = { timeZeroStep: null, gain: null, gap: null, patch: m.patches.map(() => null) };
  if (m.timeZeroStepsPerLine > 0 && m.timeZeroStepNs > 0) {
    const r = rng(m.scenario.seed, `tzsteps:${line.id}`);
    const steps = out.timeZeroStep = new Float64Array(n);
    for (let k = 0; k < m.timeZeroStepsPerLine; k++) {
      const at = Math.floor(r.next() * n);
      const d = (2 * r.next() - 1) * m.timeZeroStepNs;
      for (let j = at; j < n; j++) steps[j] = steps[j]! + d;
    }
  }
  if (m.couplingGainRms > 0) {
    const r = rng(m.scenario.seed, `coupling:${line.id}`);
    const field = randomField(r, m.couplingLengthM, 16);
    const g = out.gain = new Float64Array(n);
    let along = 0;
    for (let j = 0; j < n; j++) {
      if (j > 0) along += Math.hypot(line.mx[j]! - line.mx[j - 1]!, line.my[j]! - line.my[j - 1]!);
      g[j] = Math.max(0.05, 1 + m.couplingGainRms * field(along, 0));
    }
  }
  if (m.roughness.rmsM > 0) {
    const field = randomField(rng(m.scenario.seed, 'roughness'), m.roughness.correlationM);
    const rms = m.roughness.rmsM;
    out.gap = (x, y) => Math.abs(rms * field(x, y));
  }
  m.patches.forEach((p, i) => {
    if (p.patchiness <= 0) return;
    const field = randomField(rng(m.scenario.seed, `patches:${i}`), p.sizeM);
    const threshold = normalQuantile(p.patchiness);
    // a soft edge a tenth of the field's spread wide, so a patch boundary is not a step in the plan
    out.patch[i] = (x, y) => Math.max(0, Math.min(1, (field(x, y) - threshold) / 0.2 + 0.5));
  });
  return out;
}
