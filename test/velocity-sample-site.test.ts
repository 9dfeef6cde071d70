// The velocity fit on the sample site against the simulator's truth (issue 3, "Done when"):
// the fitted site K within 10 % of truth.json's soil K, and every fitted hyperbola that belongs to an
// above-ground reflector classified `above-ground`. Runs `lamina velocity` as a user would.
import { execFile } from 'node:child_process';
import { mkdtemp, readFile } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { dirname, join, resolve } from 'node:path';
import { fileURLToPath } from 'node:url';
import { promisify } from 'node:util';
import { beforeAll, describe, expect, it } from 'vitest';
import { simulateScenarioFile } from '@lamina/simulate';
import { C_M_PER_NS } from '@lamina/velocity';

const run = promisify(execFile);
const root = resolve(dirname(fileURLToPath(import.meta.url)), '..');
const C = C_M_PER_NS;
type P = [number, number];

interface Fit {
  line: string;
  trace: number;
  x: number;
  y: number;
  t0Ns: number;
  permittivity: number;
  origin: string;
  flags?: string[];
}
interface Truth {
  soil: { permittivity: number };
  metresPerUnit: number;
  buried: { id: string; from?: number[]; to?: number[]; center?: number[] }[];
  aboveGround: { id: string; kind: string; from?: number[]; to?: number[]; center?: number[] }[];
}

let report: { site: { permittivity: number; velocityMPerNs: number; uncertaintyMPerNs: number; fitCount: number }; hyperbolas: Fit[]; method: { separationM: number } };
let stdout: string;
let truth: Truth;
let lineDir: Record<string, P>;

beforeAll(async () => {
  const work = await mkdtemp(join(tmpdir(), 'lamina-velocity-yard-'));
  const site = join(work, 'site');
  await simulateScenarioFile(join(root, 'sample-sites/yard/scenario.json'), site);
  const out = join(work, 'out');
  ({ stdout } = await run(process.execPath, ['--import', 'tsx', join(root, 'apps/cli/src/main.ts'), 'velocity', site, '--out', out], { cwd: root, maxBuffer: 1 << 24 }));
  report = JSON.parse(await readFile(join(out, 'velocity.json'), 'utf8'));
  truth = JSON.parse(await readFile(join(site, 'truth.json'), 'utf8'));
  // Line direction: from the one line whose start and end site.json gives (the sample site's lines are
  // parallel, run in a zigzag; the sign does not matter below).
  const manifest = JSON.parse(await readFile(join(site, 'site.json'), 'utf8')) as { lines: { file: string; start?: P; end?: P }[] };
  const withEnds = manifest.lines.find((l) => l.start && l.end)!;
  const d = [withEnds.end![0] - withEnds.start![0], withEnds.end![1] - withEnds.start![1]];
  const L = Math.hypot(d[0]!, d[1]!);
  lineDir = { any: [d[0]! / L, d[1]! / L] };
}, 300_000);

function closest(p: P, a: number[], b: number[]): P {
  const dx = b[0]! - a[0]!;
  const dy = b[1]! - a[1]!;
  const L = dx * dx + dy * dy;
  const u = L > 0 ? Math.max(0, Math.min(1, ((p[0] - a[0]!) * dx + (p[1] - a[1]!) * dy) / L)) : 0;
  return [a[0]! + u * dx, a[1]! + u * dy];
}

describe('velocity on the sample site (yard)', () => {
  it('fits the site K within 10 % of the simulated soil', () => {
    expect(report.site.fitCount).toBeGreaterThanOrEqual(10);
    const k = report.site.permittivity;
    const kTrue = truth.soil.permittivity;
    expect(Math.abs(k / kTrue - 1)).toBeLessThan(0.1);
  });

  it('states the uncertainty of the site velocity, and the simulated soil lies within two of it', () => {
    // v = c / sqrt(K) of the truth; the site value's own standard uncertainty (velocity.json
    // site.uncertaintyMPerNs), printed by `lamina velocity` beside the spread
    const vTrue = C / Math.sqrt(truth.soil.permittivity);
    expect(report.site.uncertaintyMPerNs).toBeGreaterThan(0);
    expect(Math.abs(report.site.velocityMPerNs - vTrue)).toBeLessThan(2 * report.site.uncertaintyMPerNs);
    expect(stdout).toContain(`the site value itself +- ${report.site.uncertaintyMPerNs.toFixed(4)} m/ns`);
  });

  it('classifies every fitted air-wave hyperbola as above-ground', () => {
    // A fit belongs to an above-ground reflector when its apex time is the air travel time to the
    // reflector's nearest point, t = 2 sqrt(r^2 + (s/2)^2) / c (within 1.5 ns or 10 %; trunk and post radii
    // shorten it), and that point lies across the line from the apex (within 0.75 m along it).
    const mpu = truth.metresPerUnit;
    const s = report.method.separationM;
    const dir = lineDir.any!;
    const air: { fit: Fit; id: string }[] = [];
    for (const f of report.hyperbolas) {
      for (const a of truth.aboveGround) {
        const p: P = a.center ? [a.center[0]!, a.center[1]!] : closest([f.x, f.y], a.from!, a.to!);
        const dx = (p[0] - f.x) * mpu;
        const dy = (p[1] - f.y) * mpu;
        const tExp = (2 * Math.hypot(Math.hypot(dx, dy), s / 2)) / C;
        const along = Math.abs(dx * dir[0] + dy * dir[1]);
        if (Math.abs(f.t0Ns - tExp) < Math.max(1.5, 0.1 * f.t0Ns) && along < 0.75) air.push({ fit: f, id: a.id });
      }
    }
    // The yard's tree stands beside the first lines: its air-wave hyperbolas must be among the fits.
    expect(air.length).toBeGreaterThanOrEqual(1);
    for (const { fit, id } of air) expect(`${id} on ${fit.line} trace ${fit.trace}: ${fit.origin}`).toBe(`${id} on ${fit.line} trace ${fit.trace}: above-ground`);
  });
});
