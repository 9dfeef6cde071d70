import FFT from 'fft.js';

/** Smallest power of two >= n (and >= 2, fft.js's minimum size). */
export function nextPow2(n: number): number {
  let p = 2;
  while (p < n) p *= 2;
  return p;
}

// fft.js tables are costly to build; lines reuse a handful of sizes.
const cache = new Map<number, FFT>();

export function fftOfSize(n: number): FFT {
  let f = cache.get(n);
  if (!f) {
    f = new FFT(n);
    cache.set(n, f);
  }
  return f;
}
