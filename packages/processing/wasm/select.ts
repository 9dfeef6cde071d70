// Selection for the kernels (the median of background removal, the detection's curve scores and robust
// weights). Any selection finds the same value of a rank (no NaN); the sign of a zero is the callers' care.

/** The value of rank k of the numbers w[l..r] of type T (f32 or f64, no NaN), which it reorders: Hoare's selection. */
export function selectRank<T>(w: usize, l: i32, r: i32, k: i32): T {
  const size = sizeof<T>();
  const pk = w + <usize>k * size;
  while (l < r) {
    const x = load<T>(pk);
    let i = l;
    let j = r;
    do {
      while (load<T>(w + <usize>i * size) < x) i++;
      while (x < load<T>(w + <usize>j * size)) j--;
      if (i <= j) {
        const pi = w + <usize>i * size;
        const pj = w + <usize>j * size;
        const t = load<T>(pi);
        store<T>(pi, load<T>(pj));
        store<T>(pj, t);
        i++;
        j--;
      }
    } while (i <= j);
    if (j < k) l = i;
    if (k < i) r = j;
  }
  return load<T>(pk);
}
