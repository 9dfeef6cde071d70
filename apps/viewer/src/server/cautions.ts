/** Shown in the about panel, with every export, and in the terminal by `lamina view`. */
export const CAUTIONS = [
  'Radar finds are not a utility locate: they are indications for further investigation, not a mark-out.',
  'Call the one-call centre (in the US, 811) before any digging, whatever this map shows.',
  'Verify any target by potholing (vacuum or hand excavation) before digging near it.',
  'Depths carry uncertainty: they rest on an estimated soil velocity that varies with moisture and material.',
  'Defer to local codes and licensed practice (for example ASCE 38 quality levels) for any decision on site.',
] as const;
