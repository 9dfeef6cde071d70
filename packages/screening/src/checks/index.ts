// The air-wave checks, one file each; screen.ts combines their evidence.
export { fitMember, bestMoveOut, moveOutEvidence, moveOutWeight, type MemberCells, type MemberFit, type MoveOutResult } from './move-out';
export { slopeEvidence } from './slope';
export { edgeEvidence } from './edge-alignment';
export { postTrains, postEvidence, type PostTrainHit } from './post-train';
export { hyperbolaHits } from './air-hyperbola';
export { unsurveyedEvidence } from './unsurveyed';
export { beforeBackgroundEvidence } from './before-background';
