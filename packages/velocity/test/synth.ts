// Synthetic common-offset radargrams for the tests: Ricker wavelets at exact bistatic travel times.
import type { RadarLine } from '@lamina/radar-data';
export { mulberry32 as rng } from '@lamina/random';
import { mulberry32 as rng } from '@lamina/random';


export function gauss(u: () => number): () => number {
  return () => Math.sqrt(-2 * Math.log(1 - u())) * Math.cos(2 * Math.PI * u());
}

/** Ricker wavelet of peak frequency f (MHz) at lag tau (ns): (1 - 2 pi^2 f^2 tau^2) exp(-pi^2 f^2 tau^2). */
export function ricker(tauNs: number, fMHz: number): number {
  const a = (Math.PI * fMHz * 1e-3 * tauNs) ** 2;
  return (1 - 2 * a) * Math.exp(-a);
}

export interface Diffractor {
  /** Along-line position of the closest approach, m. */
  x0: number;
  /** Closest-approach distance (depth, or horizontal distance for an air object), m. */
  z: number;
  v: number;
  amp: number;
  /** A constant delay added to every trace's arrival, ns: a delayed copy (the ringing of a pipe). @default 0 */
  delayNs?: number;
}

export interface SynthOptions {
  nTraces?: number;
  spacingM?: number;
  nSamples?: number;
  dtNs?: number;
  fMHz?: number;
  separationM?: number;
  timeZeroNs?: number;
  noise?: number;
  seed?: number;
  /** Along-line unit vector and origin of the positions (site CRS units = m unless metresPerUnit). */
  heading?: [number, number];
  origin?: [number, number];
  metresPerUnit?: number;
  /** Flat events (ns after time-zero, amplitude), e.g. a direct wave or a layer. */
  flats?: [number, number][];
}

/** Travel time (bistatic) to a point diffractor. */
export function bistatic(dx: number, z: number, v: number, s: number): number {
  return (Math.hypot(dx - s / 2, z) + Math.hypot(dx + s / 2, z)) / v;
}

export function synthLine(id: string, diffractors: Diffractor[], o: SynthOptions = {}): RadarLine {
  const nT = o.nTraces ?? 300;
  const dx = o.spacingM ?? 0.05;
  const nS = o.nSamples ?? 512;
  const dt = o.dtNs ?? 0.1;
  const f = o.fMHz ?? 400;
  const s = o.separationM ?? 0.15;
  const tz = o.timeZeroNs ?? 5;
  const mpu = o.metresPerUnit ?? 1;
  const [hx, hy] = o.heading ?? [1, 0];
  const [ox, oy] = o.origin ?? [0, 0];
  const g = gauss(rng(o.seed ?? 1));
  const data = new Float32Array(nT * nS);
  const x = new Float64Array(nT);
  const y = new Float64Array(nT);
  const period = 1000 / f;
  for (let t = 0; t < nT; t++) {
    const pos = t * dx;
    x[t] = ox + (hx * pos) / mpu;
    y[t] = oy + (hy * pos) / mpu;
    for (const d of diffractors) {
      const tt = bistatic(pos - d.x0, d.z, d.v, s) + (d.delayNs ?? 0);
      const r = Math.hypot(pos - d.x0, d.z);
      // Beam falloff with angle from vertical (cos^2), spreading 1/r: a plausible shape, not a model of any antenna.
      const a = (d.amp * (d.z / r) ** 2) / Math.max(r, 0.05);
      const s0 = Math.max(0, Math.floor((tt + tz - 2 * period) / dt));
      const s1 = Math.min(nS - 1, Math.ceil((tt + tz + 2 * period) / dt));
      for (let k = s0; k <= s1; k++) data[t * nS + k] = data[t * nS + k]! + a * ricker(k * dt - tz - tt, f);
    }
    for (const [tf, af] of o.flats ?? []) {
      for (let k = 0; k < nS; k++) data[t * nS + k] = data[t * nS + k]! + af * ricker(k * dt - tz - tf, f);
    }
    if (o.noise) for (let k = 0; k < nS; k++) data[t * nS + k] = data[t * nS + k]! + o.noise * g();
  }
  return { id, nSamples: nS, nTraces: nT, dtNs: dt, data, x, y, timeZeroNs: tz };
}
