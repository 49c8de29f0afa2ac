// Foundation checks: the page loads the core through WebAssembly in a real Chromium, reports
// its version, makes no request outside its own origin and logs no errors.

import { test, before, after } from 'node:test';
import assert from 'node:assert/strict';
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { launch, serve, openPage, screenshotPath, ROOT } from './harness.mjs';

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

test('page loads the wasm module and shows its version, with no errors or foreign requests', async () => {
  const { page, problems, context } = await openPage(browser, served.origin);
  await page.goto(served.origin + '/');
  await page.waitForFunction(() => document.getElementById('version').textContent !== '…');
  const cargo = readFileSync(join(ROOT, 'Cargo.toml'), 'utf8');
  const expected = /\[workspace\.package\][^[]*?version = "([^"]+)"/.exec(cargo)[1];
  assert.equal(await page.textContent('#version'), expected);
  assert.equal(await page.textContent('#codata'), '2022');
  await page.screenshot({ path: screenshotPath('foundation-load'), fullPage: true });
  assert.deepEqual(problems.console, []);
  assert.deepEqual(problems.pageErrors, []);
  assert.deepEqual(problems.foreign, []);
  assert.deepEqual(problems.failed, []);
  await context.close();
});
