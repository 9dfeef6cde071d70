// Selection on float32 numbers for the kernels (the median of background removal, the detection's curve scores).

/** The value of rank k of the float32 numbers w[l..r] (no NaN), which it reorders: Hoare's selection. */
export function selectRank(w: usize, l: i32, r: i32, k: i32): f32 {
  const pk = w + (<usize>k << 2);
  while (l < r) {
    const x = load<f32>(pk);
    let i = l;
    let j = r;
    do {
      while (load<f32>(w + (<usize>i << 2)) < x) i++;
      while (x < load<f32>(w + (<usize>j << 2))) j--;
      if (i <= j) {
        const pi = w + (<usize>i << 2);
        const pj = w + (<usize>j << 2);
        const t = load<f32>(pi);
        store<f32>(pi, load<f32>(pj));
        store<f32>(pj, t);
        i++;
        j--;
      }
    } while (i <= j);
    if (j < k) l = i;
    if (k < i) r = j;
  }
  return load<f32>(pk);
}
