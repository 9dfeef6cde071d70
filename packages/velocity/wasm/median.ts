// The median of float32 numbers for the detection's kernels.
import { selectRank } from '../../processing/wasm/select';

/** `medianInPlace` (@lamina/stats) of the n float32 numbers at w (no NaN), which it reorders. */
export function medianOf(w: usize, n: i32): f64 {
  const k = n >> 1;
  const hi = <f64>selectRank<f32>(w, 0, n - 1, k);
  if (n & 1) return hi;
  let lo = -Infinity;
  for (let i = 0; i < k; i++) {
    const x = <f64>load<f32>(w + (<usize>i << 2));
    if (x > lo) lo = x;
  }
  return 0.5 * (lo + hi);
}
