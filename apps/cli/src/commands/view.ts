import type { Command } from 'commander';
import { stat } from 'node:fs/promises';
import { join, resolve } from 'node:path';
import { InputError } from '@lamina/errors';
import { bundleDir, bundled } from '@lamina/runtime-files';
import { action } from '../run';
import { CAUTIONS } from '@lamina/constants';
import { ensureViewerBuilt, startViewerServer } from '@lamina/viewer';

interface ViewOptions {
  port: string;
  host: string;
  basemap?: string;
  rebuild?: boolean;
}

export function register(program: Command): void {
  program
    .command('view')
    .description('Open an output folder of `lamina process` in the map viewer (a local server, 127.0.0.1 by default)')
    .argument('<out-dir>', 'output folder of `lamina process`')
    .option('--port <n>', 'port to listen on (0: any free port)', '8737')
    .option('--host <address>', 'address to bind; anything but loopback exposes the review API to the network', '127.0.0.1')
    .option('--basemap <url>', 'basemap style URL (maplibre style JSON); without it the viewer makes no request outside this machine (default: none, offline)')
    .addHelpText('after', '\nServes the slices, anomalies and review on this machine; review decisions are saved to review.json.\nExample:\n  pnpm lamina view out/yard --port 8737')
    .option('--rebuild', 'rebuild the viewer even if the build is up to date (from source; the built CLI carries its viewer) (default: off)')
    .action(
      action(async (outDir: string, opts: ViewOptions) => {
        const dir = resolve(outDir);
        const st = await stat(dir).catch(() => undefined);
        if (!st?.isDirectory()) throw new InputError(outDir, 'expected an output folder of `lamina process`, found no folder');
        if (!(await stat(join(dir, 'run.json')).catch(() => undefined))) {
          throw new InputError(join(outDir, 'run.json'), 'expected the run.json of `lamina process` in the folder, found none');
        }
        const port = Number(opts.port);
        if (!Number.isInteger(port) || port < 0 || port > 65535) throw new InputError('--port', `expected an integer 0-65535, found "${opts.port}"`);
        if (opts.basemap !== undefined) {
          let u: URL | undefined;
          try {
            u = new URL(opts.basemap);
          } catch {
            u = undefined;
          }
          if (!u || !/^https?:$/.test(u.protocol)) throw new InputError('--basemap', `expected an http(s) URL of a style JSON, found "${opts.basemap}"`);
        }
        // The built CLI carries the viewer's assets (apps/cli/build.mjs); from source they are built on demand.
        if (bundled && opts.rebuild) throw new InputError('--rebuild', 'the built CLI carries a prebuilt viewer; rebuild the CLI instead (node apps/cli/build.mjs --force)');
        const distDir = bundled ? join(bundleDir(), 'viewer') : await ensureViewerBuilt({ force: opts.rebuild === true, log: (s) => process.stderr.write(`${s}\n`) });
        const srv = await startViewerServer(dir, { port, host: opts.host, distDir, ...(opts.basemap ? { basemap: opts.basemap } : {}) }).catch((e: NodeJS.ErrnoException) => {
          if (e.code === 'EADDRINUSE') throw new InputError('--port', `expected a free port, found ${port} in use on ${opts.host} (try --port 0 for any free port)`);
          if (e.code === 'EADDRNOTAVAIL' || e.code === 'ENOTFOUND') throw new InputError('--host', `expected an address of this machine, found "${opts.host}"`);
          throw e;
        });
        process.stdout.write(`Lamina viewer: ${srv.url}\n`);
        if (srv.host !== '127.0.0.1' && srv.host !== 'localhost' && srv.host !== '::1') {
          process.stderr.write(`warning: bound to ${srv.host}: anyone who can reach this address can read the folder and change review.json\n`);
        }
        process.stderr.write(`${CAUTIONS.map((c) => `  - ${c}`).join('\n')}\nPress Ctrl+C to stop.\n`);
        await new Promise<void>((done) => {
          const stop = () => void srv.close().then(done);
          process.once('SIGINT', stop);
          process.once('SIGTERM', stop);
        });
      }),
    );
}
