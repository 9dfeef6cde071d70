export { bundled, bundleDir, bundledWorkerName, startWorker, workerFile } from './runtime-files';
export { createPool, serveTasks, defaultThreads, reviveError, type Pool, type SerialisedError } from './pool';
