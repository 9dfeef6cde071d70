// Worker bootstrap: the sources are TypeScript and Node 20 workers do not apply `--import tsx` from
// execArgv to their entry module, so register tsx's loader here, then load the entry.
import { register } from 'tsx/esm/api';

register();
await import('./idw-worker.ts');
