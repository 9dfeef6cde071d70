export { writeFileAtomic, stageFolder, type StagedFolder } from './atomic';
