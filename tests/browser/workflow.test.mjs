// The page as a working instrument (issue 14): one empty σ cell does not stop the analysis, the
// keyboard reaches every control in order, and nothing a user reads carries internal names.

import { test, before, after } from 'node:test';
import assert from 'node:assert/strict';
import { launch, serve, openPage } from './harness.mjs';

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

async function mark(page) {
  await page.evaluate(() => { document.body.dataset.state = 'busy'; });
}
async function analysed(page) {
  await page.waitForFunction(() => document.body.dataset.state === 'analysed', null, { timeout: 60000 });
}

async function fresh(options) {
  const { page, problems, context } = await openPage(browser, served.origin, options);
  await page.goto(served.origin + '/');
  await analysed(page);
  return { page, problems, context };
}

function clean(problems) {
  assert.deepEqual(problems.console, [], 'no console errors');
  assert.deepEqual(problems.pageErrors, [], 'no page errors');
  assert.deepEqual(problems.foreign, [], 'no request outside the origin');
}

async function paste(page, text) {
  await mark(page);
  await page.click('#paste-open');
  await page.fill('#paste-text', text);
  await page.click('#paste-read');
}

test('one empty σ cell among given σ: the analysis runs, the row is marked and named', async () => {
  const { page, problems, context } = await fresh();
  // Invented oscillator levels; line 5 (v = 3) has no σ.
  await paste(page, 'v,E,sigma\n0,0,0.1\n1,980.3,0.3\n2,1939.8,0.2\n3,2880.2,\n4,3799.9,0.5\n5,4700.1,0.4\n');
  await analysed(page);
  assert.match(await page.textContent('#reading'), /6 used/);
  const row = page.locator('#rows [data-line="5"]');
  assert.match(await row.getAttribute('class'), /\bassumed\b/);
  assert.match(await row.locator('.c-why').textContent(), /median/);
  const warnings = await page.textContent('#warnings');
  assert.match(warnings, /row 5\b.*median/);
  // The rows that gave σ are not marked.
  assert.doesNotMatch(await page.locator('#rows [data-line="4"]').getAttribute('class'), /\bassumed\b/);
  clean(problems);
  await context.close();
});
