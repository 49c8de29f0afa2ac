// The page as a working instrument (issue 14): one empty σ cell does not stop the analysis, the
// keyboard reaches every control in order, and nothing a user reads carries internal names.

import { test, before, after } from 'node:test';
import assert from 'node:assert/strict';
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { launch, serve, openPage, ROOT } from './harness.mjs';

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

/** What the keyboard focus is on, in words a test can compare. */
function focused(page) {
  return page.evaluate(() => {
    const a = document.activeElement;
    if (!a || a === document.body) return 'BODY';
    return a.id || a.getAttribute('aria-label') || a.getAttribute('name') || `${a.tagName}:${a.textContent.trim().slice(0, 30)}`;
  });
}

test('Tab walks every control in order: through each row once, out of the row table, to the figures', async () => {
  const { page, problems, context } = await fresh();
  // The rows of the default example, counted from the file itself (data lines after the header).
  const demo = readFileSync(join(ROOT, 'crates/core/data/demo/qz2-levels.csv'), 'utf8');
  const dataLines = demo.split('\n').map((l, i) => [i + 1, l]).filter(([, l]) => /^\d/.test(l)).map(([n]) => n);
  assert.ok(dataLines.length > 20, 'the example has its rows');
  const seen = [];
  for (let i = 0; i < 400; i += 1) {
    await page.keyboard.press('Tab');
    const f = await focused(page);
    seen.push(f);
    if (f === 'figure-png') break;
  }
  assert.ok(!seen.includes('BODY'), `focus never lost: ${seen.join(' | ')}`);
  assert.equal(seen.at(-1), 'figure-png', `Tab reaches the figure downloads: ${seen.slice(-30).join(' | ')}`);
  const at = (name) => {
    const i = seen.indexOf(name);
    assert.ok(i >= 0, `${name} reached by Tab`);
    return i;
  };
  const rowSwitches = seen.filter((s) => /^Use row \d+$/.test(s)).map((s) => Number(s.slice(8)));
  assert.deepEqual(rowSwitches, dataLines, 'every row switch once, in row order');
  const firstRow = seen.indexOf(`Use row ${dataLines[0]}`);
  const lastRow = seen.indexOf(`Uncertainty of row ${dataLines.at(-1)}`);
  assert.ok(at('open-file') < at('examples') && at('examples') < firstRow, 'toolbar before the rows');
  const tabs = seen.filter((s) => s.startsWith('tab-'));
  assert.equal(tabs.length, 1, `one tab stop for the figure tabs: ${tabs}`);
  assert.ok(lastRow < at(tabs[0]) && at(tabs[0]) < at('figure-panel') && at('figure-panel') < at('figure-svg'), 'rows, then the figure tabs, the figure, its downloads');
  clean(problems);
  await context.close();
});

test('toggling a row from the keyboard keeps the focus on its switch', async () => {
  const { page, problems, context } = await fresh();
  const line = await page.getAttribute('#rows [data-line]:nth-child(3)', 'data-line');
  await page.focus(`#rows input[aria-label="Use row ${line}"]`);
  await mark(page);
  await page.keyboard.press('Space');
  await analysed(page);
  assert.equal(await focused(page), `Use row ${line}`);
  assert.equal(await page.isChecked(`#rows input[aria-label="Use row ${line}"]`), false);
  assert.match(await page.textContent('#reading'), /1 excluded by you/);
  await mark(page);
  await page.keyboard.press('Space');
  await analysed(page);
  assert.equal(await focused(page), `Use row ${line}`);
  assert.equal(await page.isChecked(`#rows input[aria-label="Use row ${line}"]`), true);
  await page.keyboard.press('Tab');
  assert.equal(await focused(page), `Uncertainty of row ${line}`);
  clean(problems);
  await context.close();
});

test('figure tabs: arrow keys, Home and End move the selection, one tab stop, focus kept', async () => {
  const { page, problems, context } = await fresh();
  const ids = await page.$$eval('#figure-tabs [role=tab]', (b) => b.map((x) => x.dataset.figure));
  assert.ok(ids.length >= 3, `several figures: ${ids}`);
  const selected = () => page.$$eval('#figure-tabs [role=tab]', (b) => b.filter((x) => x.getAttribute('aria-selected') === 'true').map((x) => x.dataset.figure));
  const stops = () => page.$$eval('#figure-tabs [role=tab]', (b) => b.filter((x) => x.tabIndex === 0).map((x) => x.dataset.figure));
  const shows = (id) => page.waitForFunction((f) => document.body.dataset.shownFigure === f, id);
  assert.deepEqual(await selected(), [ids[0]]);
  await page.focus(`#figure-tabs [data-figure="${ids[0]}"]`);
  await page.keyboard.press('ArrowRight');
  await shows(ids[1]);
  assert.equal(await focused(page), `tab-${ids[1]}`);
  assert.deepEqual(await selected(), [ids[1]]);
  assert.deepEqual(await stops(), [ids[1]]);
  await page.keyboard.press('End');
  await shows(ids.at(-1));
  assert.equal(await focused(page), `tab-${ids.at(-1)}`);
  await page.keyboard.press('ArrowRight');
  await shows(ids[0]);
  assert.equal(await focused(page), `tab-${ids[0]}`, 'wraps from the last to the first');
  await page.keyboard.press('ArrowLeft');
  await shows(ids.at(-1));
  await page.keyboard.press('Home');
  await shows(ids[0]);
  assert.equal(await focused(page), `tab-${ids[0]}`);
  assert.equal(await page.getAttribute('#figure-panel', 'aria-labelledby'), `tab-${ids[0]}`);
  await page.keyboard.press('Tab');
  assert.equal(await focused(page), 'figure-panel', 'Tab leaves the tab list for the figure');
  await page.keyboard.press('Shift+Tab');
  assert.equal(await focused(page), `tab-${ids[0]}`);
  // A click on a tab also keeps the focus on it.
  await page.click(`#figure-tabs [data-figure="${ids[2]}"]`);
  await shows(ids[2]);
  assert.equal(await focused(page), `tab-${ids[2]}`);
  clean(problems);
  await context.close();
});
