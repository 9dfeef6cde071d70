import { UTILITY_TYPES, type UtilityType } from '@lamina/contracts';

export { UTILITY_TYPES, type UtilityType };

/**
 * APWA uniform colour code for marking underground utilities (as adopted in ANSI Z535.1 safety colours;
 * colours from memory of the published chart, hex values our own choice of a clear screen colour).
 */
export const APWA_COLOURS: Record<UtilityType, { name: string; hex: string; meaning: string }> = {
  electric: { name: 'red', hex: '#e41a1c', meaning: 'Electric power lines, cables, conduit and lighting cables' },
  communication: { name: 'orange', hex: '#ff7f00', meaning: 'Communication, alarm or signal lines, cables or conduit' },
  gas: { name: 'yellow', hex: '#ffd700', meaning: 'Gas, oil, steam, petroleum or gaseous materials' },
  water: { name: 'blue', hex: '#1f78b4', meaning: 'Potable water' },
  reclaimed: { name: 'purple', hex: '#8e44ad', meaning: 'Reclaimed water, irrigation and slurry lines' },
  sewer: { name: 'green', hex: '#33a02c', meaning: 'Sewers and drain lines' },
  'temporary-survey': { name: 'pink', hex: '#ff69b4', meaning: 'Temporary survey markings' },
  'proposed-excavation': { name: 'white', hex: '#ffffff', meaning: 'Proposed excavation limits or route' },
  unknown: { name: 'grey', hex: '#9e9e9e', meaning: 'Utility type not yet identified (not an APWA colour)' },
};
