// Small DOM helpers. No numerics here: values arrive formatted by the wasm module.

/** Create an element: el('td', { class: 'num', title: '…' }, 'text', childNode, …). */
export function el(tag, attrs = {}, ...children) {
  const node = document.createElement(tag);
  for (const [k, v] of Object.entries(attrs)) {
    if (v === null || v === undefined || v === false) continue;
    if (k === 'class') node.className = v;
    else if (k === 'text') node.textContent = v;
    else if (k.startsWith('on') && typeof v === 'function') node.addEventListener(k.slice(2), v);
    else if (v === true) node.setAttribute(k, '');
    else node.setAttribute(k, String(v));
  }
  for (const c of children.flat()) {
    if (c === null || c === undefined || c === false) continue;
    node.append(c instanceof Node ? c : document.createTextNode(String(c)));
  }
  return node;
}

export function clear(node) {
  while (node.firstChild) node.removeChild(node.firstChild);
  return node;
}

export const $ = (id) => document.getElementById(id);

/** Offer `data` (string, Blob or bytes) as a download named `name`. */
export function download(name, mime, data) {
  const blob = data instanceof Blob ? data : new Blob([data], { type: mime });
  const url = URL.createObjectURL(blob);
  const a = el('a', { href: url, download: name });
  document.body.append(a);
  a.click();
  a.remove();
  // Revoke late: the browser may start reading the blob well after the click.
  setTimeout(() => URL.revokeObjectURL(url), 60000);
}

/** A table from a header row and body rows (arrays of cells: strings, nodes or {text, class}). */
export function table(head, rows, caption) {
  const cell = (tag, c) => {
    if (c && typeof c === 'object' && !(c instanceof Node)) {
      return el(tag, { class: c.class, title: c.title, scope: tag === 'th' ? 'col' : null }, c.text ?? '');
    }
    return el(tag, tag === 'th' ? { scope: 'col' } : {}, c ?? '');
  };
  return el('table', {},
    caption ? el('caption', {}, caption) : null,
    el('thead', {}, el('tr', {}, head.map((h) => cell('th', h)))),
    el('tbody', {}, rows.map((r) => el('tr', { class: r.class }, (r.cells ?? r).map((c) => cell('td', c))))));
}

/** A selector that finds the same control again after its container is redrawn. */
function focusKey(node) {
  if (!(node instanceof Element) || node === document.body) return null;
  for (const a of ['id', 'aria-label', 'name', 'data-figure']) {
    const v = node.getAttribute(a);
    if (v) return `${node.tagName.toLowerCase()}[${a}="${CSS.escape(v)}"]`;
  }
  return null;
}

/**
 * Redraw part of the page without losing the keyboard focus: when the focused control sits in
 * `container`, the control with the same id, label or name gets the focus back afterwards.
 */
export async function keepFocus(container, redraw) {
  const active = document.activeElement;
  const key = container.contains(active) ? focusKey(active) : null;
  await redraw();
  if (!key || (document.activeElement && document.activeElement !== document.body && document.activeElement.isConnected && container.contains(document.activeElement) && document.activeElement.matches(key))) return;
  container.querySelector(key)?.focus();
}
