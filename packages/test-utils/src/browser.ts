/** Headless Chromium for the viewer's tests and benchmark (flags from shared/NOTES.md: software WebGL). */
import { chromium, type BrowserContext, type Page } from 'playwright-core';
import { mkdtemp, rm } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';

export const CHROMIUM = '/usr/bin/chromium';
export const CHROMIUM_ARGS = ['--use-angle=swiftshader', '--enable-unsafe-swiftshader', '--ignore-gpu-blocklist', '--disable-quic', '--disable-dev-shm-usage', '--no-sandbox'];

export interface Browser {
  context: BrowserContext;
  page: Page;
  /** Every URL the page asked for. */
  requests: string[];
  /** Console errors and uncaught page errors. */
  errors: string[];
  close(): Promise<void>;
}

/** A fresh profile each time (launchPersistentContext), so no cache or storage carries over. */
export async function launch(viewport = { width: 1280, height: 800 }): Promise<Browser> {
  const profile = await mkdtemp(join(tmpdir(), 'lamina-chromium-'));
  const context = await chromium.launchPersistentContext(profile, { executablePath: CHROMIUM, headless: true, args: CHROMIUM_ARGS, viewport });
  const page = context.pages()[0] ?? (await context.newPage());
  const requests: string[] = [];
  const errors: string[] = [];
  page.on('request', (r) => requests.push(r.url()));
  page.on('pageerror', (e) => errors.push(`pageerror: ${e.message}`));
  page.on('console', (m) => {
    if (m.type() === 'error') errors.push(`console: ${m.text()}`);
  });
  return {
    context,
    page,
    requests,
    errors,
    close: async () => {
      await context.close();
      await rm(profile, { recursive: true, force: true });
    },
  };
}

/** Load the viewer and wait for its readiness signal (map idle and the first slice drawn). */
export async function openViewer(page: Page, url: string, timeout = 45_000): Promise<void> {
  await page.goto(url);
  await page.waitForFunction(() => window.__lamina?.ready === true, null, { timeout, polling: 50 });
}
