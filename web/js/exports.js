// Export and sharing: CSV tables, the printable report, and the share link. Every number comes
// from the worker (core); this module only moves text and builds the DOM.

import { el, clear, download, table, $ } from './dom.js';

/** The CSV dialog: one download button per table of the last analysis. */
export async function openTables(rpc) {
  const list = await rpc.call('table_list');
  const host = clear($('tables-list'));
  for (const [id, title] of list) {
    host.append(el('li', {}, el('button', {
      type: 'button', 'data-table': id,
      onclick: async () => download(`rungs-${id.replace(':', '-')}.csv`, 'text/csv', await rpc.call('table_csv', id)),
    }, title)));
  }
  $('tables-dialog').showModal();
}

// --- share link: the session JSON, deflated, base64url, in the URL fragment ------------------

const HASH_KEY = '#session=';
/** Links longer than this are hard to paste into mail or chat; warn. */
export const LINK_WARN_CHARS = 8000;
/** Chromium's limit on URL length. */
export const LINK_MAX_CHARS = 2 * 1024 * 1024;

/**
 * Most bytes a share link may inflate to: the longest session document core reads
 * (rungs_core::session::MAX_DOCUMENT_BYTES, 64 MiB; a browser test checks that they agree).
 * Inflating stops as soon as the count passes it, so a small link cannot fill the memory.
 */
export const SHARE_MAX_BYTES = 64 * 1024 * 1024;

/** `bytes` inflated, refused once the output passes `limit` bytes (the rest is not inflated). */
async function inflateAtMost(bytes, limit) {
  const reader = new Blob([bytes]).stream().pipeThrough(new DecompressionStream('deflate-raw')).getReader();
  const parts = [];
  let total = 0;
  for (;;) {
    const { done, value } = await reader.read();
    if (done) break;
    total += value.length;
    if (total > limit) {
      await reader.cancel();
      throw new Error(`it holds more than ${limit / 1048576} MiB of session data, more than a session may have; it was not opened`);
    }
    parts.push(value);
  }
  const out = new Uint8Array(total);
  let at = 0;
  for (const p of parts) {
    out.set(p, at);
    at += p.length;
  }
  return out;
}

async function pipeBytes(bytes, stream) {
  const out = new Blob([bytes]).stream().pipeThrough(stream);
  return new Uint8Array(await new Response(out).arrayBuffer());
}

function toBase64Url(bytes) {
  let bin = '';
  for (let i = 0; i < bytes.length; i += 0x8000) bin += String.fromCharCode(...bytes.subarray(i, i + 0x8000));
  return btoa(bin).replace(/\+/g, '-').replace(/\//g, '_').replace(/=+$/, '');
}

function fromBase64Url(text) {
  const b64 = text.replace(/-/g, '+').replace(/_/g, '/');
  const bin = atob(b64 + '='.repeat((4 - (b64.length % 4)) % 4));
  return Uint8Array.from(bin, (c) => c.charCodeAt(0));
}

/** The share link of a session document (JSON text). */
export async function shareLink(sessionJson) {
  const packed = await pipeBytes(new TextEncoder().encode(sessionJson), new CompressionStream('deflate-raw'));
  const base = `${location.href.split('#')[0]}`;
  return `${base}${HASH_KEY}${toBase64Url(packed)}`;
}

/** The session JSON packed in this page's URL, if any. */
export async function sessionFromUrl() {
  if (!location.hash.startsWith(HASH_KEY)) return null;
  if (location.hash.length > LINK_MAX_CHARS) {
    throw new Error(`it is longer than the ${LINK_MAX_CHARS.toLocaleString()} characters a link may have`);
  }
  let bytes;
  try {
    bytes = fromBase64Url(location.hash.slice(HASH_KEY.length));
  } catch {
    throw new Error('it is damaged (not the text a share link holds); it may have been cut or changed');
  }
  const json = await inflateAtMost(bytes, SHARE_MAX_BYTES).catch((err) => {
    throw err.message.startsWith('it holds') ? err : new Error('it is damaged (its session cannot be unpacked); it may have been cut or changed');
  });
  return new TextDecoder().decode(json);
}

export async function openShare(rpc) {
  const link = await shareLink(await rpc.call('session_json'));
  $('share-text').value = link;
  const warning = $('share-warning');
  warning.textContent = link.length > LINK_MAX_CHARS
    ? `This link is ${link.length.toLocaleString()} characters long, more than browsers accept: save the analysis as JSON and send the file instead.`
    : link.length > LINK_WARN_CHARS
      ? `This link is ${link.length.toLocaleString()} characters long: many mail and chat programs cut links that long. Sending the saved JSON file is safer.`
      : '';
  $('share-dialog').showModal();
  $('share-text').select();
  try {
    await navigator.clipboard.writeText(link);
    $('share-note').dataset.copied = 'yes';
  } catch {
    $('share-note').dataset.copied = 'no';
  }
  return link;
}

// --- printable report ------------------------------------------------------------------

/** The mass setting in words: "μ = 14.5 u" or "7Li + 35Cl". */
function massText(mass) {
  if (!mass) return 'not given';
  if (mass.kind === 'reduced_mass') return `μ = ${mass.mu_u} u`;
  if (mass.kind === 'nuclides') return `${mass.a} + ${mass.b}`;
  return 'given';
}

/** Build the printable report of `doc` (the analysis JSON object) and open the print dialog. */
export async function printReport(rpc, Chart, doc, results, unit, unitLabel, meta) {
  const view = clear($('print-view'));
  const states = doc.format === 'rungs-band-analysis'
    ? [['Upper state', doc.states.upper], ['Lower state', doc.states.lower]].filter(([, r]) => r)
    : [['', doc]];
  view.append(
    el('h1', {}, `Rungs report: ${meta.name ?? 'pasted table'}`),
    el('p', { class: 'estimate-note' }, doc.statement),
    table(['', ''], [
      ['tool', `Rungs ${doc.software_version} (${meta.url})`],
      ['constants', `CODATA ${doc.codata_year}`],
      ['input SHA-256', doc.input_sha256 ?? '—'],
      ['rows', doc.rows ? `${doc.rows.used} used of ${doc.rows.total}` : '—'],
      ['Monte Carlo', `${doc.settings.mc_samples} draws, seed ${doc.settings.seed}`],
      ['mass', massText(doc.settings.mass)],
      ['energies shown in', unitLabel],
      ['printed', meta.printed],
    ], null));
  view.lastChild.classList.add('meta-table');

  view.append(el('h2', {}, 'Result'), el('div', {}, ...Array.from($('recommended').childNodes, (n) => n.cloneNode(true))));
  if (doc.warnings?.length) view.append(el('ul', {}, doc.warnings.map((w) => el('li', {}, w))));
  for (const [name, r] of states) {
    view.append(el('h2', {}, `${name ? `${name}: ` : ''}every method`), results.estimatesTable(r, unit, unitLabel));
    view.append(el('h2', {}, `${name ? `${name}: ` : ''}vibrational constants`), ...results.constantsTables(r.constants, r.morse, unit, unitLabel));
  }
  if (doc.methods) {
    view.append(el('h2', {}, 'Methods'), el('p', {}, doc.methods.paragraph),
      el('ol', {}, doc.methods.references.map((r) => el('li', {}, r))));
  }
  view.append(el('h2', {}, 'Assumptions'), el('ul', {}, [...doc.assumptions, ...(doc.conventions ?? [])].map((a) => el('li', {}, a))));

  view.append(el('h2', {}, 'Figures'));
  for (const [id, title] of await rpc.call('figure_list')) {
    const chart = new Chart(await rpc.call('figure', id, unit));
    const svg = chart.svg(900, 560);
    chart.free();
    view.append(el('img', { alt: title, src: `data:image/svg+xml;charset=utf-8,${encodeURIComponent(svg)}` }));
  }

  view.append(el('h2', {}, 'Data: every input row'), el('pre', { class: 'rows-text' }, await rpc.call('table_csv', 'rows')));
  view.append(el('p', { class: 'limits' }, $('limits-text')?.textContent ?? ''));
  view.hidden = false;
  document.body.classList.add('printing');
  const done = () => {
    document.body.classList.remove('printing');
    view.hidden = true;
    window.removeEventListener('afterprint', done);
  };
  window.addEventListener('afterprint', done);
  if (!meta.noPrint) window.print();
  return view;
}
