import type { RadarLine } from '@lamina/radar-data';
import { fftOfSize, nextPow2 } from './fft';
import { band, checkLayers, fk2d, fkLine, halfOrderFilter, ifk2d, kxOf, paddedSizes, shiftSpectrum, type FkLineOptions, type MigrationLayer } from './fk';

export interface PhaseShiftOptions extends FkLineOptions {
  /** Interval velocities by depth from the surface (m, m/ns); the last layer extends down. */
  layers: readonly MigrationLayer[];
}

export interface PhaseShiftKernelOptions {
  /** @default 60 */
  maxAngleDeg?: number;
  /** @default Infinity */
  apertureM?: number;
  /** @default 0.2 */
  taper?: number;
  /** Run the inverse (phase-shift modelling, demigration). @default false */
  inverse?: boolean;
  /** Half-integral of the input before migration (half-derivative of the output after modelling). @default false */
  halfIntegral?: boolean;
  /** @default 1e-6 */
  energyTolerance?: number;
}

/**
 * Each output step (sample k-1 -> k of vertical two-way time, the first from tau = 0) as segments of
 * (layer, duration ns) through the layers' two-way vertical times.
 */
function stepSegments(nSamples: number, dtNs: number, timeZeroNs: number, layers: readonly MigrationLayer[]) {
  const tauTop = new Float64Array(layers.length + 1);
  for (let l = 1; l < layers.length; l++) {
    const a = layers[l - 1] as MigrationLayer;
    tauTop[l] = (tauTop[l - 1] as number) + (2 * ((layers[l] as MigrationLayer).topM - a.topM)) / a.velocityMPerNs;
  }
  tauTop[layers.length] = Infinity;
  let first = 0;
  while (first < nSamples && first * dtNs - timeZeroNs <= 0) first++;
  const steps: { layer: number; ns: number }[][] = [];
  let prev = 0;
  for (let k = first; k < nSamples; k++) {
    const tau = k * dtNs - timeZeroNs;
    const segs: { layer: number; ns: number }[] = [];
    for (let l = 0; l < layers.length; l++) {
      const a = Math.max(prev, tauTop[l] as number);
      const b = Math.min(tau, tauTop[l + 1] as number);
      if (b > a) segs.push({ layer: l, ns: b - a });
    }
    steps.push(segs);
    prev = tau;
  }
  return { first, steps };
}

/**
 * Gazdag (1978) phase-shift migration of a zero-offset section through layered interval velocities, or
 * with `inverse` its modelling. Each (kx, omega) component is continued down in steps of vertical two-way
 * time tau by e^{i omega dtau cos(theta_l)}, cos(theta_l) = sqrt(1 - (v_l kx / (2 omega))^2) in the layer
 * of the step (a component evanescent in a layer is dropped from there down), and imaged at t = 0:
 * I(kx, tau) = sum over omega of the continued field, with the dip limit of the local angle. Modelling is
 * P(kx, omega) = sum over tau of I(kx, tau) e^{-i phi(tau)} / cos(theta_l(tau)) with the same weights,
 * which inverts migration inside the dip limit (one layer: exactly the Stolt pair, without interpolation).
 * Sample k is at k dt - timeZeroNs on both axes; the output at or before time-zero is zero.
 */
export function phaseShiftKernel(
  data: ArrayLike<number>,
  nTraces: number,
  nSamples: number,
  dtNs: number,
  dxM: number,
  timeZeroNs: number,
  layersIn: readonly MigrationLayer[],
  options: PhaseShiftKernelOptions = {},
  out: Float32Array = new Float32Array(nTraces * nSamples),
): Float32Array {
  const layers = checkLayers(layersIn);
  const maxAngleDeg = options.maxAngleDeg ?? 60;
  const taper = Math.min(1, Math.max(0, options.taper ?? 0.2));
  const tol = options.energyTolerance ?? 1e-6;
  const nl = layers.length;
  const ve = layers.map((l) => l.velocityMPerNs / 2);
  const { nx, nt } = paddedSizes(nTraces, nSamples, dtNs, dxM, Math.max(...ve), maxAngleDeg, 1, nextPow2);
  const nw = nt / 2 + 1;
  const dw = (2 * Math.PI) / (nt * dtNs);
  const { first, steps } = stepSegments(nSamples, dtNs, timeZeroNs, layers);
  const nk = steps.length;
  // runs of steps in one layer with the full sample step (one rotation each); other steps alone
  const runs: { from: number; to: number; layer: number; uniform: boolean }[] = [];
  steps.forEach((segs, k) => {
    const layer = (segs[segs.length - 1] as { layer: number }).layer;
    const uniform = segs.length === 1 && k > 0;
    const last = runs[runs.length - 1];
    if (uniform && last && last.uniform && last.layer === layer && last.to === k) last.to = k + 1;
    else runs.push({ from: k, to: k + 1, layer, uniform });
  });
  // the angle limit of each step: min(maxAngle, atan(aperture / z)) at the step's depth
  const aperture = options.apertureM ?? Infinity;
  const thMax = (Math.min(maxAngleDeg, 90) * Math.PI) / 180;
  const sin1 = new Float64Array(nk);
  const sinM = new Float64Array(nk);
  const th1 = new Float64Array(nk);
  const thM = new Float64Array(nk);
  for (let k = 0; k < nk; k++) {
    const z = depthAt((first + k) * dtNs - timeZeroNs, layers);
    const t = Math.min(thMax, z > 0 ? Math.atan(aperture / z) : thMax);
    thM[k] = t;
    th1[k] = t * (1 - taper);
    sinM[k] = Math.sin(t);
    sin1[k] = Math.sin(t * (1 - taper));
  }
  const weight = (k: number, s: number, th: number): number => {
    if (s <= (sin1[k] as number)) return 1;
    if (s >= (sinM[k] as number)) return 0;
    return 0.5 * (1 + Math.cos((Math.PI * (th - (th1[k] as number))) / ((thM[k] as number) - (th1[k] as number))));
  };
  const cosL = new Float64Array(nl);
  const sinL = new Float64Array(nl);
  const thL = new Float64Array(nl);
  const rotRe = new Float64Array(nl);
  const rotIm = new Float64Array(nl);

  if (!options.inverse) {
    const { spec, lo, hi } = fk2d(data, nTraces, nSamples, nx, nt, tol);
    if (options.halfIntegral) halfOrderFilter(spec, nx, nt, dtNs, -0.5, lo, hi);
    shiftSpectrum(spec, nx, nt, dtNs, timeZeroNs, lo, hi);
    // S[ix][k]: the image at step k of wavenumber row ix, summed over omega
    const img = new Float64Array(2 * nx * nk);
    for (let ix = 0; ix < nx; ix++) {
      const kx = Math.abs(kxOf(ix, nx, dxM));
      const o = 2 * ix * nk;
      for (let m = Math.max(lo, 1); m <= hi; m++) {
        const w = m * dw;
        if (!layerTerms(w, kx, ve, dtNs, cosL, sinL, thL, rotRe, rotIm)) continue;
        if ((sinL[0] as number) >= (sinM[0] as number) && nl === 1) continue; // past the dip limit everywhere
        const half = m === nw - 1 ? 0.5 : 1;
        let pr = spec[2 * (ix * nw + m)] as number;
        let pi = spec[2 * (ix * nw + m) + 1] as number;
        for (const run of runs) {
          const l = run.layer;
          const c = cosL[l] as number;
          if (c < 0) break; // evanescent from here down
          const sl = sinL[l] as number;
          const tl = thL[l] as number;
          let k = run.from;
          if (!run.uniform) {
            let ph = 0;
            for (const sg of steps[k] as { layer: number; ns: number }[]) ph += w * sg.ns * Math.max(0, cosL[sg.layer] as number);
            const rr = Math.cos(ph);
            const ri = Math.sin(ph);
            const nr = pr * rr - pi * ri;
            pi = pr * ri + pi * rr;
            pr = nr;
            const g = half * weight(k, sl, tl);
            img[o + 2 * k] = (img[o + 2 * k] as number) + g * pr;
            img[o + 2 * k + 1] = (img[o + 2 * k + 1] as number) + g * pi;
            continue;
          }
          const rr = rotRe[l] as number;
          const ri = rotIm[l] as number;
          // the limit only narrows with depth: full weight up to kFull, tapered up to kZero, nothing after
          let kFull = run.to;
          if (sl > (sin1[run.to - 1] as number)) {
            kFull = k;
            while (kFull < run.to && sl <= (sin1[kFull] as number)) kFull++;
          }
          for (; k < kFull; k++) {
            const nr = pr * rr - pi * ri;
            pi = pr * ri + pi * rr;
            pr = nr;
            img[o + 2 * k] = (img[o + 2 * k] as number) + half * pr;
            img[o + 2 * k + 1] = (img[o + 2 * k + 1] as number) + half * pi;
          }
          for (; k < run.to; k++) {
            const g = half * weight(k, sl, tl);
            if (g === 0) break;
            const nr = pr * rr - pi * ri;
            pi = pr * ri + pi * rr;
            pr = nr;
            img[o + 2 * k] = (img[o + 2 * k] as number) + g * pr;
            img[o + 2 * k + 1] = (img[o + 2 * k + 1] as number) + g * pi;
          }
          if (k < run.to) {
            // the rest of this layer images nothing: advance the phase over it at once
            const ph = w * dtNs * c * (run.to - k);
            const cr = Math.cos(ph);
            const ci = Math.sin(ph);
            const nr = pr * cr - pi * ci;
            pi = pr * ci + pi * cr;
            pr = nr;
          }
        }
      }
      // omega = 0 (half weight): only kx = 0 propagates; it is the trace mean, unchanged with depth
      if (ix === 0 && lo === 0) {
        const d0 = 0.5 * (spec[0] as number);
        for (let k = 0; k < nk; k++) img[2 * k] = (img[2 * k] as number) + d0;
      }
    }
    // image = (2 / nt) Re IFFT_x (S): the omega < 0 half is the conjugate of the omega > 0 half
    const fx = fftOfSize(nx);
    const col = new Float64Array(2 * nx);
    const res = new Float64Array(2 * nx);
    out.fill(0);
    for (let k = 0; k < nk; k++) {
      for (let ix = 0; ix < nx; ix++) {
        col[2 * ix] = img[2 * (ix * nk + k)] as number;
        col[2 * ix + 1] = img[2 * (ix * nk + k) + 1] as number;
      }
      fx.inverseTransform(res, col);
      for (let i = 0; i < nTraces; i++) out[i * nSamples + first + k] = (2 / nt) * (res[2 * i] as number);
    }
    return out;
  }

  // modelling: the image across traces, per tau sample
  const fx = fftOfSize(nx);
  const col = new Float64Array(2 * nx);
  const res = new Float64Array(2 * nx);
  const img = new Float64Array(2 * nx * nk);
  for (let k = 0; k < nk; k++) {
    col.fill(0);
    for (let i = 0; i < nTraces; i++) col[2 * i] = data[i * nSamples + first + k] as number;
    fx.transform(res, col);
    for (let ix = 0; ix < nx; ix++) {
      img[2 * (ix * nk + k)] = res[2 * ix] as number;
      img[2 * (ix * nk + k) + 1] = res[2 * ix + 1] as number;
    }
  }
  // the band of the image's vertical spectrum, widened to the data frequencies the dip limit allows
  const ft = fftOfSize(nt);
  const real = new Float64Array(nt);
  const cplx = new Float64Array(2 * nt);
  const power = new Float64Array(nw);
  for (let i = 0; i < nTraces; i++) {
    real.fill(0);
    for (let k = 0; k < nk; k++) real[k] = data[i * nSamples + first + k] as number;
    ft.realTransform(cplx, real);
    for (let m = 0; m < nw; m++) power[m] = (power[m] as number) + (cplx[2 * m] as number) ** 2 + (cplx[2 * m + 1] as number) ** 2;
  }
  const [lo, hiTau] = band(power, tol);
  const cosMax = Math.cos((Math.min(maxAngleDeg, 89.9) * Math.PI) / 180);
  const hi = Math.min(nw - 1, Math.ceil(hiTau / cosMax));
  const spec = new Float64Array(2 * nx * nw);
  for (let ix = 0; ix < nx; ix++) {
    const kx = Math.abs(kxOf(ix, nx, dxM));
    const o = 2 * ix * nk;
    for (let m = Math.max(lo, 1); m <= hi; m++) {
      const w = m * dw;
      if (!layerTerms(w, kx, ve, dtNs, cosL, sinL, thL, rotRe, rotIm)) continue;
      if ((sinL[0] as number) >= (sinM[0] as number) && nl === 1) continue;
      // phase e^{-i phi}: rotate by the conjugates
      let pr = 1;
      let pi = 0;
      let sr = 0;
      let si = 0;
      for (const run of runs) {
        const l = run.layer;
        const c = cosL[l] as number;
        if (c < 0) break;
        const sl = sinL[l] as number;
        const tl = thL[l] as number;
        let rr = rotRe[l] as number;
        let ri = -(rotIm[l] as number);
        for (let k = run.from; k < run.to; k++) {
          if (!run.uniform) {
            let ph = 0;
            for (const sg of steps[k] as { layer: number; ns: number }[]) ph += w * sg.ns * Math.max(0, cosL[sg.layer] as number);
            rr = Math.cos(ph);
            ri = -Math.sin(ph);
          }
          const nr = pr * rr - pi * ri;
          pi = pr * ri + pi * rr;
          pr = nr;
          const g = weight(k, sl, tl);
          if (g === 0) continue;
          const ir = img[o + 2 * k] as number;
          const ii = img[o + 2 * k + 1] as number;
          sr += (g / c) * (ir * pr - ii * pi);
          si += (g / c) * (ir * pi + ii * pr);
        }
      }
      spec[2 * (ix * nw + m)] = sr;
      spec[2 * (ix * nw + m) + 1] = si;
    }
    if (ix === 0 && lo === 0) {
      let s0 = 0;
      for (let k = 0; k < nk; k++) s0 += img[2 * k] as number;
      spec[0] = s0;
    }
  }
  shiftSpectrum(spec, nx, nt, dtNs, -timeZeroNs, lo, hi);
  if (options.halfIntegral) halfOrderFilter(spec, nx, nt, dtNs, 0.5, lo, hi);
  return ifk2d(spec, nTraces, nSamples, nx, nt, out, lo, hi);
}

/** Per layer: cos(theta) (-1 when evanescent), sin and angle, and the one-sample rotation e^{i omega dt cos}. False when nothing propagates in the first layer. */
function layerTerms(
  w: number,
  kx: number,
  ve: readonly number[],
  dtNs: number,
  cosL: Float64Array,
  sinL: Float64Array,
  thL: Float64Array,
  rotRe: Float64Array,
  rotIm: Float64Array,
): boolean {
  let any = false;
  let dead = false;
  for (let l = 0; l < ve.length; l++) {
    const s = ((ve[l] as number) * kx) / w;
    if (dead || s >= 1) {
      dead = true;
      cosL[l] = -1;
      continue;
    }
    const c = Math.sqrt(1 - s * s);
    cosL[l] = c;
    sinL[l] = s;
    thL[l] = Math.asin(s);
    rotRe[l] = Math.cos(w * dtNs * c);
    rotIm[l] = Math.sin(w * dtNs * c);
    if (l === 0) any = true;
  }
  return any;
}

/** Depth (m) at vertical two-way time tau (ns) through the layers. */
function depthAt(tauNs: number, layers: readonly MigrationLayer[]): number {
  let z = 0;
  let left = tauNs;
  for (let i = 0; i < layers.length; i++) {
    const l = layers[i] as MigrationLayer;
    const next = layers[i + 1];
    const tThick = next ? (2 * (next.topM - l.topM)) / l.velocityMPerNs : Infinity;
    if (left <= tThick) return z + (left * l.velocityMPerNs) / 2;
    z = next ? next.topM : z;
    left -= tThick;
  }
  return z;
}

/**
 * Phase-shift migration of a common-offset line through a layered model: resampled to zero-offset time,
 * migrated by `phaseShiftKernel` on regular slots of the mean trace spacing, resampled back to the input's
 * time axis; samples before the ground wave pass through. `out` may be `line.data`.
 */
export function phaseShiftMigrate(line: RadarLine, options: PhaseShiftOptions, out?: Float32Array): RadarLine {
  return phaseShiftLine(line, options, false, out);
}

/** Phase-shift modelling (demigration): the inverse of `phaseShiftMigrate` inside the dip limit. */
export function phaseShiftModel(line: RadarLine, options: PhaseShiftOptions, out?: Float32Array): RadarLine {
  return phaseShiftLine(line, options, true, out);
}

function phaseShiftLine(line: RadarLine, options: PhaseShiftOptions, inverse: boolean, out?: Float32Array): RadarLine {
  const layers = checkLayers(options.layers);
  return fkLine(line, layers, options, inverse, (zo, nt, ns, dt, dx, tz, settings) => phaseShiftKernel(zo, nt, ns, dt, dx, tz, layers, settings), out);
}
