export { scoreRun, type ScoreTruth, type ScoreOptions, type ScoreReport, type BuriedScore } from './score';
export { scoreFolder, readScoreTruth, type FolderScore } from './score-folder';
