// Shared set-up for the browser tests: serve web/ on loopback, drive Debian's Chromium with
// playwright-core, and record everything a test should assert on (console errors, page errors,
// requests that left the page's origin).

import { mkdir } from 'node:fs/promises';
import { dirname, join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { chromium } from 'playwright-core';
import { startServer } from '../../scripts/static-server.mjs';

const HERE = dirname(fileURLToPath(import.meta.url));
export const ROOT = join(HERE, '..', '..');
export const WEB = join(ROOT, 'web');
export const ARTIFACTS = join(HERE, 'artifacts');

const CHROMIUM = process.env.CHROMIUM ?? '/usr/bin/chromium';
const ARGS = [
  '--no-sandbox', '--disable-gpu', '--disable-quic', '--no-first-run',
  '--disable-background-networking', '--disable-component-update', '--disable-sync',
];

/** Launch the browser once per test file. */
export async function launch() {
  await mkdir(ARTIFACTS, { recursive: true });
  return chromium.launch({ executablePath: CHROMIUM, args: ARGS });
}

/** Serve `dir` (default web/) on a free loopback port; returns { server, origin }. */
export async function serve(dir = WEB) {
  const server = await startServer(dir, 0);
  return { server, origin: `http://127.0.0.1:${server.address().port}` };
}

/**
 * Open a fresh page that records problems. Returns { page, problems } where problems holds
 * console errors, uncaught page errors, failed requests and requests outside `origin`.
 */
export async function openPage(browser, origin, options = {}) {
  const context = await browser.newContext({ viewport: { width: 1280, height: 800 }, ...options });
  const page = await context.newPage();
  const problems = { console: [], pageErrors: [], foreign: [], failed: [] };
  page.on('console', (msg) => { if (msg.type() === 'error') problems.console.push(msg.text()); });
  page.on('pageerror', (err) => problems.pageErrors.push(String(err)));
  page.on('request', (req) => {
    const url = req.url();
    const local = url.startsWith(origin + '/') || url.startsWith('data:') || url.startsWith('blob:')
      || (origin.startsWith('file:') && url.startsWith('file:'));
    if (!local) problems.foreign.push(url);
  });
  page.on('requestfailed', (req) => problems.failed.push(`${req.url()} ${req.failure()?.errorText}`));
  return { page, context, problems };
}

/** Count pixels of a canvas that are not (near) white. */
export async function inkedPixels(page, selector) {
  return page.$eval(selector, (canvas) => {
    const ctx = canvas.getContext('2d');
    const { data } = ctx.getImageData(0, 0, canvas.width, canvas.height);
    let n = 0;
    for (let i = 0; i < data.length; i += 4) {
      const white = data[i] > 245 && data[i + 1] > 245 && data[i + 2] > 245;
      if (data[i + 3] > 0 && !white) n += 1;
    }
    return n;
  });
}

export function screenshotPath(name) {
  return join(ARTIFACTS, `${name}.png`);
}
