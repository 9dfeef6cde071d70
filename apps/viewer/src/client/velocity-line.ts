import { permittivityFromVelocity, permittivitySpread } from '@lamina/velocity/physics';
import type { VelocityJson } from './data';

/**
 * What the depths rest on, in one line for the side panel: the site velocity and permittivity with their
 * spread, the uncertainty of the site value itself (velocity.json `uncertaintyMPerNs`) and the number of
 * hyperbola fits, and velocity.json's site note when it has one (an assumed velocity, fits only in the
 * direct-wave zone, a survey's own velocity). `warn` when there is a note or no fit: the depths then
 * rest on an assumption, and the line takes the cautions' colours.
 */
export function velocityLine(velocity: VelocityJson | undefined): { text: string; warn: boolean } {
  if (!velocity) return { text: 'Depths: no velocity.json in this folder.', warn: true };
  const s = velocity.site;
  const kSite = s.permittivity ?? permittivityFromVelocity(s.velocityMPerNs);
  const spreadK = s.spreadMPerNs ? permittivitySpread(kSite, s.velocityMPerNs, s.spreadMPerNs) : NaN;
  const fits = s.fitCount ?? 0;
  const basis = fits > 0 ? `from ${fits} hyperbola fit${fits === 1 ? '' : 's'}${s.objectCount ? ` on ${s.objectCount} object${s.objectCount === 1 ? '' : 's'}` : ''}` : 'assumed, no hyperbola fit';
  const uK = s.uncertaintyMPerNs ? permittivitySpread(kSite, s.velocityMPerNs, s.uncertaintyMPerNs) : NaN;
  const k = `K ${kSite.toFixed(2)}${Number.isFinite(spreadK) && fits > 0 ? ` ± ${spreadK.toFixed(2)}` : ''}${Number.isFinite(uK) ? `, site value ± ${uK.toFixed(1)}` : ''}`;
  const text = `Depths: ${k} (v ${s.velocityMPerNs.toFixed(4)} m/ns), ${basis}${velocity.model?.kind === 'layered' ? `; ${velocity.model.layers.length} layers` : ''}.${s.note ? ` ${s.note.charAt(0).toUpperCase()}${s.note.slice(1)}.` : ''}`;
  return { text, warn: fits === 0 || s.note !== undefined };
}
