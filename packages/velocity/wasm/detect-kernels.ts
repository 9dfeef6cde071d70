// AssemblyScript source of the WebAssembly kernels of the hyperbola detection (../src/detect-wasm.ts):
// the velocity scan of `detectHyperbolas` (../src/detect.ts), its curve scores over the normalised
// envelope, the JavaScript's arithmetic in the same order in float64 with the same float32 roundings, so
// the same scores. Built by scripts/build-wasm.mjs into ../src/detect-wasm-binary.ts; rebuild after a
// change here. Pointers are byte offsets into the module's memory, laid out by ../src/detect-wasm.ts.
import { medianOf } from './median';

@inline function f64At(p: usize, i: i32): f64 {
  return load<f64>(p + (<usize>i << 3));
}

/** Whether any of the n float32 numbers at p is NaN (the scan's medians then go to the JavaScript). */
export function anyNaN(p: usize, n: i32): bool {
  for (let i = 0; i < n; i++) {
    const x = load<f32>(p + (<usize>i << 2));
    if (x != x) return true;
  }
  return false;
}

/** `apexDistance` of ../src/fit.ts. */
@inline function apexDistance(t0Ns: f64, v: f64, separationM: f64): f64 {
  const r = (v * t0Ns) / 2;
  const h = separationM / 2;
  return r > h ? Math.sqrt(r * r - h * h) : 0;
}

/** `pointPath` of ../src/fit.ts. */
@inline function pointPath(dx: f64, z: f64, h: f64): f64 {
  const ax = -dx + h;
  const bx = -dx - h;
  return max(Math.sqrt(ax * ax + z * z), 1e-12) + max(Math.sqrt(bx * bx + z * z), 1e-12);
}

// the line of the scan (`scanLine`)
let gN: usize = 0;
let gAlong: usize = 0;
let gTraces: i32 = 0;
let gSamples: i32 = 0;
let gSep: f64 = 0;
let gSpacing: f64 = 0;
let gTanA: f64 = 0;
let gMaxAp: f64 = 0;
let gDt: f64 = 0;
let gTz: f64 = 0;
let gLeft: usize = 0;
let gRight: usize = 0;

/**
 * The line the scan reads: the normalised envelope N (float32, nTraces x nSamples), the traces' offsets
 * along the line (float64), the detection's settings, and two float32 arrays of nTraces for the flanks.
 */
export function scanLine(N: usize, along: usize, nTraces: i32, nSamples: i32, sep: f64, spacing: f64, tanA: f64, maxAp: f64, dtNs: f64, timeZeroNs: f64, left: usize, right: usize): void {
  gN = N;
  gAlong = along;
  gTraces = nTraces;
  gSamples = nSamples;
  gSep = sep;
  gSpacing = spacing;
  gTanA = tanA;
  gMaxAp = maxAp;
  gDt = dtNs;
  gTz = timeZeroNs;
  gLeft = left;
  gRight = right;
}

/** The normalised envelope at trace t, fractional sample sf (linear; 0 outside the record): `at` of detect.ts. */
@inline function at(t: i32, sf: f64): f64 {
  if (sf < 0 || sf > <f64>(gSamples - 1)) return 0;
  const s0 = Math.floor(sf);
  const f = sf - s0;
  const p = gN + (<usize>(t * gSamples + <i32>s0) << 2);
  const a = <f64>load<f32>(p);
  return f > 0 ? a + f * (<f64>load<f32>(p, 4) - a) : a;
}

// `traceRange`'s result
let rangeA: i32 = 0;
let rangeB: i32 = 0;

/** `traceRange` of detect.ts: the traces within x0 -+ ap, by bisection, into rangeA, rangeB. */
function traceRange(x0: f64, ap: f64): void {
  const lo = x0 - ap;
  let a = 0;
  let r = gTraces - 1;
  while (a < r) {
    const m = (a + r) >> 1;
    if (f64At(gAlong, m) < lo) a = m + 1;
    else r = m;
  }
  const hi = x0 + ap;
  let l = 0;
  let b = gTraces - 1;
  while (l < b) {
    const m = (l + b + 1) >> 1;
    if (f64At(gAlong, m) > hi) b = m - 1;
    else l = m;
  }
  rangeA = a;
  rangeB = b;
}

/** `curveScore` of detect.ts: the smaller flank median of the normalised envelope along the curve, or `floor`. */
function curveScore(x0: f64, z: f64, v: f64, ap: f64, floor: f64): f64 {
  traceRange(x0, ap);
  const a = rangeA;
  const b = rangeB;
  const stride = max(1, <i32>Math.ceil(<f64>(b - a + 1) / 120));
  const skip = 1.5 * gSpacing;
  let nl = 0;
  let nr = 0;
  for (let j = a; j <= b; j += stride) {
    const d = f64At(gAlong, j) - x0;
    if (Math.abs(d) < skip) continue;
    if (d < 0) nl++;
    else nr++;
  }
  if (nl < 2 || nr < 2) return 0;
  let il = 0;
  let ir = 0;
  let bl = 0;
  let br = 0;
  const h = gSep / 2;
  for (let j = a; j <= b; j += stride) {
    const xj = f64At(gAlong, j);
    const d = xj - x0;
    if (Math.abs(d) < skip) continue;
    const u = at(j, (pointPath(xj - x0, z, h) / v + gTz) / gDt);
    if (d < 0) {
      store<f32>(gLeft + (<usize>il << 2), <f32>u);
      il++;
      if (!(u > floor) && 2 * ++bl > nl) return floor;
    } else {
      store<f32>(gRight + (<usize>ir << 2), <f32>u);
      ir++;
      if (!(u > floor) && 2 * ++br > nr) return floor;
    }
  }
  return min(medianOf(gLeft, nl), medianOf(gRight, nr));
}

/**
 * The scan of one apex candidate (examineAll of detect.ts): at traces ct -+ apexShift and each of the nV
 * velocities, the score of the curve of apex time t0 (`curveScore` with `floor`), the best per velocity
 * into scoreV (float64, -1 where none) with its apex offset into xV.
 */
export function scanCandidate(ct: i32, t0: f64, apexShift: i32, velocities: usize, nV: i32, floor: f64, scoreV: usize, xV: usize): void {
  for (let k = 0; k < nV; k++) store<f64>(scoreV + (<usize>k << 3), -1);
  for (let dj = -apexShift; dj <= apexShift; dj++) {
    const j = ct + dj;
    if (j < 0 || j >= gTraces) continue;
    const x0 = f64At(gAlong, j);
    for (let k = 0; k < nV; k++) {
      const v = f64At(velocities, k);
      const z = apexDistance(t0, v, gSep);
      if (!(z > 0)) continue;
      const sc = curveScore(x0, z, v, min(gMaxAp, max(5 * gSpacing, z * gTanA)), floor);
      if (sc > f64At(scoreV, k)) {
        store<f64>(scoreV + (<usize>k << 3), sc);
        store<f64>(xV + (<usize>k << 3), x0);
      }
    }
  }
}

export { irls, irlsWorkBytes } from './fit';
export { apexMaxima, normalisedEnvelope } from './noise-level';

/** Where the module's own static data ends: arrays laid out from JavaScript start at or after it. */
export function heapBase(): usize {
  return __heap_base;
}
