// Foundation checks: the page loads the core through WebAssembly in a real Chromium, reports
// its version, opens with the synthetic demo already analysed and drawn, makes no request outside
// its own origin and logs no errors.

import { test, before, after } from 'node:test';
import assert from 'node:assert/strict';
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { launch, serve, openPage, screenshotPath, inkedPixels, ROOT } from './harness.mjs';

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

test('page loads the wasm module, shows the analysed synthetic demo, stays on its origin', async () => {
  const { page, problems, context } = await openPage(browser, served.origin);
  await page.goto(served.origin + '/');
  await page.waitForFunction(() => document.body.dataset.state === 'analysed', null, { timeout: 30000 });

  // The module reports the workspace version and the constants year.
  const cargo = readFileSync(join(ROOT, 'Cargo.toml'), 'utf8');
  const expected = /\[workspace\.package\][^[]*?version = "([^"]+)"/.exec(cargo)[1];
  assert.equal(await page.textContent('#version'), expected);
  assert.equal(await page.textContent('#codata'), '2022');

  // The demo is the synthetic example, named as such, and its result is on screen.
  const example = await page.$eval('#examples', (s) => s.options[s.selectedIndex].textContent);
  assert.match(example, /synthetic/i);
  const d0 = await page.textContent('#d0-value');
  assert.match(d0, /^\d{3,5}(\.\d+)?$/, `D0 shown as a number, got ${d0}`);
  assert.match(await page.textContent('#d0-line'), /\(stat\)/);
  // The stated interval is shown and holds the demo's true D0, known from its generator
  // (SOURCE: scripts/make_demo.py, header of qz2-levels.csv: true D0 = 4385.101 cm-1, SYNTHETIC).
  const interval = await page.textContent('#d0-interval');
  const m = /Interval: ([\d.]+) to ([\d.]+)/.exec(interval);
  assert.ok(m, `interval shown, got ${interval}`);
  assert.ok(Number(m[1]) <= 4385.101 && 4385.101 <= Number(m[2]), `true D0 inside ${m[1]} … ${m[2]}`);
  assert.ok((await page.$$('#estimates tbody tr')).length >= 4, 'every method is listed');

  // The figure is drawn (a blank canvas would be all white).
  assert.ok(await inkedPixels(page, '#figure') > 2000, 'the spacing figure is drawn');

  await page.screenshot({ path: screenshotPath('foundation-demo'), fullPage: true });
  assert.deepEqual(problems.console, []);
  assert.deepEqual(problems.pageErrors, []);
  assert.deepEqual(problems.foreign, []);
  assert.deepEqual(problems.failed, []);
  await context.close();
});
