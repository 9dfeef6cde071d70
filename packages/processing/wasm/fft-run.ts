// The stages of an FFT plan inside the module, for kernels that transform in their own loops (the line
// kernels' Stolt maps): `WasmFFT.stageRun` (../src/fft-wasm.ts) in WebAssembly, the same radix kernels
// on the same twiddles (laid out by `twiddleImage`), so the same numbers.
import { radix2, radix3, radix4, radix4Last, radix5, radix5Last } from './fft-kernels';

/**
 * The transform (the inverse without its 1/n) of the n complex numbers at `from`, left as they were,
 * through the work arrays b and c; returns the pointer of the result (b or c). `plan` holds int32 n, the
 * number of stages, then per stage its radix and the pointers of its forward and inverse twiddles.
 */
export function runPlan(plan: usize, from: usize, b: usize, c: usize, inverse: bool): usize {
  const stages = load<i32>(plan, 4);
  const sg: f64 = inverse ? -1 : 1;
  let x = from;
  let y = b;
  let s = 1;
  let len = load<i32>(plan);
  for (let st = 0; st < stages; st++) {
    const e = plan + 8 + <usize>(12 * st);
    const p = load<i32>(e);
    const tw = <usize>load<i32>(e + (inverse ? 8 : 4));
    const m = len / p;
    if (p == 4) {
      if (m == 1) radix4Last(x, y, s, sg);
      else radix4(x, y, m, s, tw, sg);
    } else if (p == 2) radix2(x, y, m, s, tw);
    else if (p == 3) radix3(x, y, m, s, tw, sg);
    else if (m == 1) radix5Last(x, y, s, sg);
    else radix5(x, y, m, s, tw, sg);
    if (st == 0) {
      x = y;
      y = c;
    } else {
      const t = x;
      x = y;
      y = t;
    }
    s *= p;
    len = m;
  }
  return x;
}
