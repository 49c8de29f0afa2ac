// Page wiring only: every number shown here comes from the wasm module (crates/wasm → core),
// every figure from rungs-plot. The session lives in a Web Worker (worker.js) so reading large
// tables and Monte Carlo never freeze the page; this thread draws figures and the DOM.

import init, {
  version, codata_year, examples, energy_units, input_units, column_roles,
  format_energy, format_number, Chart,
} from './pkg/rungs_wasm.js';
import { connect } from './js/rpc.js';
import { $, el, download } from './js/dom.js';
import { DataPanel } from './js/data.js';
import { Results } from './js/results.js';
import { FigurePanel } from './js/figures.js';
import { SettingsForm } from './js/settings.js';
import { openTables, openShare, printReport, sessionFromUrl } from './js/exports.js';

const state = {
  report: null,
  unit: 'cm-1',
  unitLabel: 'cm⁻¹',
  analysing: null,
  started: performance.now(),
};

function status(text, kind = '') {
  $('status-text').textContent = text;
  $('status').className = `status ${kind}`;
}

async function boot() {
  const wasmSource = globalThis.RUNGS_WASM_BYTES; // set by the single-file build

  // Start the worker first: it compiles its copy of the module, reads the first table and runs
  // the first analysis while this thread compiles its own copy and builds the page.
  // The single-file build supplies a classic worker script (module workers cannot load from a
  // file:// page); served normally, the worker is the module web/worker.js.
  const worker = globalThis.RUNGS_WORKER_URL
    ? new Worker(globalThis.RUNGS_WORKER_URL)
    : new Worker(new URL('./worker.js', import.meta.url), { type: 'module' });
  const rpc = connect(worker);
  rpc.onProgress = (done, total) => {
    const bar = $('progress');
    bar.hidden = false;
    bar.max = total;
    bar.value = done;
  };
  const booted = rpc.boot(wasmSource);
  // A share link that cannot be read or opened leaves its reason in the status line, and the
  // demo is shown instead.
  let shareProblem = null;
  const shared = await sessionFromUrl().catch((err) => {
    shareProblem = `The share link could not be read: ${err.message}`;
    status(shareProblem, 'error');
    return null;
  });
  const demo = () => rpc.call('load_example', 'qz2-levels');
  const firstReading = booted.then(() => (shared
    ? rpc.call('load_session', shared).catch((err) => {
      shareProblem = `The share link could not be opened: ${err.message}`;
      return demo();
    })
    : demo()));
  let firstAnalysis = firstReading.then((r) => (r.usable_error ? null : rpc.call('analyze'))).catch(() => null);

  await init(wasmSource ? { module_or_path: wasmSource } : undefined);
  $('version').textContent = version();
  $('codata').textContent = String(codata_year());

  const units = energy_units();
  const unitSelect = $('unit');
  for (const [token, label] of units) unitSelect.append(el('option', { value: token }, label));
  unitSelect.addEventListener('change', () => {
    state.unit = unitSelect.value;
    state.unitLabel = units.find(([t]) => t === state.unit)?.[1] ?? state.unit;
    renderResults();
    figures.setUnit(state.unit);
  });

  for (const e of examples()) $('examples').append(el('option', { value: e.id, title: e.description }, e.title));

  await booted;

  const results = new Results({ format_energy, format_number });
  const figures = new FigurePanel(rpc, Chart);
  const settings = new SettingsForm((s) => run(() => rpc.call('set_settings', JSON.stringify(s))).then(() => analyse()).catch(shown));
  // A reading change { op, ...fields } travels as the JSON object { op: { ...fields } }.
  const data = new DataPanel(rpc, { roles: column_roles(), units: input_units() },
    ({ op, ...fields }) => run(() => rpc.call('change_reading', JSON.stringify({ [op]: fields }))).then(afterReading).catch(shown));

  // One action per point far outside the rest: exclude its row with core's reason filled in.
  results.onExclude = (row, reason) => run(() => rpc.call('change_reading', JSON.stringify({ exclude: { row, reason } })))
    .then(afterReading).catch(shown);

  function renderResults() {
    if (state.report) results.render(state.report, state.unit, state.unitLabel);
  }

  async function run(step) {
    try {
      return await step();
    } catch (err) {
      status(err.message, 'error');
      throw err;
    }
  }

  /** End of an event's chain whose failure `run` has already put in the status line (the
   *  worker keeps its previous table and settings, so what is on screen still matches it). */
  function shown() {}

  /** No stale numbers: results of an earlier table disappear as soon as they no longer apply. */
  function forgetResults() {
    state.report = null;
    data.markFar([]);
    $('results').hidden = true;
    for (const id of ['export-csv', 'print-report']) $(id).disabled = true;
  }

  async function afterReading(reading) {
    data.show(reading);
    settings.show(await rpc.call('settings'), reading.kind);
    for (const id of ['export-json', 'share-link']) $(id).disabled = false;
    if (reading.usable_error) {
      forgetResults();
      status(`Not enough usable data: ${reading.usable_error}`, 'error');
      document.body.dataset.state = 'failed';
      return;
    }
    await analyse();
  }

  async function analyse() {
    status('Analysing…');
    const t0 = performance.now();
    let json;
    try {
      // The very first analysis was started by the worker during start-up.
      const early = firstAnalysis;
      firstAnalysis = null;
      json = (early && (await early)) || (await rpc.call('analyze'));
    } catch (err) {
      $('progress').hidden = true;
      forgetResults();
      status(`The analysis failed: ${err.message}`, 'error');
      document.body.dataset.state = 'failed';
      return;
    }
    $('progress').hidden = true;
    state.report = JSON.parse(json);
    renderResults();
    data.markFar(state.report.far_points ?? []);
    await figures.refresh(state.unit);
    for (const id of ['export-json', 'export-csv', 'print-report']) $(id).disabled = false;
    const ms = performance.now() - t0;
    document.body.dataset.analysisMs = ms.toFixed(1);
    if (!document.body.dataset.firstResultMs) {
      document.body.dataset.firstResultMs = (performance.now() - state.started).toFixed(1);
    }
    const r = state.report;
    const what = r.format === 'rungs-band-analysis' ? `${r.input.n_bands} bands, both states` : `${r.input.n_points} ${r.input.kind}`;
    const mc = r.settings.mc_samples ? `Monte Carlo ${r.settings.mc_samples} draws` : 'Monte Carlo off';
    status(`Analysed in ${ms.toFixed(0)} ms · ${what} · ${mc}.`, 'ok');
    document.body.dataset.state = 'analysed';
  }

  async function openBytes(name, bytes) {
    status(`Reading ${name}…`);
    const reading = await run(() => rpc.call('open_file', name, bytes));
    $('examples').value = '';
    await afterReading(reading);
  }

  // --- inputs: file chooser, drop anywhere, paste, examples -------------------------------
  $('open-file').addEventListener('click', () => $('file-input').click());
  $('file-input').addEventListener('change', async (e) => {
    const file = e.target.files?.[0];
    if (file) await openBytes(file.name, new Uint8Array(await file.arrayBuffer())).catch(shown);
    e.target.value = '';
  });
  let dragDepth = 0;
  document.addEventListener('dragenter', (e) => { e.preventDefault(); dragDepth += 1; $('drop-overlay').hidden = false; });
  document.addEventListener('dragleave', () => { dragDepth = Math.max(0, dragDepth - 1); if (!dragDepth) $('drop-overlay').hidden = true; });
  document.addEventListener('dragover', (e) => e.preventDefault());
  document.addEventListener('drop', async (e) => {
    e.preventDefault();
    dragDepth = 0;
    $('drop-overlay').hidden = true;
    const file = e.dataTransfer?.files?.[0];
    if (file) {
      await openBytes(file.name, new Uint8Array(await file.arrayBuffer())).catch(shown);
    } else {
      const text = e.dataTransfer?.getData('text/plain');
      if (text) await openBytes('dropped text', new TextEncoder().encode(text)).catch(shown);
    }
  });
  // Ctrl+V anywhere on the page (outside a text field) reads the clipboard as a table: the text
  // goes straight to the worker, so even a very long table never sits in a text box.
  document.addEventListener('paste', async (e) => {
    const t = e.target;
    if (t instanceof HTMLInputElement || t instanceof HTMLTextAreaElement || t?.isContentEditable) return;
    const text = e.clipboardData?.getData('text/plain');
    if (!text) return;
    e.preventDefault();
    status('Reading the pasted table…');
    await run(() => rpc.call('load_text', 'pasted table', text))
      .then((reading) => { $('examples').value = ''; return afterReading(reading); })
      .catch(shown);
  });
  $('paste-open').addEventListener('click', () => $('paste-dialog').showModal());
  $('paste-dialog').addEventListener('close', async () => {
    if ($('paste-dialog').returnValue !== 'read') return;
    const text = $('paste-text').value;
    if (text.trim()) {
      status('Reading the pasted table…');
      await run(() => rpc.call('load_text', 'pasted table', text))
        .then((reading) => { $('examples').value = ''; return afterReading(reading); })
        .catch(shown);
    }
  });
  $('examples').addEventListener('change', async (e) => {
    if (!e.target.value) return;
    await run(() => rpc.call('load_example', e.target.value)).then(afterReading).catch(shown);
  });

  // --- export ---------------------------------------------------------------------------
  $('export-json').addEventListener('click', async () => {
    if (state.report) download('rungs-analysis.json', 'application/json', await rpc.call('analysis_json'));
    else download('rungs-session.json', 'application/json', await rpc.call('session_json'));
  });

  $('export-csv').addEventListener('click', () => run(() => openTables(rpc)).catch(shown));
  $('share-link').addEventListener('click', () => run(() => openShare(rpc)).catch(shown));
  $('print-report').addEventListener('click', () => run(() => printReport(rpc, Chart, state.report,
    results, state.unit, state.unitLabel, { url: location.href.split('#')[0], printed: new Date().toISOString(), name: data.reading?.name })).catch(shown));
  // Tests build the report without opening the print dialog.
  globalThis.rungsBuildReport = () => printReport(rpc, Chart, state.report, results, state.unit, state.unitLabel,
    { url: location.href.split('#')[0], printed: new Date().toISOString(), name: data.reading?.name, noPrint: true });

  // --- show the shared session, or the demo, read and analysed during start-up ------------
  const reading = await run(() => firstReading);
  $('examples').value = shared && !shareProblem ? '' : 'qz2-levels';
  await afterReading(reading);
  if (shareProblem) status(shareProblem, 'error');
}

boot().catch((err) => {
  status(`The numerics failed to load: ${err.message ?? err}`, 'error');
  throw err;
});
