// Shared set-up for the end-to-end tests: Debian's Chromium driven by
// playwright-core, the page opened from file:// and over http on loopback,
// every request recorded so that a test can prove nothing left the machine.
import { chromium } from 'playwright-core';
import { execFileSync } from 'node:child_process';
import { existsSync, mkdirSync } from 'node:fs';
import { resolve } from 'node:path';
import { pathToFileURL } from 'node:url';
import { serve } from '../../scripts/serve.mjs';

export const OUTPUT = resolve('tests/browser/output');
mkdirSync(OUTPUT, { recursive: true });

export const ARGS = ['--headless', '--no-sandbox', '--disable-gpu', '--disable-background-networking',
  '--disable-component-update', '--disable-sync', '--no-first-run', '--disable-quic'];

export async function launch() {
  return chromium.launch({ executablePath: process.env.CHROMIUM || '/usr/bin/chromium', headless: true, args: ARGS });
}

/** Starts the static site on a free loopback port. */
export async function startSite() {
  const server = await serve('dist/site', 0);
  return { server, url: `http://127.0.0.1:${server.address().port}/` };
}

export const fileUrl = () => pathToFileURL(resolve('dist/ddlens.html')).href;

/** Whether a request stays on this machine: the page itself, loopback, data: or blob:. */
export function isLocal(url) {
  const u = new URL(url);
  if (['file:', 'data:', 'blob:'].includes(u.protocol)) return true;
  return (u.protocol === 'http:' || u.protocol === 'ws:') && ['127.0.0.1', 'localhost', '[::1]'].includes(u.hostname);
}

/**
 * Opens `url` in a fresh context and records console errors, uncaught
 * exceptions and every request (page and workers). Outside requests are
 * aborted and recorded.
 */
export async function openPage(browser, url, { scale = 2 } = {}) {
  const context = await browser.newContext({ deviceScaleFactor: scale, viewport: { width: 1280, height: 820 } });
  const log = { errors: [], requests: [], outside: [] };
  await context.route('**/*', (route) => {
    const u = route.request().url();
    log.requests.push(u);
    if (isLocal(u)) return route.continue();
    log.outside.push(u);
    return route.abort();
  });
  context.on('request', (req) => { if (!isLocal(req.url())) log.outside.push(req.url()); });
  const page = await context.newPage();
  page.on('console', (m) => { if (m.type() === 'error') log.errors.push(m.text()); });
  page.on('pageerror', (e) => log.errors.push(String(e)));
  page.on('worker', (w) => w.on('console', (m) => { if (m.type() === 'error') log.errors.push(`worker: ${m.text()}`); }));
  await page.goto(url);
  await page.waitForFunction(() => document.body.dataset.ready === 'true' || document.querySelector('#messages p'), null, { timeout: 30000 });
  return { context, page, log };
}

/** Fraction of sampled canvas pixels that are not white (0 = blank). */
export async function inkFraction(page, selector = '#spectrum-canvas') {
  return page.evaluate((sel) => {
    const c = document.querySelector(sel);
    const d = c.getContext('2d').getImageData(0, 0, c.width, c.height).data;
    let ink = 0, n = 0;
    for (let i = 0; i < d.length; i += 4 * 97) { n++; if (d[i] < 240 || d[i + 1] < 240 || d[i + 2] < 240) ink++; }
    return ink / n;
  }, selector);
}

/** Analyses the demo with two bands as Cr³⁺ (the panel's own controls) and waits for the result. */
export async function analyseDemo(page) {
  await page.locator('#bands-panel > summary').click();
  await page.locator('#band-count').fill('2');
  await page.locator('#lf-ion').selectOption('Cr3+');
  await page.locator('#lf-analyze').click();
  await page.waitForFunction(() => window.ddlens.state.lf, null, { timeout: 30000 });
}

/** Runs the native `ddlens` (the debug build when present) and parses its JSON output. */
export function runCli(args) {
  const bin = `${process.env.CARGO_TARGET_DIR || 'target'}/debug/ddlens`;
  const out = existsSync(bin) ? execFileSync(bin, args) : execFileSync('cargo', ['run', '--quiet', '--', ...args]);
  return JSON.parse(out.toString());
}

// A main-thread task longer than this is a freeze a user notices. Shorter long
// tasks are logged, not asserted: timings are measured by perf.test.mjs and
// `make bench`, never by a timed assertion that a busy machine can fail.
export const FREEZE_MS = 1000;

/** Logs the longest main-thread task of a step and fails only on a freeze. */
export function noFreeze(longestMs, during) {
  console.log(`longest main-thread task ${during}: ${longestMs} ms`);
  if (!(longestMs < FREEZE_MS)) throw new Error(`the page froze for ${longestMs} ms ${during}`);
}
