#!/usr/bin/env node
// `pnpm lamina`: runs the built CLI (apps/cli/dist), rebuilding it first when a source changed. The
// staleness check reads only mtimes, so an up-to-date build starts at once.
import { pathToFileURL } from 'node:url';
import { ensureBuilt } from './build.mjs';

const main = await ensureBuilt({ log: (s) => process.stderr.write(`${s}\n`) });
await import(pathToFileURL(main).href);
