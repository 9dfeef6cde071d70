/** Small geometric kernels on plain numbers (local metres; z is depth, positive down). */

export interface Vec3 {
  x: number;
  y: number;
  z: number;
}

export function dist3(ax: number, ay: number, az: number, bx: number, by: number, bz: number): number {
  const dx = ax - bx;
  const dy = ay - by;
  const dz = az - bz;
  return Math.sqrt(dx * dx + dy * dy + dz * dz);
}

export interface SegmentHit {
  /** Parameter of the reflection point on the segment, 0..1 (clamped). */
  u: number;
  /** |Tx - P| + |P - Rx| at that point. */
  sum: number;
  /** Distances from each antenna to P. */
  dTx: number;
  dRx: number;
}

const GOLDEN = (Math.sqrt(5) - 1) / 2;

/**
 * The point P of segment A-B minimising the bistatic path |Tx - P| + |P - Rx| (the reflection point of
 * Fermat's principle). The sum of distances to a line is convex in the line parameter, so a golden-section
 * search on [0, 1] finds the global minimum; 48 steps shrink the bracket by 1e-10.
 */
export function bistaticOnSegment(
  tx: Vec3,
  rx: Vec3,
  ax: number, ay: number, az: number,
  bx: number, by: number, bz: number,
  out: SegmentHit = { u: 0, sum: 0, dTx: 0, dRx: 0 },
): SegmentHit {
  const ex = bx - ax;
  const ey = by - ay;
  const ez = bz - az;
  const f = (u: number): number => {
    const px = ax + u * ex;
    const py = ay + u * ey;
    const pz = az + u * ez;
    return dist3(tx.x, tx.y, tx.z, px, py, pz) + dist3(rx.x, rx.y, rx.z, px, py, pz);
  };
  let lo = 0;
  let hi = 1;
  let c = hi - GOLDEN * (hi - lo);
  let d = lo + GOLDEN * (hi - lo);
  let fc = f(c);
  let fd = f(d);
  for (let i = 0; i < 48; i++) {
    if (fc < fd) {
      hi = d;
      d = c;
      fd = fc;
      c = hi - GOLDEN * (hi - lo);
      fc = f(c);
    } else {
      lo = c;
      c = d;
      fc = fd;
      d = lo + GOLDEN * (hi - lo);
      fd = f(d);
    }
  }
  let u = (lo + hi) / 2;
  let best = f(u);
  // The minimum may sit on an end point; the bracket only approaches it.
  const f0 = f(0);
  const f1 = f(1);
  if (f0 < best) { u = 0; best = f0; }
  if (f1 < best) { u = 1; best = f1; }
  const px = ax + u * ex;
  const py = ay + u * ey;
  const pz = az + u * ez;
  out.u = u;
  out.dTx = dist3(tx.x, tx.y, tx.z, px, py, pz);
  out.dRx = dist3(rx.x, rx.y, rx.z, px, py, pz);
  out.sum = out.dTx + out.dRx;
  return out;
}

/** Parameter of the orthogonal projection of point M on the infinite line through A-B (unclamped). */
export function projectOnLine(mx: number, my: number, mz: number, ax: number, ay: number, az: number, bx: number, by: number, bz: number): number {
  const ex = bx - ax;
  const ey = by - ay;
  const ez = bz - az;
  const l2 = ex * ex + ey * ey + ez * ez;
  return l2 === 0 ? 0 : ((mx - ax) * ex + (my - ay) * ey + (mz - az) * ez) / l2;
}

/**
 * Amplitude factor near the end of a finite reflector: 1 well inside, 0.5 at the end (the shadow boundary
 * of the edge diffraction), decaying outside. `s` is the signed distance of the specular point inside the
 * reflector (negative beyond its end) and `rf` the radius of the first Fresnel zone.
 */
export function edgeFactor(s: number, rf: number): number {
  if (s >= 0) return 0.5 + 0.5 * Math.min(1, s / rf);
  const q = s / rf;
  return 0.5 / (1 + q * q);
}

/** Signed area of a ring (positive when counter-clockwise in x-east, y-north axes). */
export function ringArea(ring: readonly (readonly [number, number])[]): number {
  let a = 0;
  for (let i = 0; i < ring.length; i++) {
    const p = ring[i]!;
    const q = ring[(i + 1) % ring.length]!;
    a += p[0] * q[1] - q[0] * p[1];
  }
  return a / 2;
}
