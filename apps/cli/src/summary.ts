import type { ProcessSummary } from '@lamina/pipeline';

/** The one-screen summary of `lamina process`: lines, velocity with its spread, slices, targets by state. */
export function summaryLines(s: ProcessSummary): string[] {
  const v = s.velocity;
  // K = (c / v)^2, so dK / K = 2 dv / v: the spread of K from the spread of v
  const kSpread = v.velocityMPerNs > 0 ? (2 * v.permittivity * v.spreadMPerNs) / v.velocityMPerNs : NaN;
  const accepted = s.targetsAccepted ?? 0;
  return [
    `site ${s.site}: ${s.lines} lines, ${s.traces} traces`,
    `velocity ${v.velocityMPerNs.toFixed(4)} m/ns ± ${v.spreadMPerNs.toFixed(4)}, K ${v.permittivity.toFixed(2)} ± ${Number.isFinite(kSpread) ? kSpread.toFixed(2) : '–'} (${v.fitCount} fits)`,
    `${s.slices} depth slices, ${s.anomalies} anomalies`,
    `targets: ${accepted} accepted, ${s.targets - accepted} candidates to review; ${s.aboveGround} anomalies flagged above-ground`,
  ];
}
