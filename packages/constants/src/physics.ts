/**
 * Speed of light in vacuum, m/ns. The one value of c in the tool, rounded to four figures (the exact
 * 0.299792458 differs by 2.5e-5 relative, far below any velocity uncertainty in a survey). It lives in a
 * package with no dependencies because the lowest layers (processing's time-zero, the site's survey
 * checks, the simulator) need it as much as @lamina/velocity, which re-exports it.
 */
export const C_M_PER_NS = 0.2998;

/**
 * Largest diameter of a utility, m (common practice, no source): wider linear objects are culverts or
 * structures. The classes' width bound (@lamina/anomalies `maxUtilityDiameterM`) and the radius bound of
 * the hyperbola fit (@lamina/velocity `maxRadiusM`, half of it) both start from it.
 */
export const MAX_UTILITY_DIAMETER_M = 1.5;

/**
 * End of the direct- and ground-wave zone in two-way time after time-zero, ns: the ground wave arrives
 * at separation / v and rings about one period of the antenna frequency (common practice, no source).
 * The near-surface zone of the slices (@lamina/velocity `nearSurfaceDepthM`) is this time in depth, and
 * the `airEvents` step (@lamina/processing) lets the plan carry its mask inside it.
 */
export function nearSurfaceTimeNs(frequencyMHz: number, separationM: number, velocityMPerNs: number): number {
  return separationM / velocityMPerNs + 1000 / frequencyMHz;
}
