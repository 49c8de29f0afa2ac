// The single-file build (dist/rungs.html from scripts/build-single) opened from disk: no server,
// no network. It must analyse the demo exactly as the served page does, request nothing but
// itself, and log no errors.

import { test, before, after } from 'node:test';
import assert from 'node:assert/strict';
import { existsSync } from 'node:fs';
import { join } from 'node:path';
import { pathToFileURL } from 'node:url';
import { launch, serve, openPage, screenshotPath, inkedPixels, ROOT } from './harness.mjs';

const SINGLE = join(ROOT, 'dist', 'rungs.html');
let browser;
let served;

before(async () => {
  browser = await launch();
  served = await serve();
});

after(async () => {
  await browser?.close();
  served?.server.close();
});

test('dist/rungs.html works from a file URL with no server and no network', async () => {
  assert.ok(existsSync(SINGLE), 'scripts/build-single has written dist/rungs.html');
  const url = pathToFileURL(SINGLE).href;
  const { page, problems, context } = await openPage(browser, 'file://');
  const requested = [];
  page.on('request', (r) => requested.push(r.url()));
  await page.goto(url);
  await page.waitForFunction(() => document.body.dataset.state === 'analysed', null, { timeout: 30000 });
  const d0 = await page.textContent('#d0-value');
  assert.ok(await inkedPixels(page, '#figure') > 2000, 'figure drawn');
  await page.screenshot({ path: screenshotPath('single-file'), fullPage: true });
  // Only the file itself, and blob:/data: URLs it makes, are ever requested.
  const outside = requested.filter((u) => u !== url && !u.startsWith('blob:') && !u.startsWith('data:'));
  assert.deepEqual(outside, []);
  assert.deepEqual(problems.console, []);
  assert.deepEqual(problems.pageErrors, []);
  await context.close();

  // The same numbers as the served page.
  const other = await openPage(browser, served.origin);
  await other.page.goto(served.origin + '/');
  await other.page.waitForFunction(() => document.body.dataset.state === 'analysed', null, { timeout: 30000 });
  assert.equal(await other.page.textContent('#d0-value'), d0);
  await other.context.close();
});
