// Worker boot when running from source: register tsx's loader inside the worker (Node 20 workers do not
// inherit the parent's), then load the TypeScript entry module named in workerData.
import { workerData } from 'node:worker_threads';
import { register } from 'tsx/esm/api';

register();
await import(workerData.entry);
