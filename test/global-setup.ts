// Before any test: make sure every bundled sample site is simulated (sample-sites/<name>/site is
// generated, not committed). The simulator is deterministic, so an existing site newer than its
// scenario and than the simulator's sources is reused.
import { existsSync, readdirSync, statSync } from 'node:fs';
import { join, resolve } from 'node:path';
import { simulateScenarioFile } from '@lamina/simulate';

function newest(dir: string): number {
  let t = 0;
  for (const e of readdirSync(dir, { recursive: true, withFileTypes: true })) {
    if (e.isFile()) t = Math.max(t, statSync(join(e.parentPath, e.name)).mtimeMs);
  }
  return t;
}

export default async function setup(): Promise<void> {
  const root = resolve(import.meta.dirname, '..');
  const sims = newest(join(root, 'packages/simulate/src'));
  const sites = join(root, 'sample-sites');
  for (const name of readdirSync(sites)) {
    const scenario = join(sites, name, 'scenario.json');
    if (!existsSync(scenario)) continue;
    const made = join(sites, name, 'site', 'truth.json');
    if (existsSync(made) && statSync(made).mtimeMs > Math.max(statSync(scenario).mtimeMs, sims)) continue;
    await simulateScenarioFile(scenario, join(sites, name, 'site'));
  }
}
