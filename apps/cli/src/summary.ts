import type { ProcessSummary } from '@lamina/pipeline';
import { permittivitySpread } from '@lamina/velocity/physics';

/** The one-screen summary of `lamina process`: lines, velocity with its spread, slices, targets by state. */
export function summaryLines(s: ProcessSummary): string[] {
  const v = s.velocity;
  const kSpread = permittivitySpread(v.permittivity, v.velocityMPerNs, v.spreadMPerNs);
  const accepted = s.targetsAccepted ?? 0;
  return [
    `site ${s.site}: ${s.lines} lines, ${s.traces} traces`,
    `velocity ${v.velocityMPerNs.toFixed(4)} m/ns ± ${v.spreadMPerNs.toFixed(4)}, K ${v.permittivity.toFixed(2)} ± ${Number.isFinite(kSpread) ? kSpread.toFixed(2) : '–'} (${v.fitCount} fits)` +
      (v.uncertaintyMPerNs !== undefined ? `; site value ± ${v.uncertaintyMPerNs.toFixed(4)} m/ns (K ± ${permittivitySpread(v.permittivity, v.velocityMPerNs, v.uncertaintyMPerNs).toFixed(2)})` : ''),
    `${s.slices} depth slices, ${s.anomalies} anomalies`,
    `targets: ${accepted} accepted, ${s.targets - accepted} candidates to review; ${s.aboveGround} anomalies flagged above-ground`,
  ];
}
