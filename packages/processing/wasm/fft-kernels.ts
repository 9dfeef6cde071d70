// AssemblyScript source of the WebAssembly kernels of `WasmFFT` (../src/fft-wasm.ts): the Stockham
// stages of `MixedRadixFFT` (../src/fft.ts), the same formulas on interleaved complex float64 numbers,
// one complex number per 128-bit SIMD vector. Built by scripts/build-wasm.mjs into
// ../src/fft-wasm-binary.ts (the module as base64); rebuild after a change here.
// Pointers are byte offsets into the module's memory. `tw` holds, per twiddle w = (wr, wi), the two
// vectors (wr, wr) and (-wi, wi) (conjugated for the inverse), so that z w = z * (wr, wr) + swap(z) * (-wi, wi).

@inline function swap(z: v128): v128 {
  return v128.shuffle<f64>(z, z, 1, 0);
}

/** z w, the twiddle's two vectors loaded once before the loop over q (loads do not move past its stores). */
@inline function twiddled(z: v128, wr: v128, wi: v128): v128 {
  return f64x2.add(f64x2.mul(z, wr), f64x2.mul(swap(z), wi));
}

/** -i sg z = swap(z) * (sg, -sg): `nsg` is the vector (sg, -sg). */
@inline function mulNegI(z: v128, nsg: v128): v128 {
  return f64x2.mul(swap(z), nsg);
}

export function radix2(x: usize, y: usize, m: i32, s: i32, tw: usize): void {
  const sm = <usize>(s * m) << 4;
  for (let j = 0; j < m; j++) {
    const t = tw + (<usize>j << 5);
    const w1r = v128.load(t), w1i = v128.load(t, 16);
    for (let q = 0; q < s; q++) {
      const i0 = x + (<usize>(q + s * j) << 4);
      const a = v128.load(i0);
      const b = v128.load(i0 + sm);
      const o = y + (<usize>(q + s * 2 * j) << 4);
      v128.store(o, f64x2.add(a, b));
      v128.store(o + (<usize>s << 4), twiddled(f64x2.sub(a, b), w1r, w1i));
    }
  }
}

/**
 * One radix-4 butterfly: the four points at i0 + k sm into o + k os, outputs 1-3 times the twiddles
 * w1..w3 unless `unit` (the last stage, m = 1). Inlined with `unit` a constant, as `butterfly5`.
 */
@inline function butterfly4(
  i0: usize, sm: usize, o: usize, os: usize, nsg: v128, unit: bool,
  w1r: v128, w1i: v128, w2r: v128, w2i: v128, w3r: v128, w3i: v128,
): void {
  const a = v128.load(i0);
  const b = v128.load(i0 + sm);
  const c = v128.load(i0 + 2 * sm);
  const d = v128.load(i0 + 3 * sm);
  const t0 = f64x2.add(a, c);
  const t1 = f64x2.sub(a, c);
  const t2 = f64x2.add(b, d);
  const t3 = mulNegI(f64x2.sub(b, d), nsg);
  v128.store(o, f64x2.add(t0, t2));
  if (unit) {
    v128.store(o + os, f64x2.add(t1, t3));
    v128.store(o + 2 * os, f64x2.sub(t0, t2));
    v128.store(o + 3 * os, f64x2.sub(t1, t3));
  } else {
    v128.store(o + os, twiddled(f64x2.add(t1, t3), w1r, w1i));
    v128.store(o + 2 * os, twiddled(f64x2.sub(t0, t2), w2r, w2i));
    v128.store(o + 3 * os, twiddled(f64x2.sub(t1, t3), w3r, w3i));
  }
}

export function radix4(x: usize, y: usize, m: i32, s: i32, tw: usize, sg: f64): void {
  const sm = <usize>(s * m) << 4;
  const os = <usize>s << 4;
  const nsg = f64x2(sg, -sg);
  for (let j = 0; j < m; j++) {
    const t = tw + <usize>j * 96;
    const w1r = v128.load(t), w1i = v128.load(t, 16);
    const w2r = v128.load(t, 32), w2i = v128.load(t, 48);
    const w3r = v128.load(t, 64), w3i = v128.load(t, 80);
    for (let q = 0; q < s; q++) {
      butterfly4(x + (<usize>(q + s * j) << 4), sm, y + (<usize>(q + s * 4 * j) << 4), os, nsg, false, w1r, w1i, w2r, w2i, w3r, w3i);
    }
  }
}

/** `radix4` for m = 1: unit twiddles. */
export function radix4Last(x: usize, y: usize, s: i32, sg: f64): void {
  const sm = <usize>s << 4;
  const nsg = f64x2(sg, -sg);
  const z = f64x2.splat(0);
  for (let q = 0; q < s; q++) butterfly4(x + (<usize>q << 4), sm, y + (<usize>q << 4), sm, nsg, true, z, z, z, z, z, z);
}

export function radix3(x: usize, y: usize, m: i32, s: i32, tw: usize, sg: f64): void {
  const sm = <usize>(s * m) << 4;
  const os = <usize>s << 4;
  const half = f64x2.splat(0.5);
  const k3 = f64x2(sg * 0.8660254037844386, -sg * 0.8660254037844386);
  for (let j = 0; j < m; j++) {
    const t = tw + <usize>j * 64;
    const w1r = v128.load(t), w1i = v128.load(t, 16);
    const w2r = v128.load(t, 32), w2i = v128.load(t, 48);
    for (let q = 0; q < s; q++) {
      const i0 = x + (<usize>(q + s * j) << 4);
      const a = v128.load(i0);
      const b = v128.load(i0 + sm);
      const c = v128.load(i0 + 2 * sm);
      const sum = f64x2.add(b, c);
      const mid = f64x2.sub(a, f64x2.mul(half, sum));
      const dd = f64x2.mul(swap(f64x2.sub(b, c)), k3);
      const o = y + (<usize>(q + s * 3 * j) << 4);
      v128.store(o, f64x2.add(a, sum));
      v128.store(o + os, twiddled(f64x2.add(mid, dd), w1r, w1i));
      v128.store(o + 2 * os, twiddled(f64x2.sub(mid, dd), w2r, w2i));
    }
  }
}

/**
 * One radix-5 butterfly: the five points at i0 + k sm into o + k os, outputs 1-4 times the twiddles
 * w1..w4 unless `unit` (the last stage, m = 1: unit twiddles, z (1, 1) + swap(z) (-0, 0) is z). Inlined
 * with `unit` a constant, so each caller compiles to its own loop.
 */
@inline function butterfly5(
  i0: usize, sm: usize, o: usize, os: usize, c1: v128, c2: v128, s1: v128, s2: v128, unit: bool,
  w1r: v128, w1i: v128, w2r: v128, w2i: v128, w3r: v128, w3i: v128, w4r: v128, w4i: v128,
): void {
  const a = v128.load(i0);
  const b = v128.load(i0 + sm);
  const c = v128.load(i0 + 2 * sm);
  const d = v128.load(i0 + 3 * sm);
  const e = v128.load(i0 + 4 * sm);
  const p1 = f64x2.add(b, e);
  const m1 = swap(f64x2.sub(b, e));
  const p2 = f64x2.add(c, d);
  const m2 = swap(f64x2.sub(c, d));
  const r1 = f64x2.add(a, f64x2.add(f64x2.mul(c1, p1), f64x2.mul(c2, p2)));
  const r2 = f64x2.add(a, f64x2.add(f64x2.mul(c2, p1), f64x2.mul(c1, p2)));
  // -i sg (S1 m1 + S2 m2) and -i sg (S2 m1 - S1 m2)
  const q1 = f64x2.add(f64x2.mul(s1, m1), f64x2.mul(s2, m2));
  const q2 = f64x2.sub(f64x2.mul(s2, m1), f64x2.mul(s1, m2));
  v128.store(o, f64x2.add(a, f64x2.add(p1, p2)));
  if (unit) {
    v128.store(o + os, f64x2.add(r1, q1));
    v128.store(o + 2 * os, f64x2.add(r2, q2));
    v128.store(o + 3 * os, f64x2.sub(r2, q2));
    v128.store(o + 4 * os, f64x2.sub(r1, q1));
  } else {
    v128.store(o + os, twiddled(f64x2.add(r1, q1), w1r, w1i));
    v128.store(o + 2 * os, twiddled(f64x2.add(r2, q2), w2r, w2i));
    v128.store(o + 3 * os, twiddled(f64x2.sub(r2, q2), w3r, w3i));
    v128.store(o + 4 * os, twiddled(f64x2.sub(r1, q1), w4r, w4i));
  }
}

const C1 = 0.30901699437494745;
const C2 = -0.8090169943749473;
const S1 = 0.9510565162951535;
const S2 = 0.5877852522924732;

/** `radix5` for m = 1: unit twiddles. */
export function radix5Last(x: usize, y: usize, s: i32, sg: f64): void {
  const sm = <usize>s << 4;
  const c1 = f64x2.splat(C1);
  const c2 = f64x2.splat(C2);
  const s1 = f64x2(sg * S1, -sg * S1);
  const s2 = f64x2(sg * S2, -sg * S2);
  const z = f64x2.splat(0);
  for (let q = 0; q < s; q++) {
    butterfly5(x + (<usize>q << 4), sm, y + (<usize>q << 4), sm, c1, c2, s1, s2, true, z, z, z, z, z, z, z, z);
  }
}

export function radix5(x: usize, y: usize, m: i32, s: i32, tw: usize, sg: f64): void {
  const sm = <usize>(s * m) << 4;
  const os = <usize>s << 4;
  const c1 = f64x2.splat(C1);
  const c2 = f64x2.splat(C2);
  const s1 = f64x2(sg * S1, -sg * S1);
  const s2 = f64x2(sg * S2, -sg * S2);
  for (let j = 0; j < m; j++) {
    const t = tw + <usize>j * 128;
    const w1r = v128.load(t), w1i = v128.load(t, 16);
    const w2r = v128.load(t, 32), w2i = v128.load(t, 48);
    const w3r = v128.load(t, 64), w3i = v128.load(t, 80);
    const w4r = v128.load(t, 96), w4i = v128.load(t, 112);
    for (let q = 0; q < s; q++) {
      butterfly5(x + (<usize>(q + s * j) << 4), sm, y + (<usize>(q + s * 5 * j) << 4), os, c1, c2, s1, s2, false, w1r, w1i, w2r, w2i, w3r, w3i, w4r, w4i);
    }
  }
}

/**
 * The analytic signal's step of `hilbertEnvelopePair` (../src/envelope.ts): the spectrum at x (n complex
 * numbers) times -i sgn(k), zero at 0 and n/2, into y. -i z = swap(z) (1, -1), +i z = swap(z) (-1, 1).
 */
export function hilbertMul(x: usize, y: usize, n: i32): void {
  const half = n >> 1;
  const neg = f64x2(1, -1);
  const pos = f64x2(-1, 1);
  v128.store(y, f64x2.splat(0));
  for (let k = 1; k < half; k++) {
    const o = <usize>k << 4;
    v128.store(y + o, f64x2.mul(swap(v128.load(x + o)), neg));
  }
  v128.store(y + (<usize>half << 4), f64x2.splat(0));
  for (let k = half + 1; k < n; k++) {
    const o = <usize>k << 4;
    v128.store(y + o, f64x2.mul(swap(v128.load(x + o)), pos));
  }
}

/**
 * Envelopes of two traces: x holds (a, b) interleaved, h their Hilbert transforms times n (the unscaled
 * inverse); out[i] = sqrt(x^2 + (h s)^2) per lane for i < m, s = 1/n.
 */
export function envelopePair(x: usize, h: usize, out: usize, m: i32, s: f64): void {
  const sv = f64x2.splat(s);
  for (let i = 0; i < m; i++) {
    const o = <usize>i << 4;
    const xv = v128.load(x + o);
    const hv = f64x2.mul(v128.load(h + o), sv);
    v128.store(out + o, f64x2.sqrt(f64x2.add(f64x2.mul(xv, xv), f64x2.mul(hv, hv))));
  }
}
