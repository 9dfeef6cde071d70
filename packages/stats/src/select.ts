export type NumericArray = Float32Array | Float64Array;

/**
 * Reorders `a` so that a[k] is its k-th smallest value (0-based), everything left of k is <= a[k] and
 * everything right of it >= a[k]; returns a[k]. Hoare partition with a median-of-three pivot, O(n) on
 * average, no sort. NaN has no order: drop it first.
 */
export function selectInPlace(a: NumericArray, k: number, left = 0, right = a.length - 1): number {
  while (right > left) {
    const mid = (left + right) >> 1;
    if (a[mid]! < a[left]!) swap(a, mid, left);
    if (a[right]! < a[left]!) swap(a, right, left);
    if (a[right]! < a[mid]!) swap(a, right, mid);
    const pivot = a[mid]!;
    let i = left;
    let j = right;
    while (i <= j) {
      while (a[i]! < pivot) i++;
      while (a[j]! > pivot) j--;
      if (i <= j) {
        swap(a, i, j);
        i++;
        j--;
      }
    }
    if (k <= j) right = j;
    else if (k >= i) left = i;
    else break;
  }
  return a[k]!;
}

/**
 * The k-th smallest of a[left..right] as `selectInPlace` finds it (the same value, and the same order
 * property: smaller or equal before k, larger or equal after), with a first partition around the value
 * `guess` (any number; the closer to the answer, the smaller the part left to it).
 */
export function selectNear(a: NumericArray, k: number, left: number, right: number, guess: number): number {
  // a[left..i-1] < guess <= a[i..right]
  let i = left;
  let j = right;
  for (;;) {
    while (i <= j && a[i]! < guess) i++;
    while (j >= i && a[j]! >= guess) j--;
    if (i >= j) break;
    swap(a, i, j);
    i++;
    j--;
  }
  return k < i ? selectInPlace(a, k, left, i - 1) : selectInPlace(a, k, i, right);
}

function swap(a: NumericArray, i: number, j: number): void {
  const t = a[i]!;
  a[i] = a[j]!;
  a[j] = t;
}
