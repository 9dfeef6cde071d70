/**
 * Seeded pseudo-random numbers (sfc32 seeded through splitmix32), so a scenario and a seed give the
 * same bytes on every run. Each line draws from its own stream (`stream(seed, key)`), so lines can be
 * simulated in any order or in parallel and still agree.
 */
export interface Rng {
  /** Uniform in [0, 1). */
  next(): number;
  /** Standard normal (Box-Muller). */
  gauss(): number;
  /** Uniform in [lo, hi). */
  range(lo: number, hi: number): number;
}

function splitmix32(a: number): () => number {
  return () => {
    a = (a + 0x9e3779b9) | 0;
    let z = a;
    z = Math.imul(z ^ (z >>> 16), 0x85ebca6b);
    z = Math.imul(z ^ (z >>> 13), 0xc2b2ae35);
    return (z ^ (z >>> 16)) >>> 0;
  };
}

/** FNV-1a of a string, to turn a stream key (line id, "clutter") into 32 bits. */
export function hash32(s: string): number {
  let h = 0x811c9dc5;
  for (let i = 0; i < s.length; i++) h = Math.imul(h ^ s.charCodeAt(i), 0x01000193);
  return h >>> 0;
}

export function rng(seed: number, key = ''): Rng {
  const sm = splitmix32((Math.floor(seed) ^ hash32(key)) | 0);
  let a = sm() | 0;
  let b = sm() | 0;
  let c = sm() | 0;
  let d = sm() | 0;
  const next = (): number => {
    // sfc32
    const t = (((a + b) | 0) + d) | 0;
    d = (d + 1) | 0;
    a = b ^ (b >>> 9);
    b = (c + (c << 3)) | 0;
    c = (c << 21) | (c >>> 11);
    c = (c + t) | 0;
    return (t >>> 0) / 4294967296;
  };
  for (let i = 0; i < 12; i++) next();
  let spare: number | undefined;
  return {
    next,
    gauss() {
      if (spare !== undefined) {
        const s = spare;
        spare = undefined;
        return s;
      }
      let u = 0;
      while (u === 0) u = next();
      const v = next();
      const r = Math.sqrt(-2 * Math.log(u));
      spare = r * Math.sin(2 * Math.PI * v);
      return r * Math.cos(2 * Math.PI * v);
    },
    range(lo, hi) {
      return lo + (hi - lo) * next();
    },
  };
}
