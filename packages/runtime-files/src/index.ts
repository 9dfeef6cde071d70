export { bundled, bundleDir, bundledWorkerName, startWorker, workerFile } from './runtime-files';
