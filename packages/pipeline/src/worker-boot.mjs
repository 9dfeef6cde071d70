// Worker entry: workers do not inherit the parent's TypeScript loader on Node 20, so register tsx here
// and then load the TypeScript task module named in workerData.
import { workerData } from 'node:worker_threads';
const { register } = await import('tsx/esm/api');
register();
await import(workerData.entry);
