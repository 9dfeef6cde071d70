// Worker bootstrap: the sources are TypeScript, and Node 20 workers do not apply an `--import tsx`
// given in execArgv to their entry module, so register tsx's loader here and then load the entry.
import { register } from 'tsx/esm/api';

register();
await import('./worker.ts');
