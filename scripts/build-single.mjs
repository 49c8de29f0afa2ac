// Writes dist/rungs.html: the whole page in one file (styles, scripts and the wasm module inlined)
// that works when opened from disk, with no server and no network.
//
// The ES modules of web/ are kept as they are and loaded as blob: URLs by a small inline loader,
// with their relative import specifiers pointed at each other's blob URLs; the wasm bytes are
// inlined as base64 and handed to both threads, so nothing is ever fetched. The page's
// Content-Security-Policy is tightened for this form: no connections at all (connect-src 'none'),
// scripts only from the hashed loader and its blob: modules.
//
//   node scripts/build-single.mjs     (after scripts/build-wasm; scripts/build-single does both)

import { execFileSync } from 'node:child_process';
import { createHash } from 'node:crypto';
import { mkdirSync, readFileSync, writeFileSync, readdirSync } from 'node:fs';
import { dirname, join, posix } from 'node:path';
import { fileURLToPath } from 'node:url';

const ROOT = join(dirname(fileURLToPath(import.meta.url)), '..');
const WEB = join(ROOT, 'web');
const OUT = join(ROOT, 'dist', 'rungs.html');

const modules = ['pkg/rungs_wasm.js', ...readdirSync(join(WEB, 'js')).filter((f) => f.endsWith('.js')).map((f) => `js/${f}`), 'worker.js', 'app.js'];
const sources = {};
const deps = {};
for (const name of modules) {
  let text = readFileSync(join(WEB, name), 'utf8');
  deps[name] = [];
  text = text.replace(/(from\s+|import\s*\(\s*)'(\.{1,2}\/[^']+)'/g, (_, lead, spec) => {
    const target = posix.normalize(posix.join(posix.dirname(name), spec));
    if (!modules.includes(target)) throw new Error(`${name} imports ${spec}, which is not bundled`);
    deps[name].push(target);
    return `${lead}'@@${target}@@'`;
  });
  sources[name] = text;
}
// Dependency order: every module after the modules it imports.
const order = [];
const visit = (n, path = []) => {
  if (order.includes(n)) return;
  if (path.includes(n)) throw new Error(`import cycle through ${n}`);
  for (const d of deps[n]) visit(d, [...path, n]);
  order.push(n);
};
modules.forEach((m) => visit(m));

// The worker must be a classic script here (Chromium refuses module workers from blob: URLs of a
// file:// page): the same wasm with wasm-bindgen's no-modules glue, which defines `wasm_bindgen`.
const tmp = join(ROOT, 'target', 'single');
execFileSync('wasm-bindgen', ['--target', 'no-modules', '--no-typescript', '--out-dir', tmp,
  join(ROOT, 'target', 'wasm32-unknown-unknown', 'wasm-release', 'rungs_wasm.wasm')]);
const classicGlue = readFileSync(join(tmp, 'rungs_wasm.js'), 'utf8');
const IMPORT = "import init, { Workbench } from './pkg/rungs_wasm.js';";
const workerText = readFileSync(join(WEB, 'worker.js'), 'utf8');
if (!workerText.includes(IMPORT)) throw new Error('web/worker.js changed its import line: update build-single');
const classicWorker = `${classicGlue}\nconst init = wasm_bindgen;\nconst { Workbench } = wasm_bindgen;\n${workerText.replace(IMPORT, '')}`;
delete sources['worker.js'];
order.splice(order.indexOf('worker.js'), 1);

const wasm = readFileSync(join(WEB, 'pkg', 'rungs_wasm_bg.wasm')).toString('base64');
const loader = `(async () => {
  const sources = ${JSON.stringify(sources)};
  const classicWorker = ${JSON.stringify(classicWorker)};
  const order = ${JSON.stringify(order)};
  const urls = {};
  for (const name of order) {
    const text = sources[name].replace(/@@([^@]+)@@/g, (_, n) => urls[n]);
    urls[name] = URL.createObjectURL(new Blob([text], { type: 'text/javascript' }));
  }
  const b64 = ${JSON.stringify(wasm)};
  const bin = atob(b64);
  const bytes = new Uint8Array(bin.length);
  for (let i = 0; i < bin.length; i += 1) bytes[i] = bin.charCodeAt(i);
  globalThis.RUNGS_WASM_BYTES = bytes;
  globalThis.RUNGS_WORKER_URL = URL.createObjectURL(new Blob([classicWorker], { type: 'text/javascript' }));
  await import(urls['app.js']);
})();`;
const hash = createHash('sha256').update(loader, 'utf8').digest('base64');

let html = readFileSync(join(WEB, 'index.html'), 'utf8');
const css = readFileSync(join(WEB, 'style.css'), 'utf8');
html = html.replace(/<meta http-equiv="Content-Security-Policy"[^>]*>/s,
  `<meta http-equiv="Content-Security-Policy" content="default-src 'none'; script-src 'sha256-${hash}' blob: 'wasm-unsafe-eval'; worker-src blob:; connect-src 'none'; img-src data: blob:; style-src 'unsafe-inline'; base-uri 'none'; form-action 'none'">`);
html = html.replace('<link rel="stylesheet" href="style.css">', () => `<style>\n${css}</style>`);
html = html.replace('<script type="module" src="app.js"></script>', () => `<script>${loader}</script>`);
if (html.includes('src="app.js"') || html.includes('href="style.css"')) throw new Error('index.html changed shape: update build-single');
mkdirSync(dirname(OUT), { recursive: true });
writeFileSync(OUT, html);
console.log(`wrote ${OUT} (${(html.length / 1024).toFixed(0)} KiB)`);
