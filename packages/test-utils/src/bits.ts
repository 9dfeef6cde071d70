/**
 * A number's exact value as text, for comparing two computations bit for bit in `toEqual`: -0 apart from
 * +0 (String(-0) is "0"), NaN equal to NaN.
 */
export function bits(x: number): string {
  return Object.is(x, -0) ? '-0' : String(x);
}
