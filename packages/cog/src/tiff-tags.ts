/** Classic little-endian TIFF fields: types, counts and the bytes of an IFD entry's values. */
// TIFF field types
export const SHORT = 3;
export const LONG = 4;
export const ASCII = 2;
export const DOUBLE = 12;

/** One TIFF field: its code, field type and values (a string for ASCII). */
export interface Tag {
  code: number;
  type: number;
  values: number[] | string;
}

export function setTag(tags: Tag[], code: number, values: number[]) {
  const t = tags.find((x) => x.code === code);
  if (!t) throw new Error(`encodeCog: tag ${code} missing`);
  t.values = values;
}

export function tagCount(t: Tag): number {
  return typeof t.values === 'string' ? t.values.length + 1 : t.values.length;
}

export function outOfLineSize(t: Tag): number {
  const n = tagBytesLength(t);
  return n <= 4 ? 0 : n;
}

export function tagBytesLength(t: Tag): number {
  const width = t.type === SHORT ? 2 : t.type === LONG ? 4 : t.type === DOUBLE ? 8 : 1;
  return tagCount(t) * width;
}

export function tagBytes(t: Tag): Uint8Array {
  const out = new Uint8Array(tagBytesLength(t));
  const dv = new DataView(out.buffer);
  if (typeof t.values === 'string') {
    for (let i = 0; i < t.values.length; i++) out[i] = t.values.charCodeAt(i) & 0xff;
    return out;
  }
  for (const [i, v] of t.values.entries()) {
    if (t.type === SHORT) dv.setUint16(i * 2, v, true);
    else if (t.type === LONG) dv.setUint32(i * 4, v, true);
    else dv.setFloat64(i * 8, v, true);
  }
  return out;
}

export function padEven(n: number): number {
  return n + (n % 2);
}
