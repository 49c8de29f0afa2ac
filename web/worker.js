// The worker thread: owns the session (a wasm Workbench) and runs every heavy computation, so
// the page never freezes. Messages: { id, op, args } → { id, ok, value | error }; progress of a
// running analysis is posted as { progress: true, done, total }.
import init, { Workbench } from './pkg/rungs_wasm.js';

// The single-file build hands the module bytes over in the first message instead of a URL.
let ready = null;
let bench = null;

function start(source) {
  ready ??= init(source ? { module_or_path: source } : undefined).then(() => {
    bench = new Workbench();
  });
  return ready;
}

self.onmessage = async (event) => {
  const { id, op, args = [], wasm } = event.data;
  try {
    await start(wasm);
    let value;
    if (op === 'boot') {
      value = true;
    } else if (op === 'analyze') {
      value = bench.analyze((done, total) => self.postMessage({ progress: true, done, total }));
    } else if (typeof bench[op] === 'function') {
      value = bench[op](...args);
    } else {
      throw new Error(`unknown operation ${op}`);
    }
    self.postMessage({ id, ok: true, value });
  } catch (err) {
    self.postMessage({ id, ok: false, error: String(err?.message ?? err) });
  }
};
