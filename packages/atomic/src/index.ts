export { writeFileAtomic, stageFile, stageFolder, type StagedFile, type StagedFolder } from './atomic';
