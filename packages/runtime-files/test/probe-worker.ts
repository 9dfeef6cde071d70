// A worker entry for the test: answers n + 1 (typed, so it runs only if the boot registered tsx).
import { parentPort } from 'node:worker_threads';

parentPort?.on('message', (n: number) => parentPort?.postMessage(n + 1));
