export { writeFileAtomic, stageFile, stageStream, stageFolder, type StagedFile, type StagedStream, type StagedFolder } from './atomic';
export { lockFolder, type FolderLock, type LockOptions } from './lock';
