// Page wiring only: every number shown here comes from the wasm module (crates/wasm → core).
import init, { version, codata_year } from './pkg/rungs_wasm.js';

const $ = (id) => document.getElementById(id);

async function main() {
  await init();
  $('version').textContent = version();
  $('codata').textContent = String(codata_year());
  $('status').textContent = 'Ready.';
}

main().catch((err) => {
  $('status').textContent = `The numerics failed to load: ${err.message ?? err}`;
  $('status').classList.add('error');
  throw err;
});
