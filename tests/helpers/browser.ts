import { mkdirSync } from 'node:fs';
import type { Server } from 'node:http';
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import { chromium, type Browser, type Page } from 'playwright-core';
import { buildClientIfStale } from '../../scripts/lib/build';
import { ensureChromium } from '../../scripts/lib/system';
import { seedDemo } from '../../server/demo/seed';
import { createTestApp, testHasher, type TestApp } from './app';
import { freePort } from './net';

const root = fileURLToPath(new URL('../..', import.meta.url));
export const resultsDir = path.join(root, 'test-results');

export interface BrowserRig {
  t: TestApp;
  baseUrl: string;
  browser: Browser;
  close(): Promise<void>;
}

/** The real app with the built client on a loopback port, the demo seeded, and Debian's Chromium. */
export async function startBrowserRig(): Promise<BrowserRig> {
  const executablePath = ensureChromium();
  // Only browser files need the client; the build is skipped when dist/ is fresh.
  buildClientIfStale();
  // The port is chosen before the app is built so links in mail carry it.
  const port = await freePort();
  const baseUrl = `http://127.0.0.1:${port}`;
  const t = await createTestApp({ clientDir: path.join(root, 'dist'), appUrl: baseUrl });
  await seedDemo(t.database.db, testHasher, t.storage);
  const server = await new Promise<Server>((resolve) => {
    const s = t.app.listen(port, '127.0.0.1', () => resolve(s));
  });
  const browser = await chromium.launch({
    executablePath,
    args: [
      '--no-sandbox',
      '--disable-gpu',
      '--disable-quic',
      '--no-first-run',
      '--disable-background-networking',
      '--disable-component-update',
      '--disable-sync',
    ],
  });
  return {
    t,
    baseUrl,
    browser,
    async close() {
      await browser.close();
      await new Promise<void>((resolve) => server.close(() => resolve()));
      await t.close();
    },
  };
}

/** A full-page screenshot at test-results/<name>.png; `name` may hold a folder (`journey/01-…`). */
export async function screenshot(page: Page, name: string) {
  const file = path.join(resultsDir, `${name}.png`);
  mkdirSync(path.dirname(file), { recursive: true });
  await page.screenshot({ path: file, fullPage: true });
  return file;
}
