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

test('figure read-outs from the keyboard: arrow keys, Home and End step through the points', async () => {
  const { page, problems, context } = await fresh();
  await page.focus('#figure-panel');
  const readout = () => page.textContent('#readout');
  assert.equal(await readout(), '', 'nothing read out before a key');
  await page.keyboard.press('ArrowRight');
  const first = await readout();
  assert.match(first, /^point 1 of (\d+): \S/);
  const n = Number(first.match(/of (\d+)/)[1]);
  // The default example's spacings figure shows a point per observed spacing at least.
  assert.ok(n >= 30, `${n} points`);
  await page.keyboard.press('ArrowRight');
  const second = await readout();
  assert.match(second, /^point 2 of /);
  assert.notEqual(second.replace(/^point \d+/, ''), first.replace(/^point \d+/, ''), 'another point');
  await page.keyboard.press('End');
  assert.match(await readout(), new RegExp(`^point ${n} of ${n}: `));
  await page.keyboard.press('ArrowRight');
  assert.match(await readout(), new RegExp(`^point ${n} of ${n}: `), 'stays on the last point');
  await page.keyboard.press('Home');
  assert.equal(await readout(), first);
  clean(problems);
  await context.close();
});

/**
 * Patterns that must never reach a user: names of our internal notes and section references
 * to them, method ids, snake_case field paths, Rust enum names, parser messages, and the marks
 * of values gone missing on the way to the screen.
 */
const INTERNAL = [
  [/domain\.md|\.md\b/, 'an internal note'],
  [/§/, 'a section reference to internal notes'],
  [/(?<![\w-])(?:birge-sponer-(?:linear|curved)|leroy-bernstein(?:-n-free|-alt-levels)?|near-dissociation-expansion|observed-sum|monte-carlo)(?![\w-])/, 'a method id'],
  // Field names such as sigma_scale or bands.head_sigma_cm1; not notation such as r_e or v_top.
  [/\b[a-z]{2,}[a-z0-9]*(?:_[a-z0-9]+)+\b/, 'a snake_case field name'],
  [/\b(?!LeRoy\b)[A-Z][a-z]+[A-Z][A-Za-z]*\b/, 'a Rust type or enum name'],
  [/expected (?:u32|u64|f64|usize|i32|a |value|`)|at line \d+ column \d+|invalid type|unknown variant|missing field/, 'a parser message'],
  [/nullnull|\bundefined\b|\bNaN\b|\[object Object\]|± —|±\s*$/, 'a value lost on the way'],
];

/** The findings of INTERNAL in `strings` (each [where, text]). */
function findInternal(strings) {
  const found = [];
  for (const [where, text] of strings) {
    for (const [re, what] of INTERNAL) {
      const m = text.match(re);
      if (m) found.push(`${what} "${m[0]}" in ${where}: ${text.slice(0, 160)}`);
    }
  }
  return found;
}

test('the scan of user-visible words finds internal names (a check of the check itself)', () => {
  const planted = [
    ['a', 'see domain.md §1.5'], ['b', 'birge-sponer-linear ×5173'], ['c', 'sigma_scale'],
    ['d', 'bands.head_sigma_cm1'], ['e', 'stopped: MaxIterations'], ['f', 'expected u32 at line 1 column 16'],
    ['g', 'nullnull'], ['h', '12 ± —'],
  ];
  for (const [where, text] of planted) {
    assert.ok(findInternal([[where, text]]).length > 0, `found in "${text}"`);
  }
  assert.deepEqual(findInternal([['ok', 'LeRoy–Bernstein D0 = 4385 ± 12 cm⁻¹ (Birge–Sponer, CODATA 2022); G(v_top) − G(0); r_e = 2.39 Å']]), []);
});

/** Every string a user can read on the page now (the printed report view included). */
async function visibleStrings(page) {
  // Open every collapsed part and build the printed report view, so all of it is in the page.
  await page.evaluate(async () => {
    for (const d of document.querySelectorAll('details')) d.open = true;
    await globalThis.rungsBuildReport();
  });
  const strings = await page.evaluate(() => {
    const out = [];
    // The user's own table (cells, column names, file name) is theirs, not ours.
    const theirs = (n) => n.closest?.('#rows .c-cell, .columns td:nth-child(2), .rows-text');
    const walk = document.createTreeWalker(document.body, NodeFilter.SHOW_TEXT);
    for (let t = walk.nextNode(); t; t = walk.nextNode()) {
      const p = t.parentElement;
      if (!p || p.closest('script, style') || theirs(p)) continue;
      const text = t.textContent.trim();
      if (text) out.push([`<${p.tagName.toLowerCase()}${p.id ? `#${p.id}` : ''}>`, text]);
    }
    for (const e of document.querySelectorAll('[title], [aria-label], [placeholder], [alt]')) {
      for (const a of ['title', 'aria-label', 'placeholder', 'alt']) {
        const v = e.getAttribute(a);
        if (v && !theirs(e)) out.push([`${a} of <${e.tagName.toLowerCase()}>`, v]);
      }
    }
    for (const i of document.querySelectorAll('input:not([type=checkbox]):not([type=file])')) {
      if (i.value && !theirs(i) && !i.closest('#rows')) out.push([`value of ${i.name || i.id}`, i.value]);
    }
    // Words drawn in the figures of the printed report (SVG text).
    for (const img of document.querySelectorAll('#print-view img')) {
      const svg = decodeURIComponent(img.src.replace(/^data:image\/svg\+xml;charset=utf-8,/, ''));
      const doc = new DOMParser().parseFromString(svg, 'image/svg+xml');
      for (const t of doc.querySelectorAll('text, title')) {
        if (t.textContent.trim()) out.push([`figure ${img.alt}`, t.textContent.trim()]);
      }
    }
    return out;
  });
  await page.evaluate(() => window.dispatchEvent(new Event('afterprint')));
  return strings;
}

test('nothing a user reads after the demo analysis carries internal names or parser messages', async () => {
  const { page, problems, context } = await fresh();
  const strings = await visibleStrings(page);
  assert.ok(strings.length > 200, `the page was read (${strings.length} strings)`);
  assert.ok(strings.some(([w]) => w.startsWith('figure ')), 'the figures were read');
  const found = findInternal(strings);
  assert.deepEqual(found, [], `\n${found.join('\n')}`);
  clean(problems);
  await context.close();
});

test('nor after any other built-in example (spacings, low levels, a band list)', async () => {
  const { page, problems, context } = await fresh();
  const ids = await page.$$eval('#examples option', (o) => o.map((x) => x.value).filter(Boolean));
  assert.ok(ids.length >= 3, `examples: ${ids}`);
  const found = [];
  for (const id of ids) {
    await mark(page);
    await page.selectOption('#examples', id);
    await analysed(page);
    const strings = await visibleStrings(page);
    assert.ok(strings.length > 100, `${id}: the page was read`);
    found.push(...findInternal(strings).map((f) => `${id}: ${f}`));
  }
  assert.deepEqual(found, [], `\n${found.join('\n')}`);
  clean(problems);
  await context.close();
});

test('nor in any energy unit the page offers', async () => {
  const { page, problems, context } = await fresh();
  const units = await page.$$eval('#unit option', (o) => o.map((x) => x.value));
  assert.ok(units.length >= 3, `units: ${units}`);
  const found = [];
  for (const unit of units) {
    await page.selectOption('#unit', unit);
    await page.waitForFunction(() => document.getElementById('estimates').textContent.length > 0);
    found.push(...findInternal(await visibleStrings(page)).map((f) => `${unit}: ${f}`));
  }
  assert.deepEqual(found, [], `\n${found.join('\n')}`);
  clean(problems);
  await context.close();
});

test('binding energies below the asymptote: the headline is the top level\'s binding energy, with v_D mod 1, C6 and the scattering length', async () => {
  const { page, problems, context } = await fresh();
  // SOURCE: the n = 6 case of tests/analysis/pure_tail.json (LeRoy–Bernstein closed form;
  // scattering length by Gribakin & Flambaum's formula, evaluated by scripts/oracles/analysis.py).
  const fx = JSON.parse(readFileSync(join(ROOT, 'tests/analysis/pure_tail.json'), 'utf8'));
  const c = fx.cases.find((x) => x.n === 6);
  const d = c.expected.d_cm1;
  const rows = c.levels.map((l) => `${l.v},${d - l.energy_cm1},${l.sigma_cm1}`).join('\n');
  await page.click('#settings-box summary');
  await mark(page);
  await page.fill('#settings [name=mass]', String(c.mu_u));
  await page.press('#settings [name=mass]', 'Enter');
  await analysed(page);
  await paste(page, `v,E_b (cm-1),sigma\n${rows}\n`);
  await analysed(page);
  const head = await page.textContent('#recommended');
  assert.match(head, /Binding energy of the highest level/);
  assert.match(head, /not determined by these data/);
  assert.doesNotMatch(head, /D0 = /);
  const line = await page.textContent('#threshold-line');
  assert.match(line, /asymptote held/i);
  const a0 = Number(/a = ([0-9.]+)/.exec(line)?.[1]);
  assert.ok(Math.abs(a0 - c.expected.scattering_length_a0) < 0.01, `a = ${a0} a0 vs ${c.expected.scattering_length_a0}`);
  const frac = Number(/v_D mod 1 = ([0-9.]+)/.exec(line)?.[1]);
  assert.ok(Math.abs(frac - (c.expected.v_d - Math.floor(c.expected.v_d))) < 1e-3, `v_D mod 1 = ${frac}`);
  clean(problems);
  await context.close();
});

test('a typo far outside the rest is named first, marked in the rows, and excluded in one click with its reason', async () => {
  const { page, problems, context } = await fresh();
  // SYNTHETIC Morse levels G(v) = 230 (v+½) − 3 (v+½)² cm⁻¹ (closed form, common practice, no
  // source), σ = 0.05 cm⁻¹; v = 10 (line 12) typed 450 cm⁻¹ too high.
  let text = 'v,E,sigma\n';
  for (let v = 0; v < 25; v += 1) {
    const h = v + 0.5;
    text += `${v},${(230 * h - 3 * h * h + (v === 10 ? 450 : 0)).toFixed(2)},0.05\n`;
  }
  await paste(page, text);
  await analysed(page);
  const notice = page.locator('#far-points');
  assert.ok(await notice.isVisible(), 'a notice at the top of the results');
  const noticeText = await notice.textContent();
  assert.match(noticeText, /Row 12 \(v = 10\)/);
  assert.match(noticeText, /450 cm⁻¹ above/);
  // It comes before the headline result.
  const first = await page.evaluate(() => document.querySelector('#results').firstElementChild.id);
  assert.equal(first, 'far-points');
  // The row is marked in the row table; the others are not.
  const row = page.locator('#rows [data-line="12"]');
  assert.match(await row.getAttribute('class'), /\bfar\b/);
  assert.match(await row.locator('.c-why').textContent(), /far outside the rest/);
  assert.doesNotMatch(await page.locator('#rows [data-line="11"]').getAttribute('class'), /\bfar\b/);
  // Nothing was excluded silently: all 25 rows are used.
  assert.match(await page.textContent('#reading'), /25 used/);
  // One action: the button excludes row 12 with the reason core gave.
  const reasonShown = noticeText.match(/far outside the rest: [^?]*\?/)[0];
  await page.evaluate(() => { document.body.dataset.state = 'busy'; });
  await page.click('#far-points button.exclude-far[data-row="12"]');
  await analysed(page);
  assert.match(await page.textContent('#reading'), /24 used/);
  const excluded = page.locator('#rows [data-line="12"]');
  assert.match(await excluded.getAttribute('class'), /\bexcluded_by_user\b/);
  assert.equal(await excluded.locator('.c-why input').inputValue(), reasonShown);
  assert.ok(await page.locator('#far-points').isHidden(), 'no notice once the point is out');
  clean(problems);
  await context.close();
});

test('bands left out of the joint fit are counted and named where the count is shown', async () => {
  const { page, problems, context } = await fresh();
  // The SYNTHETIC demo band list read alone: its invented tags name no real atoms, so the second
  // isotopologue cannot join the joint fit. The count to expect is read from the file itself.
  const text = readFileSync(join(ROOT, 'crates/core/data/demo/qz2-bands.csv'), 'utf8');
  const rows = text.split('\n').filter((l) => l && !l.startsWith('#') && !l.startsWith('v_upper'));
  const tagged = rows.filter((l) => l.trim().endsWith(',29Qz31Qz')).length;
  await paste(page, text);
  await analysed(page);
  const count = await page.textContent('#global-count');
  assert.ok(count.includes(`${rows.length - tagged} bands of ${rows.length}`), count);
  assert.ok(count.includes(`left out: '29Qz31Qz', ${tagged} bands`), count);
  clean(problems);
  await context.close();
});
