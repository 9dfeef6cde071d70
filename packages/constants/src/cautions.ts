/**
 * The cautions every output meant for people near utilities carries: the report, the viewer, the
 * command line and the GeoJSON files. The one wording in the tool; README.md's "Cautions" repeats it
 * (a test keeps the two equal).
 */
export const CAUTIONS: readonly string[] = [
  'Radar finds are not a locate. Lamina shows reflections interpreted from ground-penetrating radar; it does not establish the presence, absence, position or type of any utility.',
  'Call the one-call (call-before-you-dig) centre and wait for the utility owners to mark their lines before any digging.',
  'Verify every target by potholing (vacuum or hand excavation) before excavating nearby with machinery.',
  'Depths carry uncertainty: they depend on the radar velocity of the soil, which varies across a site and with moisture. The ranges given combine the spread of the measured velocities, the uncertainty of the site velocity itself (large when few objects gave hyperbolas, largest when none did and 0.1 m/ns was assumed), the slice thickness and the length of the radar pulse; interpretation adds to them.',
  'Defer to local codes, owner requirements and licensed professional practice (quality level B in the sense of CI/ASCE 38-22 is designating by geophysical methods only).',
];

/** `CAUTIONS` in one line, where a single line fits (a terminal summary, a GeoJSON `caution` member). */
export const CAUTION =
  'Radar finds are not a locate: call the one-call centre before digging, verify by potholing, treat depths as uncertain, and defer to local codes and licensed practice.';
