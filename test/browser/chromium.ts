/**
 * Headless Chromium for the browser tests: Debian's `chromium` (installed by .ci/run)
 * driven by playwright-core, with a fresh profile per launch, no network services, and
 * every console message, page error and network request collected so a test can assert
 * that a page made none. Fails with a clear message when the browser is missing.
 */
import { existsSync, mkdirSync, mkdtempSync, rmSync } from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { chromium, type BrowserContext, type Page } from 'playwright-core';

export const chromiumPath = process.env.FLEETWRIGHT_CHROMIUM ?? '/usr/bin/chromium';
export const artifactFolder = path.resolve(import.meta.dirname, '..', '..', 'test-artifacts');

export const chromiumFlags = ['--headless', '--no-sandbox', '--disable-gpu', '--disable-background-networking', '--disable-component-update', '--no-first-run'];

export interface Browser {
  context: BrowserContext;
  close(): Promise<void>;
}

export async function launchChromium(): Promise<Browser> {
  if (!existsSync(chromiumPath)) {
    throw new Error(`browser tests need Chromium at ${chromiumPath}: run \`apt-get install -y chromium\` (or set FLEETWRIGHT_CHROMIUM)`);
  }
  const profile = mkdtempSync(path.join(os.tmpdir(), 'fleetwright-chromium-'));
  // launchPersistentContext is how playwright takes a --user-data-dir: a fresh one per run.
  const context = await chromium.launchPersistentContext(profile, {
    executablePath: chromiumPath,
    headless: true,
    args: chromiumFlags.filter((f) => f !== '--headless'),
    viewport: { width: 1100, height: 900 },
    deviceScaleFactor: 1,
  });
  return {
    context,
    async close() {
      await context.close();
      rmSync(profile, { recursive: true, force: true });
    },
  };
}

export interface PageWatch {
  page: Page;
  consoleErrors: string[];
  pageErrors: string[];
  /** Every request other than the file the page was opened from. */
  requests: string[];
  dialogs: string[];
}

/** Opens `file` from a file:// URL and records what it does. */
export async function openFile(browser: Browser, file: string): Promise<PageWatch> {
  const page = await browser.context.newPage();
  const url = `file://${path.resolve(file)}`;
  const watch: PageWatch = { page, consoleErrors: [], pageErrors: [], requests: [], dialogs: [] };
  page.on('console', (message) => {
    if (message.type() === 'error' || message.type() === 'warning') watch.consoleErrors.push(`${message.type()}: ${message.text()}`);
  });
  page.on('pageerror', (error) => watch.pageErrors.push(error.message));
  page.on('request', (request) => {
    if (request.url() !== url) watch.requests.push(request.url());
  });
  page.on('dialog', async (dialog) => {
    watch.dialogs.push(dialog.message());
    await dialog.dismiss();
  });
  await page.goto(url, { waitUntil: 'load' });
  return watch;
}

export function artifact(name: string): string {
  mkdirSync(artifactFolder, { recursive: true });
  return path.join(artifactFolder, name);
}
