import { C_M_PER_NS } from '@lamina/constants';
import { velocityOf, reflectionCoefficient } from './physics';

/**
 * A layered soil: a top layer and interfaces below it, each a plane z = d0 + gx x + gy y (local metres,
 * depth positive down), gently dipping. Travel through the layers uses straight rays (no refraction)
 * with the slowness averaged over depth along the ray: for gentle dips and moderate contrasts this keeps
 * the times within a fraction of a sample of the refracted ray at the offsets a GPR hyperbola spans.
 */
export interface Interface {
  d0: number;
  gx: number;
  gy: number;
  /** Permittivity, attenuation (dB/m) and velocity below the interface. */
  k: number;
  attDbPerM: number;
  v: number;
  /** Reflection coefficient for a wave arriving from above (normal incidence). */
  r: number;
}

export interface Medium {
  k: number;
  v: number;
  attDbPerM: number;
  interfaces: Interface[];
}

export interface LayerSpec {
  depthM: number;
  permittivity: number;
  attenuationDbPerM?: number;
  dipDeg?: number;
  dipAzimuthDeg?: number;
}

export function buildMedium(permittivity: number, attenuationDbPerM: number, layers: readonly LayerSpec[] = []): Medium {
  let kAbove = permittivity;
  let attAbove = attenuationDbPerM;
  const interfaces: Interface[] = [];
  for (const l of layers) {
    const g = Math.tan(((l.dipDeg ?? 0) * Math.PI) / 180);
    const az = ((l.dipAzimuthDeg ?? 0) * Math.PI) / 180;
    const att = l.attenuationDbPerM ?? attAbove;
    interfaces.push({ d0: l.depthM, gx: g * Math.sin(az), gy: g * Math.cos(az), k: l.permittivity, attDbPerM: att, v: velocityOf(l.permittivity), r: reflectionCoefficient(kAbove, l.permittivity) });
    kAbove = l.permittivity;
    attAbove = att;
  }
  return { k: permittivity, v: velocityOf(permittivity), attDbPerM: attenuationDbPerM, interfaces };
}

export function interfaceDepth(i: Interface, x: number, y: number): number {
  return i.d0 + i.gx * x + i.gy * y;
}

export interface RayAverages {
  /** Mean slowness (ns/m) along a straight ray from the surface to depth z. */
  slowness: number;
  /** Mean attenuation (dB/m) along it. */
  attDbPerM: number;
  /** Two-way amplitude transmission through the interfaces above z: product of (1 - R^2). */
  transmission: number;
}

/** Averages over depth 0..z at plan position (x, y). A straight ray spends the same fraction of its length in each layer as of its depth. */
export function rayAverages(m: Medium, x: number, y: number, z: number, out: RayAverages = { slowness: 0, attDbPerM: 0, transmission: 1 }): RayAverages {
  if (m.interfaces.length === 0 || z <= 0) {
    out.slowness = 1 / m.v;
    out.attDbPerM = m.attDbPerM;
    out.transmission = 1;
    return out;
  }
  let top = 0;
  let v = m.v;
  let att = m.attDbPerM;
  let s = 0;
  let a = 0;
  let t = 1;
  for (const i of m.interfaces) {
    const d = Math.max(top, interfaceDepth(i, x, y));
    if (d >= z) break;
    s += (d - top) / v;
    a += (d - top) * att;
    t *= 1 - i.r * i.r;
    top = d;
    v = i.v;
    att = i.attDbPerM;
  }
  s += (z - top) / v;
  a += (z - top) * att;
  out.slowness = s / z;
  out.attDbPerM = a / z;
  out.transmission = t;
  return out;
}

/** Vertical two-way time (ns) from the surface to depth z at (x, y). */
export function verticalTwoWayTime(m: Medium, x: number, y: number, z: number): number {
  return 2 * z * rayAverages(m, x, y, z).slowness;
}

/** The depth whose vertical two-way time is t (ns) at (x, y): inverse of `verticalTwoWayTime` (bisection). */
export function depthOfTwoWayTime(m: Medium, x: number, y: number, t: number): number {
  if (t <= 0) return 0;
  let lo = 0;
  let hi = (t * C_M_PER_NS) / 2; // no layer is faster than air
  for (let i = 0; i < 60; i++) {
    const mid = (lo + hi) / 2;
    if (verticalTwoWayTime(m, x, y, mid) < t) lo = mid;
    else hi = mid;
  }
  return (lo + hi) / 2;
}
