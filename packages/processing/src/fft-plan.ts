/**
 * The stages of a Stockham FFT of size n (`MixedRadixFFT`, and `WasmFFT`, which runs the same stages in
 * WebAssembly): radix 4 as long as it divides, then 2, 3 and 5; and per stage, on length len = p m, the
 * twiddles w^(k q) = e^(-i 2 pi k q / len) for q < m, k = 1..p-1, interleaved re/im at 2 (q (p - 1) + k - 1).
 */
export function fftStages(n: number): { radices: number[]; twiddles: Float64Array[] } {
  if (!(n >= 2) || n !== Math.floor(n)) throw new Error(`fft: size must be an integer >= 2, found ${n}`);
  const radices: number[] = [];
  let r = n;
  while (r % 4 === 0) {
    radices.push(4);
    r /= 4;
  }
  for (const p of [2, 3, 5]) {
    while (r % p === 0) {
      radices.push(p);
      r /= p;
    }
  }
  if (r !== 1) throw new Error(`fft: size must have no prime factor above 5, found ${n}`);
  const twiddles: Float64Array[] = [];
  let len = n;
  for (const p of radices) {
    const m = len / p;
    const tw = new Float64Array(2 * m * (p - 1));
    for (let q = 0; q < m; q++) {
      for (let k = 1; k < p; k++) {
        const a = (-2 * Math.PI * q * k) / len;
        tw[2 * (q * (p - 1) + k - 1)] = Math.cos(a);
        tw[2 * (q * (p - 1) + k - 1) + 1] = Math.sin(a);
      }
    }
    twiddles.push(tw);
    len = m;
  }
  return { radices, twiddles };
}
