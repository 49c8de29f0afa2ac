// The page end to end in Debian's Chromium: every way data comes in, row exclusion and σ edits,
// every export parsed back, JSON import and share-link round trips, a 100 000-row paste, page
// and command line agreeing on the numbers, accessibility basics, and no request off the origin.

import { test, before, after } from 'node:test';
import assert from 'node:assert/strict';
import { readFileSync, existsSync } from 'node:fs';
import { execFileSync } from 'node:child_process';
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

const DEMO = join(ROOT, 'crates/core/data/demo/qz2-levels.csv');

/** Wait until the page has finished an analysis started after `mark()`. */
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
  assert.deepEqual(problems.failed, [], 'no failed request');
}

/** Minimal RFC 4180 reader: rows of fields (quotes, doubled quotes, CRLF). */
function parseCsv(text) {
  const rows = [];
  let row = [];
  let field = '';
  let quoted = false;
  for (let i = 0; i < text.length; i += 1) {
    const c = text[i];
    if (quoted) {
      if (c === '"' && text[i + 1] === '"') { field += '"'; i += 1; } else if (c === '"') quoted = false; else field += c;
    } else if (c === '"') quoted = true;
    else if (c === ',') { row.push(field); field = ''; } else if (c === '\n' || c === '\r') {
      if (c === '\r' && text[i + 1] === '\n') i += 1;
      row.push(field); rows.push(row); row = []; field = '';
    } else field += c;
  }
  if (field !== '' || row.length) { row.push(field); rows.push(row); }
  return rows;
}

/**
 * Click something that downloads a file and return the file's bytes. Headless Chromium now and
 * then drops one of many downloads started in quick succession from one page, so a click whose
 * download never starts is repeated once; the file checked is still the one the page produced.
 */
async function downloadText(page, click) {
  for (let attempt = 1; ; attempt += 1) {
    try {
      const [download] = await Promise.all([page.waitForEvent('download', { timeout: 8000 }), click()]);
      return readFileSync(await download.path());
    } catch (err) {
      if (attempt >= 2) throw err;
    }
  }
}

/** Close a dialog and wait until it is gone (closing through its form happens a task later). */
async function closeDialog(page, id) {
  await page.click(`#${id} button[value=close]`);
  await page.waitForFunction((d) => !document.getElementById(d).open, id);
}

async function exportJson(page) {
  return JSON.parse((await downloadText(page, () => page.click('#export-json'))).toString('utf8'));
}

test('choose a file, drop a file, paste a table: each is read and analysed', async () => {
  const { page, problems, context } = await fresh();
  const text = readFileSync(DEMO, 'utf8');

  await mark(page);
  await page.setInputFiles('#file-input', { name: 'chosen-levels.csv', mimeType: 'text/csv', buffer: Buffer.from(text) });
  await analysed(page);
  assert.match(await page.textContent('#reading'), /chosen-levels\.csv/);

  await mark(page);
  const dt = await page.evaluateHandle((t) => {
    const d = new DataTransfer();
    d.items.add(new File([t], 'dropped-levels.csv', { type: 'text/csv' }));
    return d;
  }, text.replace('v,energy_cm1', 'v,energy_cm1'));
  await page.dispatchEvent('body', 'drop', { dataTransfer: dt });
  await analysed(page);
  assert.match(await page.textContent('#reading'), /dropped-levels\.csv/);

  await mark(page);
  await page.click('#paste-open');
  await page.fill('#paste-text', 'v\tE\tsigma\n0\t0\t0.1\n1\t990\t0.1\n2\t1960\t0.1\n3\t2910\t0.1\n4\t3840\t0.1\n5\t4750\t0.1\n');
  await page.click('#paste-read');
  await analysed(page);
  assert.match(await page.textContent('#reading'), /pasted table/);
  assert.match(await page.textContent('#reading'), /6 used/);
  // Closed form (Morse levels, common practice): spacings 990, 970, … are ΔG = ωe − 2ωexe(v+1)
  // with ωe = 1010, ωexe = 10, so the linear Birge–Sponer limit is v_D = ωe/(2ωexe) − ½ = 50.
  const doc = await exportJson(page);
  const bs = doc.estimates.find((e) => e.method === 'birge-sponer-linear');
  assert.ok(Math.abs(bs.v_d - 50) < 1e-9, `v_D = ${bs.v_d}`);
  await page.screenshot({ path: screenshotPath('page-pasted'), fullPage: true });
  clean(problems);
  await context.close();
});

test('excluding a point changes the result, keeps the row visible and in every export', async () => {
  const { page, problems, context } = await fresh();
  const before = await exportJson(page);
  const line = before.session.input.text.split('\n').findIndex((l) => l.startsWith('10,')) + 1; // v = 10
  await mark(page);
  await page.click('#rows'); // focus the table
  await page.evaluate((n) => { document.querySelector(`#rows [data-line="${n}"]`).scrollIntoView(); }, line);
  await page.uncheck(`#rows [data-line="${line}"] input[type=checkbox]`);
  await analysed(page);
  const rowText = await page.textContent(`#rows [data-line="${line}"]`);
  assert.match(rowText, /10/, 'the excluded row stays visible');
  assert.ok(await page.$(`#rows [data-line="${line}"].excluded_by_user`), 'and is marked excluded');
  const after = await exportJson(page);
  assert.equal(after.levels.length, before.levels.length - 1);
  const linear = (d) => d.estimates.find((e) => e.method === 'birge-sponer-linear').d0_cm1;
  assert.notEqual(linear(after), linear(before), 'the result changed');
  assert.equal(after.rows.excluded[0].row, line);
  assert.equal(after.rows.excluded[0].by, 'user');
  const csv = parseCsv((await (async () => {
    await page.click('#export-csv');
    await page.waitForSelector('[data-table="rows"]');
    return downloadText(page, () => page.click('[data-table="rows"]'));
  })()).toString('utf8'));
  const excluded = csv.find((r) => r[0] === String(line));
  assert.equal(excluded[1], 'excluded by the user');
  await closeDialog(page, 'tables-dialog');
  await page.screenshot({ path: screenshotPath('page-excluded'), fullPage: true });

  // A σ typed for one row replaces the table's σ and changes the statistics.
  await mark(page);
  const first = line + 2;
  await page.fill(`#rows [data-line="${first}"] .c-sigma input`, '5');
  await page.press(`#rows [data-line="${first}"] .c-sigma input`, 'Enter');
  await analysed(page);
  const edited = await exportJson(page);
  assert.deepEqual(edited.session.intake.sigmas, [{ row: first, sigma: 5 }]);
  const lvl = edited.levels.find((l) => l.v === 12);
  assert.equal(lvl.sigma_cm1, 5);
  clean(problems);
  await context.close();
});

test('the settings form reaches the analysis: mass as two nuclides, Monte Carlo samples', async () => {
  const { page, problems, context } = await fresh();
  await page.click('#settings-box summary');
  await mark(page);
  await page.fill('#settings [name=mass]', '7Li,35Cl');
  await page.press('#settings [name=mass]', 'Enter');
  await analysed(page);
  await mark(page);
  await page.fill('#settings [name=mc_samples]', '300');
  await page.press('#settings [name=mc_samples]', 'Enter');
  await analysed(page);
  const status = await page.textContent('#status-text');
  assert.doesNotMatch(status, /fail|invalid|error/i, `status: ${status}`);
  const doc = await exportJson(page);
  assert.deepEqual(doc.session.settings.mass, { kind: 'nuclides', a: '7Li', b: '35Cl' });
  assert.equal(doc.session.settings.mc_samples, 300);
  assert.equal(doc.monte_carlo.samples, 300);
  // SOURCE: atomic masses of 7Li and 35Cl from the periodictable package (AME), as written by
  // scripts/oracles/units.py into tests/intake/units_oracle.json; μ = m_a m_b / (m_a + m_b).
  const oracle = JSON.parse(readFileSync(join(ROOT, 'tests/intake/units_oracle.json'), 'utf8'));
  const [ma, mb] = [oracle.masses_u['7Li'], oracle.masses_u['35Cl']];
  const mu = (ma * mb) / (ma + mb);
  assert.ok(Math.abs(doc.input.mu_u - mu) < 1e-7 * mu, `μ ${doc.input.mu_u} vs ${mu}`);
  // A required number left empty is refused in place: the field shows the value still in force.
  await page.fill('#settings [name=mc_samples]', '');
  await page.press('#settings [name=mc_samples]', 'Enter');
  assert.equal(await page.inputValue('#settings [name=mc_samples]'), '300');
  clean(problems);
  await context.close();
});

test('every export is a valid file; JSON import and the share link restore the same numbers', async () => {
  const { page, problems, context } = await fresh();
  const doc = await exportJson(page);
  assert.equal(doc.format, 'rungs-analysis');
  assert.equal(doc.codata_year, 2022);
  assert.match(doc.input_sha256, /^[0-9a-f]{64}$/);
  assert.ok(doc.methods.paragraph.length > 200 && doc.methods.references.length >= 3);

  // Every CSV table parses with a constant number of fields.
  await page.click('#export-csv');
  await page.waitForSelector('#tables-list [data-table]');
  const ids = await page.$$eval('#tables-list [data-table]', (b) => b.map((x) => x.dataset.table));
  assert.ok(ids.length >= 6, `tables: ${ids}`);
  for (const id of ids) {
    const rows = parseCsv((await downloadText(page, () => page.click(`[data-table="${id}"]`))).toString('utf8'))
      .filter((r) => r.length > 1 || r[0] !== '');
    assert.ok(rows.length >= 2, `${id} has data`);
    assert.ok(rows.every((r) => r.length === rows[0].length), `${id} is rectangular`);
  }
  await closeDialog(page, 'tables-dialog');

  // Every figure: SVG well-formed (browser XML parser), PNG with its signature.
  const figures = await page.$$eval('#figure-tabs [data-figure]', (b) => b.map((x) => x.dataset.figure));
  assert.ok(figures.length >= 6, `figures: ${figures}`);
  for (const id of figures) {
    const draws = await page.evaluate(() => Number(document.body.dataset.figureDraws ?? 0));
    await page.click(`#figure-tabs [data-figure="${id}"]`);
    await page.waitForFunction(([f, n]) => document.body.dataset.shownFigure === f && Number(document.body.dataset.figureDraws) > n, [id, draws]);
    assert.ok(await inkedPixels(page, '#figure') > 1500, `${id} drawn`);
    const svg = (await downloadText(page, () => page.click('#figure-svg'))).toString('utf8');
    const ok = await page.evaluate((s) => {
      const d = new DOMParser().parseFromString(s, 'image/svg+xml');
      return d.documentElement.nodeName === 'svg' && !d.querySelector('parsererror');
    }, svg);
    assert.ok(ok, `${id}: SVG well-formed`);
    const png = await downloadText(page, () => page.click('#figure-png'));
    assert.deepEqual([...png.subarray(0, 8)], [137, 80, 78, 71, 13, 10, 26, 10], `${id}: PNG`);
    await page.screenshot({ path: screenshotPath(`figure-${id.replace(':', '-')}`) });
  }

  // The printable report holds the data, results, methods and every figure.
  const parts = await page.evaluate(async () => {
    const view = await globalThis.rungsBuildReport();
    return { text: view.textContent, images: view.querySelectorAll('img').length };
  });
  assert.match(parts.text, /SHA-256/);
  assert.match(parts.text, /Methods/);
  assert.match(parts.text, /LeRoy/);
  assert.equal(parts.images, figures.length);
  await page.screenshot({ path: screenshotPath('page-report'), fullPage: true });
  await page.evaluate(() => window.dispatchEvent(new Event('afterprint')));

  // JSON import restores the session: the same numbers.
  await mark(page);
  await page.selectOption('#examples', 'qz2-low-levels');
  await analysed(page);
  await mark(page);
  await page.setInputFiles('#file-input', { name: 'saved.json', mimeType: 'application/json', buffer: Buffer.from(JSON.stringify(doc)) });
  await analysed(page);
  const reimported = await exportJson(page);
  assert.deepEqual(reimported.estimates, doc.estimates);
  assert.deepEqual(reimported.recommended, doc.recommended);

  // The share link opens the same session in a new page.
  await page.click('#share-link');
  await page.waitForFunction(() => document.getElementById('share-dialog').open && document.getElementById('share-text').value);
  const link = await page.inputValue('#share-text');
  assert.ok(link.startsWith(served.origin + '/#session='));
  const second = await openPage(browser, served.origin);
  await second.page.goto(link);
  await analysed(second.page);
  const shared = await exportJson(second.page);
  assert.deepEqual(shared.estimates, doc.estimates);
  clean(second.problems);
  await second.context.close();
  clean(problems);
  await context.close();
});

test('the page and the command line give the same numbers for the same input', async (t) => {
  const cli = join(ROOT, 'target/debug/rungs');
  if (!existsSync(cli)) {
    t.diagnostic('target/debug/rungs not built (scripts/test builds it in the native tests)');
  }
  assert.ok(existsSync(cli), 'the CLI binary is built before the browser tests');
  // The page does not run the direct potential fit yet (seconds in the browser; its document
  // records potential_fit: false), so the command line is asked for the same analysis.
  const fromCli = JSON.parse(execFileSync(cli, ['analyze', DEMO, '--mu', '14.5', '--no-potential-fit', '--format', 'json']).toString('utf8'));
  const { page, problems, context } = await fresh();
  const fromPage = await exportJson(page);
  // The same core code runs in both; only the elementary functions differ (the browser module's
  // exp/ln/pow are the portable Rust ones, the native binary's the C library's), so numbers agree
  // to rounding, amplified a little by iterative fits stopping at their tolerance: 1e-6 relative.
  const near = (a, b, path) => {
    if (typeof a === 'number' && typeof b === 'number') {
      assert.ok(Math.abs(a - b) <= 1e-6 * Math.max(1, Math.abs(a), Math.abs(b)), `${path}: ${a} vs ${b}`);
    } else if (a && typeof a === 'object') {
      assert.deepEqual(Object.keys(a).sort(), Object.keys(b).sort(), path);
      // Iteration counts of the fits are bookkeeping, not results: they may differ by a few.
      for (const k of Object.keys(a)) if (k !== 'iterations') near(a[k], b[k], `${path}.${k}`);
    } else {
      assert.equal(a, b, path);
    }
  };
  near(fromPage.estimates, fromCli.estimates, 'estimates');
  near(fromPage.recommended, fromCli.recommended, 'recommended');
  near(fromPage.constants, fromCli.constants, 'constants');
  clean(problems);
  await context.close();
});

test('bands: both states, the band array and the numbering verdict', async () => {
  const { page, problems, context } = await fresh();
  await mark(page);
  await page.selectOption('#examples', 'qz2-bands');
  await analysed(page);
  assert.match(await page.textContent('#numbering'), /numbering fixed by isotope shifts/);
  assert.match(await page.textContent('#recommended'), /Upper state/);
  await page.click('#figure-tabs [data-figure="array:0"]');
  await page.waitForFunction(() => document.body.dataset.shownFigure === "array:0");
  assert.ok(await inkedPixels(page, '#figure') > 1500);
  await page.screenshot({ path: screenshotPath('page-bands'), fullPage: true });

  // The band settings reach the analysis. SOURCE: the energy cycle D0″ = T00 + D0′ − E_atom
  // (domain.md, closed form): raising E_atom by 100 cm⁻¹ lowers D0″ by exactly 100 cm⁻¹ and
  // leaves E_lim alone.
  const before = await exportJson(page);
  const eAtom = before.session.settings.bands.atomic_excitation_cm1;
  await page.evaluate(() => { document.getElementById('settings-box').open = true; });
  await mark(page);
  await page.fill('#settings [name=atomic_excitation_cm1]', String(eAtom + 100));
  await page.press('#settings [name=atomic_excitation_cm1]', 'Enter');
  await analysed(page);
  const after = await exportJson(page);
  assert.equal(after.convergence.upper_limit_cm1.value, before.convergence.upper_limit_cm1.value);
  const drop = before.convergence.d0_lower_cm1.value - after.convergence.d0_lower_cm1.value;
  assert.ok(Math.abs(drop - 100) < 1e-6, `D0″ moved by ${drop}`);
  clean(problems);
  await context.close();
});

test('a 100 000-row paste is read in the worker while the page keeps responding', async () => {
  const { page, problems, context } = await fresh();
  const lines = ['v,E,sigma'];
  for (let v = 0; v < 100000; v += 1) lines.push(`${v},${(1000 * (v + 0.5) - 0.004 * (v + 0.5) ** 2).toFixed(4)},0.01`);
  const big = `${lines.join('\n')}\n`;
  // Measure the longest gap between animation frames while the table is read and analysed.
  await page.evaluate(() => {
    globalThis.maxGap = 0;
    let last = performance.now();
    const tick = (now) => { globalThis.maxGap = Math.max(globalThis.maxGap, now - last); last = now; if (!globalThis.stopTicks) requestAnimationFrame(tick); };
    requestAnimationFrame(tick);
  });
  await mark(page);
  // Ctrl+V on the page: a paste event carrying the text.
  await page.evaluate((t) => {
    const data = new DataTransfer();
    data.setData('text/plain', t);
    document.body.dispatchEvent(new ClipboardEvent('paste', { clipboardData: data, bubbles: true, cancelable: true }));
  }, big);
  await page.waitForFunction(() => /100000 rows/.test(document.getElementById('reading')?.textContent ?? ''), null, { timeout: 60000 });
  await page.waitForFunction(() => ['analysed', 'busy'].includes(document.body.dataset.state) && !/Analysing|Reading/.test(document.getElementById('status-text').textContent), null, { timeout: 120000 });
  const gap = await page.evaluate(() => { globalThis.stopTicks = true; return globalThis.maxGap; });
  // The main thread only renders the visible rows; a gap over half a second would be a freeze.
  assert.ok(gap < 500, `longest frame gap ${gap.toFixed(0)} ms`);
  // Scrolling to the end shows the last row.
  await page.$eval('#rows', (el) => { el.scrollTop = el.scrollHeight; });
  await page.waitForSelector('#rows [data-line="100001"]', { timeout: 10000 });
  clean(problems);
  await context.close();
});

test('every control is labelled and reachable by keyboard; the page fits 1280×800', async () => {
  const { page, problems, context } = await fresh();
  const unlabelled = await page.evaluate(() => {
    const bad = [];
    for (const e of document.querySelectorAll('button, select, input, textarea, [role=tab]')) {
      if (e.closest('[hidden]') || e.type === 'file') continue;
      const name = e.getAttribute('aria-label') || e.labels?.[0]?.textContent || e.textContent || e.title || e.placeholder;
      if (!name || !name.trim()) bad.push(e.outerHTML.slice(0, 80));
    }
    return bad;
  });
  assert.deepEqual(unlabelled, []);
  // Tabbing from the top reaches the file chooser, the examples and the unit switch.
  const reached = new Set();
  for (let i = 0; i < 25; i += 1) {
    await page.keyboard.press('Tab');
    reached.add(await page.evaluate(() => document.activeElement?.id || document.activeElement?.tagName));
  }
  for (const id of ['unit', 'open-file', 'examples']) assert.ok(reached.has(id), `${id} reachable by Tab`);
  const width = await page.evaluate(() => document.documentElement.scrollWidth);
  assert.ok(width <= 1280, `no horizontal scrolling at 1280 px (${width})`);
  clean(problems);
  await context.close();
});

test('a table that cannot be analysed clears the earlier result instead of leaving it on screen', async () => {
  const { page, problems, context } = await fresh();
  assert.equal(await page.isVisible('#results'), true);
  await mark(page);
  await page.setInputFiles('#file-input', { name: 'two-rows.csv', mimeType: 'text/csv', buffer: Buffer.from('v,E\n0,0\n1,990\n') });
  await page.waitForFunction(() => document.body.dataset.state === 'failed');
  assert.equal(await page.isVisible('#results'), false, 'no stale result');
  assert.match(await page.textContent('#status'), /usable|at least/i);
  // The rows are still shown, with what was read.
  assert.match(await page.textContent('#reading'), /two-rows\.csv/);
  clean(problems);
  await context.close();
});

test('a correction that leaves the table unreadable is explained, and undoing it restores the analysis', async () => {
  const { page, problems, context } = await fresh();
  const before = await exportJson(page);
  // Column 2 holds the energies; calling it a v column leaves nothing to analyse.
  await page.selectOption('#reading select[aria-label="Role of column 2"]', 'v');
  await page.waitForFunction(() => /cannot tell what the table holds/.test(document.getElementById('status-text').textContent));
  assert.equal(await page.getAttribute('#status', 'class'), 'status error');
  // The worker kept the previous reading: the controls still show it, and putting the role back
  // gives the same numbers as before.
  await mark(page);
  await page.selectOption('#reading select[aria-label="Role of column 2"]', 'energy');
  await analysed(page);
  const after = await exportJson(page);
  assert.equal(after.recommended.d0_cm1, before.recommended.d0_cm1);
  clean(problems);
  await context.close();
});

test('the unit switch converts every shown energy; a column unit re-reads the table; hovering a point reads it out', async () => {
  const { page, problems, context } = await fresh();
  const doc = await exportJson(page);
  // SOURCE: cm⁻¹ per eV and per meV from scipy.constants (CODATA 2022), written by
  // scripts/oracles/units.py into tests/intake/units_oracle.json.
  const oracle = JSON.parse(readFileSync(join(ROOT, 'tests/intake/units_oracle.json'), 'utf8'));
  const perEv = oracle.cm1_per_unit.eV;
  await page.selectOption('#unit', 'eV');
  await page.waitForFunction(() => /eV/.test(document.getElementById('d0-line').textContent));
  const shown = Number.parseFloat(await page.textContent('#d0-value'));
  const expected = doc.recommended.d0_cm1 / perEv;
  // The value is rounded to its σ (two significant digits of σ): within half a σ.
  const sigmaEv = doc.recommended.sigma_stat_cm1 / perEv;
  assert.ok(Math.abs(shown - expected) <= 0.5 * sigmaEv, `D0 ${shown} eV vs ${expected} eV`);
  assert.match(await page.textContent('#estimates thead'), /D0 \/ eV/);

  // Hovering the ΔG figure: scan the canvas until the pointer is over a point.
  await page.click('#figure-tabs [data-figure="spacings"]');
  const box = await page.locator('#figure').boundingBox();
  let readout = '';
  for (let fy = 0.1; fy < 0.9 && !readout; fy += 0.01) {
    for (let fx = 0.1; fx < 0.3 && !readout; fx += 0.01) {
      await page.mouse.move(box.x + fx * box.width, box.y + fy * box.height);
      readout = (await page.textContent('#readout')).trim();
    }
  }
  assert.match(readout, /^ΔG\(v = \d+→\d+\) = [\d.]+ ± \S+ eV$/, `read-out: ${readout}`);

  // The energy column re-read as meV: every energy, and so every D0, scales by cm⁻¹ per meV.
  await page.selectOption('#unit', 'cm-1');
  await mark(page);
  await page.selectOption('#reading select[aria-label="Unit of column 2"]', 'meV');
  await analysed(page);
  const mev = await exportJson(page);
  const obs = (d) => d.estimates.find((e) => e.method === 'observed-sum').d0_cm1;
  const ratio = obs(mev) / obs(doc);
  assert.ok(Math.abs(ratio - oracle.cm1_per_unit.meV) < 1e-9 * oracle.cm1_per_unit.meV, `ratio ${ratio}`);
  clean(problems);
  await context.close();
});
