// Page figures for scripts/bench (not a test: its name does not end in .test.mjs, so the test
// runner never picks it up). Drives the built page (web/, with web/pkg from scripts/build-wasm)
// in Debian's Chromium through playwright-core and prints one JSON object on stdout:
//
// - first_result_ms: navigation start → the demo's first result on screen, in fresh browser
//   contexts (nothing cached: the module is fetched and compiled each time);
// - page_analysis_ms: the page's own "Analysed in … ms" (body.dataset.analysisMs: the worker's
//   analysis, the report's JSON, tables and figures) for the load and for re-analyses of the demo;
// - wasm_analysis_ms: the wasm call alone (Workbench.analyze on the demo, 2000 Monte Carlo
//   draws), run repeatedly in a fresh page of the same origin that loads only the module;
// - wasm size, raw and gzip -9.
//
// Usage: node tests/browser/bench-page.mjs [--loads N] [--repeats N]

import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { gzipSync } from 'node:zlib';
import { launch, serve, openPage, WEB } from './harness.mjs';

const arg = (name, fallback) => {
  const i = process.argv.indexOf(name);
  return i > 0 ? Number(process.argv[i + 1]) : fallback;
};
const LOADS = arg('--loads', 5);
const REPEATS = arg('--repeats', 20);
const EXAMPLE = 'qz2-levels';

const median = (xs) => {
  const s = [...xs].sort((a, b) => a - b);
  const m = s.length >> 1;
  return s.length % 2 ? s[m] : 0.5 * (s[m - 1] + s[m]);
};

function fail(message) {
  console.error(`bench-page: ${message}`);
  process.exit(1);
}

// Records the moment (ms since navigation start) the page first marks a result.
function watchFirstResult() {
  new MutationObserver((_, observer) => {
    if (document.body?.dataset.firstResultMs && window.__firstResultAt === undefined) {
      window.__firstResultAt = performance.now();
      observer.disconnect();
    }
  }).observe(document, { subtree: true, attributes: true, attributeFilter: ['data-first-result-ms'] });
}

async function waitAnalysed(page) {
  await page.waitForFunction(() => document.body.dataset.state === 'analysed', null, { timeout: 60000 });
}

async function loadOnce(browser, origin) {
  const { page, context, problems } = await openPage(browser, origin);
  await page.addInitScript(watchFirstResult);
  await page.goto(origin + '/');
  await waitAnalysed(page);
  const firstAt = await page.evaluate(() => window.__firstResultAt);
  const firstAnalysis = Number(await page.evaluate(() => document.body.dataset.analysisMs));
  const d0 = await page.textContent('#d0-value');
  return { page, context, problems, firstAt, firstAnalysis, d0 };
}

// Re-analyse the demo through the page's own controls (choose it again in the examples list).
async function reanalyse(page) {
  await page.evaluate(() => {
    delete document.body.dataset.state;
    document.getElementById('examples').value = '';
  });
  await page.selectOption('#examples', EXAMPLE);
  await waitAnalysed(page);
  return Number(await page.evaluate(() => document.body.dataset.analysisMs));
}

// A blank page of the same origin that loads only the module and times Workbench.analyze.
const BLANK = '/__bench_blank.html';
const BLANK_HTML = `<!doctype html><meta charset="utf-8"><link rel="icon" href="data:,"><title>bench</title>
<script type="module">
import init, { Workbench } from './pkg/rungs_wasm.js';
window.__run = async (example, repeats) => {
  const t0 = performance.now();
  await init();
  const initMs = performance.now() - t0;
  const wb = new Workbench();
  wb.load_example(example);
  const times = [];
  let json = '';
  for (let i = 0; i < repeats; i += 1) {
    const s = performance.now();
    json = wb.analyze(() => {});
    times.push(performance.now() - s);
  }
  const report = JSON.parse(json);
  return { initMs, times, recommended: report.recommended, samples: report.monte_carlo.samples,
           estimates: report.estimates.map((e) => ({ method: e.method, d0: e.d0_cm1 ?? null })) };
};
window.__ready = true;
</script>`;

async function wasmAlone(browser, origin) {
  const { page, context, problems } = await openPage(browser, origin);
  await page.route(origin + BLANK, (route) => route.fulfill({ status: 200, contentType: 'text/html', body: BLANK_HTML }));
  await page.goto(origin + BLANK);
  await page.waitForFunction(() => window.__ready === true);
  const out = await page.evaluate(([ex, n]) => window.__run(ex, n), [EXAMPLE, REPEATS]);
  await context.close();
  return { ...out, problems };
}

async function main() {
  const wasmPath = join(WEB, 'pkg', 'rungs_wasm_bg.wasm');
  let bytes;
  try {
    bytes = readFileSync(wasmPath);
  } catch {
    fail(`${wasmPath} is missing: run scripts/build-wasm first`);
  }
  const browser = await launch();
  const served = await serve();
  try {
    const firstResult = [];
    const firstAnalysis = [];
    let steady = [];
    let d0Shown = null;
    const problems = [];
    for (let i = 0; i < LOADS; i += 1) {
      const r = await loadOnce(browser, served.origin);
      if (typeof r.firstAt !== 'number') fail('the page never marked its first result');
      firstResult.push(r.firstAt);
      firstAnalysis.push(r.firstAnalysis);
      d0Shown = r.d0;
      if (i === 0) {
        for (let k = 0; k < Math.max(5, Math.round(REPEATS / 2)); k += 1) steady.push(await reanalyse(r.page));
      }
      problems.push(...r.problems.console, ...r.problems.pageErrors, ...r.problems.failed, ...r.problems.foreign);
      await r.context.close();
    }
    const alone = await wasmAlone(browser, served.origin);
    problems.push(...alone.problems.console, ...alone.problems.pageErrors, ...alone.problems.failed);
    if (problems.length) fail(`the page reported problems: ${problems.join(' | ')}`);
    if (alone.samples !== 2000) fail(`the demo ran ${alone.samples} Monte Carlo samples, expected 2000`);
    // Steady state: skip the first re-runs while the browser's optimising compiler catches up.
    const warm = steady.slice(Math.min(2, steady.length - 1));
    const wasmWarm = alone.times.slice(Math.min(5, alone.times.length - 1));
    const out = {
      browser: browser.version(),
      example: EXAMPLE,
      loads: LOADS,
      first_result_ms: { median: median(firstResult), all: firstResult },
      page_analysis_ms: { first_median: median(firstAnalysis), first_all: firstAnalysis,
                          steady_median: median(warm), reruns: steady },
      wasm_analysis_ms: { init_ms: alone.initMs, first: alone.times[0], steady_median: median(wasmWarm),
                          steady_min: Math.min(...wasmWarm), all: alone.times },
      wasm_bytes: { raw: bytes.length, gzip9: gzipSync(bytes, { level: 9 }).length },
      d0_shown: d0Shown,
      recommended: alone.recommended,
      estimates: alone.estimates,
    };
    process.stdout.write(JSON.stringify(out, null, 1) + '\n');
  } finally {
    await browser.close();
    served.server.close();
  }
}

main().catch((err) => fail(err?.stack ?? String(err)));
