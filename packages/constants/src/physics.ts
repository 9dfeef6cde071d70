/**
 * Speed of light in vacuum, m/ns. The one value of c in the tool, rounded to four figures (the exact
 * 0.299792458 differs by 2.5e-5 relative, far below any velocity uncertainty in a survey). It lives in a
 * package with no dependencies because the lowest layers (processing's time-zero, the site's survey
 * checks, the simulator) need it as much as @lamina/velocity, which re-exports it.
 */
export const C_M_PER_NS = 0.2998;
