// The page's side of the worker: every call returns a promise; progress reports of a running
// analysis go to the `onProgress` callback.

export function connect(worker) {
  let next = 0;
  const pending = new Map();
  const client = {
    onProgress: null,
    call(op, ...args) {
      return new Promise((resolve, reject) => {
        next += 1;
        pending.set(next, { resolve, reject });
        worker.postMessage({ id: next, op, args });
      });
    },
    boot(wasm) {
      return new Promise((resolve, reject) => {
        next += 1;
        pending.set(next, { resolve, reject });
        worker.postMessage({ id: next, op: 'boot', wasm });
      });
    },
  };
  worker.onmessage = (event) => {
    const m = event.data;
    if (m.progress) {
      client.onProgress?.(m.done, m.total);
      return;
    }
    const p = pending.get(m.id);
    if (!p) return;
    pending.delete(m.id);
    if (m.ok) p.resolve(m.value);
    else p.reject(new Error(m.error));
  };
  worker.onerror = (event) => {
    for (const p of pending.values()) p.reject(new Error(event.message || 'worker failed'));
    pending.clear();
  };
  return client;
}
