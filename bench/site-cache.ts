// Simulated sites kept between runs of `pnpm bench field` (LAMINA_BENCH_FIELD_SITE_CACHE=<dir>): the
// simulator is deterministic, so a site is the same for the same scenario and the same simulator sources.
// A site is keyed by both (the scenario's JSON and the source files of @lamina/simulate and the workspace
// packages it uses); a change of either makes a new key, so a stale site is never used. A bench run
// then skips simulating every scene it has seen (about a third of a scene's time). Bench machinery only.
import { createHash } from 'node:crypto';
import { copyFileSync, existsSync, linkSync, mkdirSync, readdirSync, readFileSync, renameSync, rmSync, statSync } from 'node:fs';
import { dirname, join, resolve } from 'node:path';
import { fileURLToPath } from 'node:url';
import { simulateSite, type Scenario } from '../packages/simulate/src/index';

const ROOT = resolve(dirname(fileURLToPath(import.meta.url)), '..');

/** Every file under `dir` (sorted, relative paths). */
function filesUnder(dir: string, rel = ''): string[] {
  const out: string[] = [];
  for (const e of readdirSync(join(dir, rel), { withFileTypes: true }).sort((a, b) => a.name.localeCompare(b.name))) {
    const r = rel ? `${rel}/${e.name}` : e.name;
    if (e.isDirectory()) out.push(...filesUnder(dir, r));
    else out.push(r);
  }
  return out;
}

/** The workspace packages @lamina/simulate runs on (itself and its @lamina dependencies, transitively). */
function simulatorPackages(): string[] {
  const seen = new Set<string>();
  const visit = (name: string) => {
    if (seen.has(name)) return;
    seen.add(name);
    const manifest = JSON.parse(readFileSync(join(ROOT, 'packages', name, 'package.json'), 'utf8')) as { dependencies?: Record<string, string> };
    for (const dep of Object.keys(manifest.dependencies ?? {})) if (dep.startsWith('@lamina/')) visit(dep.slice('@lamina/'.length));
  };
  visit('simulate');
  return [...seen].sort();
}

let fingerprint: string | undefined;
/** A hash of the simulator's sources: its package and the workspace packages it uses (src and manifest). */
export function simulatorFingerprint(): string {
  if (fingerprint) return fingerprint;
  const h = createHash('sha256');
  for (const pkg of simulatorPackages()) {
    const dir = join(ROOT, 'packages', pkg);
    for (const f of ['package.json', ...filesUnder(join(dir, 'src')).map((r) => `src/${r}`)]) {
      h.update(`${pkg}/${f}\0`);
      h.update(readFileSync(join(dir, f)));
    }
  }
  fingerprint = h.digest('hex');
  return fingerprint;
}

/** The cache entry of a scenario: its folder under `cacheDir`. */
export function cachedSiteDir(scenario: Scenario, cacheDir: string): string {
  const key = createHash('sha256').update(simulatorFingerprint()).update(JSON.stringify(scenario)).digest('hex').slice(0, 20);
  return join(cacheDir, `${scenario.name}-${key}`);
}

/**
 * Simulates `scenario` into `siteDir`, or gives it the cached site: the SEG-Y lines hard-linked (read
 * only), the small files copied (the bench may rewrite plan.geojson). A new site is simulated into the
 * cache first (in a folder renamed into place when complete, so an interrupted run leaves no entry).
 * Returns true when the cache had it.
 */
export async function simulateCached(scenario: Scenario, siteDir: string, cacheDir: string): Promise<boolean> {
  const entry = cachedSiteDir(scenario, cacheDir);
  const hit = existsSync(join(entry, 'truth.json'));
  if (!hit) {
    const tmp = `${entry}.tmp-${process.pid}-${Date.now()}`;
    mkdirSync(cacheDir, { recursive: true });
    try {
      await simulateSite(scenario, tmp);
      rmSync(entry, { recursive: true, force: true });
      renameSync(tmp, entry);
    } finally {
      rmSync(tmp, { recursive: true, force: true });
    }
  }
  for (const rel of filesUnder(entry)) {
    const to = join(siteDir, rel);
    mkdirSync(dirname(to), { recursive: true });
    if (rel.endsWith('.sgy') && statSync(join(entry, rel)).size > 0) {
      try {
        linkSync(join(entry, rel), to);
        continue;
      } catch {
        // another file system: copied below
      }
    }
    copyFileSync(join(entry, rel), to);
  }
  return hit;
}
