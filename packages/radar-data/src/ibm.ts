/**
 * IBM System/360 single-precision hexadecimal floating point (SEG-Y sample format 1).
 * Bit layout: sign (1), exponent (7, excess 64, base 16), fraction (24, no hidden bit):
 * value = (-1)^s * 0.f * 16^(e - 64). Every IBM value in float32's range converts to float32 exactly
 * (at most 24 significant bits); float32 -> IBM loses up to 3 bits when the leading hex digit is small.
 */

/** SCALE[e] = 16^(e-64) / 2^24: multiply the 24-bit fraction by it. Powers of two, so exact. */
const SCALE = new Float64Array(128);
/** INV_SCALE[e] = 1 / SCALE[e]. */
const INV_SCALE = new Float64Array(128);
for (let e = 0; e < 128; e++) {
  SCALE[e] = 2 ** (4 * (e - 64) - 24);
  INV_SCALE[e] = 2 ** (24 - 4 * (e - 64));
}

/** SIGNED_SCALE[top byte] = +-SCALE[exponent]: sign and exponent in one lookup. */
const SIGNED_SCALE = new Float64Array(256);
for (let b = 0; b < 256; b++) SIGNED_SCALE[b] = (b & 0x80 ? -1 : 1) * SCALE[b & 0x7f]!;

const TWO24 = 0x1000000;
const TWO20 = 0x100000;

/** IBM bits (as an unsigned 32-bit integer) to a number. */
export function ibmToNumber(bits: number): number {
  const frac = bits & 0xffffff;
  const v = frac * SCALE[(bits >>> 24) & 0x7f]!;
  return bits & 0x80000000 ? -v : v;
}

/**
 * A finite number to IBM bits, rounded to nearest (ties to even). Magnitudes below the smallest IBM
 * value (16^-65) become zero; above the largest (about 7.24e75) saturate. NaN is the caller's problem:
 * it encodes as zero.
 */
export function numberToIbm(v: number): number {
  if (!(v !== 0 && v === v)) return 0;
  const sign = v < 0 ? 0x80000000 : 0;
  const a = v < 0 ? -v : v;
  if (a === Infinity) return (sign | 0x7fffffff) >>> 0;
  // Hex exponent h with 16^(h-1) <= a < 16^h; log2 only seeds it, the loops make it exact.
  let e = (Math.floor(Math.log2(a)) >> 2) + 65;
  if (e > 127) e = 127;
  if (e < 0) e = 0;
  let t = a * INV_SCALE[e]!;
  while (t >= TWO24 && e < 127) t = a * INV_SCALE[++e]!;
  while (t < TWO20 && e > 0) t = a * INV_SCALE[--e]!;
  if (t >= TWO24) return (sign | 0x7fffffff) >>> 0;
  let f = Math.floor(t);
  const r = t - f;
  if (r > 0.5 || (r === 0.5 && (f & 1) === 1)) f++;
  if (f === TWO24) {
    if (e === 127) return (sign | 0x7fffffff) >>> 0;
    e++;
    f = TWO20;
  }
  if (f === 0) return 0;
  return (sign | (e << 24) | f) >>> 0;
}

/** Decode `n` IBM words (already in host order) into `out[outOffset...]`. */
export function ibmWordsToFloat32(words: Uint32Array, out: Float32Array, outOffset = 0): void {
  for (let i = 0; i < words.length; i++) {
    const u = words[i]!;
    out[outOffset + i] = (u & 0xffffff) * SIGNED_SCALE[u >>> 24]!;
  }
}

/** Encode float samples as IBM words in host order. */
export function float32ToIbmWords(src: ArrayLike<number>, words: Uint32Array): void {
  for (let i = 0; i < words.length; i++) words[i] = numberToIbm(src[i]!);
}
