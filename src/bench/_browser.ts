// Headless Chromium for the report tests and the report benchmark: Debian's /usr/bin/chromium driven by
// playwright-core (no browser download), with every network request blocked and counted.
import { chromium, type Browser, type BrowserContext, type Page } from 'playwright-core';
import { existsSync } from 'node:fs';
import { pathToFileURL } from 'node:url';

export const CHROMIUM_PATH = '/usr/bin/chromium';

export const CHROMIUM_ARGS = [
  '--no-sandbox',
  '--disable-gpu',
  '--disable-background-networking',
  '--disable-quic',
  '--no-first-run',
  '--disable-component-update',
  '--disable-sync',
];

/** Launch the system Chromium; a missing browser is an error that says how to install it. */
export async function launchChromium(): Promise<Browser> {
  if (!existsSync(CHROMIUM_PATH)) {
    throw new Error(`${CHROMIUM_PATH} is missing: install Debian's chromium package (apt-get install chromium), as .ci/run does`);
  }
  return chromium.launch({ headless: true, executablePath: CHROMIUM_PATH, args: CHROMIUM_ARGS });
}

/** What happened while a page was open: requests other than the file itself, failures, errors, dialogs. */
export interface PageWatch {
  context: BrowserContext;
  page: Page;
  url: string;
  /** Every request the page made, the file itself included. */
  requests: string[];
  /** Requests aborted because they left the file. */
  blocked: string[];
  failed: string[];
  consoleErrors: string[];
  pageErrors: string[];
  dialogs: string[];
}

/**
 * Open a local HTML file from file:// in a fresh context where any request that is not the file itself
 * is aborted and recorded.
 */
export async function openFile(
  browser: Browser,
  path: string,
  opts: { viewport?: { width: number; height: number }; waitForReady?: boolean } = {},
): Promise<PageWatch> {
  const url = pathToFileURL(path).href;
  const context = await browser.newContext({ viewport: opts.viewport ?? { width: 1400, height: 1000 } });
  const watch: PageWatch = {
    context, page: await context.newPage(), url, requests: [], blocked: [], failed: [], consoleErrors: [], pageErrors: [], dialogs: [],
  };
  await context.route('**/*', (route) => {
    const u = route.request().url();
    watch.requests.push(u);
    if (u === url) return route.continue();
    watch.blocked.push(u);
    return route.abort();
  });
  const { page } = watch;
  page.on('requestfailed', (r) => watch.failed.push(`${r.url()}: ${r.failure()?.errorText ?? ''}`));
  page.on('console', (m) => {
    if (m.type() === 'error') watch.consoleErrors.push(m.text());
  });
  page.on('pageerror', (e) => watch.pageErrors.push(String(e)));
  page.on('dialog', (d) => {
    watch.dialogs.push(`${d.type()}: ${d.message()}`);
    void d.dismiss();
  });
  // Generous limits: parsing the plotting library alone takes many seconds on a busy 2-core machine.
  await page.goto(url, { waitUntil: 'load', timeout: 120_000 });
  if (opts.waitForReady !== false) await page.waitForFunction('window.polysiftReady === true', null, { timeout: 120_000 });
  return watch;
}
