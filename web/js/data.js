// The "Data as read" panel: what intake understood (kind, columns, units, counts, remarks), with
// controls to correct it, and a scrolling table of every input row with its status. Rows are
// fetched from the worker in pages, so a table of 100 000 rows scrolls without freezing.

import { el, clear, keepFocus, $ } from './dom.js';

const ROW_HEIGHT = 28;
const PAGE = 200;

export class DataPanel {
  /**
   * @param rpc       worker client
   * @param vocab     { roles: [[name, label]], units: [[token, label]] }
   * @param onChange  called with a reading-change object; returns a promise of the new reading
   */
  constructor(rpc, vocab, onChange) {
    this.rpc = rpc;
    this.vocab = vocab;
    this.onChange = onChange;
    this.reading = null;
    this.pages = new Map();
    this.box = $('rows');
    this.box.addEventListener('scroll', () => this.paint());
  }

  /**
   * Mark the rows an analysis found far outside the rest ([{row, reason}]); rows in view are
   * drawn again, the focused control keeps the focus.
   */
  markFar(far) {
    this.far = new Map(far.filter((f) => f.row !== null && f.row !== undefined).map((f) => [f.row, f.reason]));
    if (!this.windowEl) return undefined;
    return keepFocus($('data-panel'), () => {
      for (const [, node] of this.shown) node.remove();
      this.shown.clear();
      return this.paint();
    });
  }

  /** Show a new reading; the focused control (a row's switch, a column's role…) keeps the focus. */
  show(reading) {
    this.reading = reading;
    this.pages.clear();
    $('data-panel').hidden = false;
    return keepFocus($('data-panel'), () => {
      this.renderReading();
      return this.renderRows();
    });
  }

  renderReading() {
    const r = this.reading;
    const host = clear($('reading'));
    const kindSelect = el('select', { 'aria-label': 'Kind of data', onchange: (e) => this.onChange({ op: 'kind', kind: e.target.value || null }) },
      el('option', { value: '' }, 'detect'),
      ['levels', 'spacings', 'bands'].map((k) => el('option', { value: k, selected: r.kind_from === 'override' && r.kind === k }, k)));
    const summary = el('p', { class: 'reading-line' },
      el('strong', {}, r.name ?? 'pasted table'), ': ',
      `${r.kind} (${r.kind_from === 'override' ? 'chosen' : 'detected'}) · `,
      `${r.n_rows} rows: `, el('strong', {}, `${r.n_usable} used`),
      r.n_excluded ? `, ${r.n_excluded} unusable` : '',
      r.n_excluded_by_user ? `, ${r.n_excluded_by_user} excluded by you` : '',
      ' · kind ', kindSelect);
    const cols = el('table', { class: 'columns' },
      el('caption', {}, 'Columns: role and unit (change either to re-read the table)'),
      el('thead', {}, el('tr', {}, ['#', 'header', 'role', 'unit', 'note'].map((h) => el('th', { scope: 'col' }, h)))),
      el('tbody', {}, r.columns.map((c) => el('tr', {},
        el('td', { class: 'num' }, c.index),
        el('td', {}, c.name || '—'),
        el('td', {}, this.roleSelect(c)),
        el('td', {}, this.unitSelect(c)),
        el('td', { class: 'note' }, c.note ?? (c.role_from === 'override' ? 'chosen' : ''))))));
    host.append(summary, cols);
    if (r.band_positions) {
      host.append(el('label', { class: 'inline' },
        el('input', { type: 'checkbox', checked: r.band_positions === 'heads', onchange: (e) => this.onChange({ op: 'band_positions', heads: e.target.checked }) }),
        ' positions are band heads (not origins)'));
    }
    if (r.usable_error) host.append(el('p', { class: 'error' }, r.usable_error));
    if (r.diagnostics.length) {
      host.append(el('details', { class: 'remarks' },
        el('summary', {}, `${r.diagnostics.length} remark(s) on the reading`),
        el('ul', {}, r.diagnostics.map((d) => el('li', { class: d.severity }, d.message)))));
    }
  }

  roleSelect(c) {
    return el('select', { 'aria-label': `Role of column ${c.index}`, onchange: (e) => this.onChange({ op: 'column', column: c.index, role: e.target.value, unit: null }) },
      this.vocab.roles.map(([name, label]) => el('option', { value: name, selected: name === c.role }, label)));
  }

  unitSelect(c) {
    const takesUnit = ['energy', 'spacing', 'position', 'sigma', 'b'].includes(c.role);
    if (!takesUnit) return '—';
    return el('select', { 'aria-label': `Unit of column ${c.index}`, onchange: (e) => this.onChange({ op: 'column', column: c.index, role: null, unit: e.target.value }) },
      c.unit ? null : el('option', { value: '' }, '—'),
      this.vocab.units.map(([token, label]) => el('option', { value: token, selected: token === c.unit }, label)));
  }

  renderRows() {
    const r = this.reading;
    clear(this.box);
    this.head = el('div', { class: 'row head', role: 'row' },
      el('span', { class: 'c-line', role: 'columnheader' }, 'row'),
      el('span', { class: 'c-use', role: 'columnheader' }, 'use'),
      r.columns.map((c) => el('span', { class: 'c-cell', role: 'columnheader' }, c.name || `col ${c.index}`)),
      el('span', { class: 'c-sigma', role: 'columnheader', title: 'σ used by the analyses, in the value column\'s unit; type a value to replace the table\'s σ, clear it to restore' }, 'σ (edit)'),
      el('span', { class: 'c-why', role: 'columnheader' }, 'status'));
    this.spacer = el('div', { class: 'spacer' });
    this.spacer.style.height = `${r.n_rows * ROW_HEIGHT}px`; // CSSOM: allowed by the page's CSP
    this.windowEl = el('div', { class: 'window' });
    this.shown = new Map();
    this.box.append(this.head, this.spacer);
    this.spacer.append(this.windowEl);
    return this.paint();
  }

  async page(k) {
    if (!this.pages.has(k)) {
      this.pages.set(k, this.rpc.call('rows', k * PAGE, PAGE));
    }
    return this.pages.get(k);
  }

  async paint() {
    const r = this.reading;
    if (!r) return;
    const top = Math.max(0, Math.floor(this.box.scrollTop / ROW_HEIGHT) - 5);
    const count = Math.ceil(this.box.clientHeight / ROW_HEIGHT) + 10;
    const end = Math.min(r.n_rows, top + count);
    const token = (this.paintToken = {});
    const rows = [];
    for (let k = Math.floor(top / PAGE); k <= Math.floor(Math.max(top, end - 1) / PAGE); k += 1) {
      const page = await this.page(k);
      if (token !== this.paintToken) return;
      page.forEach((row, i) => {
        const index = k * PAGE + i;
        if (index >= top && index < end) rows.push([index, row]);
      });
    }
    // Rows still in view keep their elements (a focused switch or σ field must survive a
    // scroll); rows leaving the view are removed, rows entering it are added in order.
    const lines = new Set(rows.map(([, row]) => row.line));
    for (const [line, node] of this.shown) {
      if (!lines.has(line)) { node.remove(); this.shown.delete(line); }
    }
    let before = this.windowEl.firstChild;
    for (const [, row] of rows) {
      const kept = this.shown.get(row.line);
      if (kept) { before = kept.nextSibling; continue; }
      const node = this.rowElement(row);
      this.shown.set(row.line, node);
      this.windowEl.insertBefore(node, before);
    }
    this.windowEl.style.transform = `translateY(${top * ROW_HEIGHT}px)`;
  }

  rowElement(row) {
    const usable = row.status === 'usable';
    const far = usable ? this.far?.get(row.line) : undefined;
    const byUser = row.status === 'excluded_by_user';
    const toggle = row.status === 'excluded' ? el('span', { class: 'c-use', title: 'cannot be used as read' }, '✕')
      : el('span', { class: 'c-use' }, el('input', {
        type: 'checkbox', checked: usable, 'aria-label': `Use row ${row.line}`,
        onchange: (e) => this.onChange(e.target.checked ? { op: 'include', row: row.line } : { op: 'exclude', row: row.line, reason: 'excluded by you (no reason given)' }),
      }));
    const why = byUser
      ? el('span', { class: 'c-why' }, el('input', {
        type: 'text', value: (row.reasons[0] ?? '').replace(/^excluded by you: /, ''), 'aria-label': `Reason for excluding row ${row.line}`,
        onchange: (e) => this.onChange({ op: 'exclude', row: row.line, reason: e.target.value || 'excluded by you (no reason given)' }),
      }))
      : el('span', { class: 'c-why', title: far ?? row.note ?? row.reasons.join('; ') }, usable ? [far ? '⚠ used, but far outside the rest' : 'used', row.note].filter(Boolean).join('; ') : row.reasons.join('; '));
    const sigmaColumn = this.reading.columns.findIndex((c) => c.role === 'sigma');
    const shown = row.sigma_edited ?? (sigmaColumn >= 0 ? row.cells[sigmaColumn] : '');
    const sigma = el('span', { class: 'c-sigma' }, el('input', {
      type: 'text', inputmode: 'decimal', value: shown ?? '', class: row.sigma_edited !== null && row.sigma_edited !== undefined ? 'edited' : '',
      placeholder: row.note ? 'median' : '',
      'aria-label': `Uncertainty of row ${row.line}`,
      onchange: (e) => {
        const t = e.target.value.trim();
        const x = Number(t);
        if (t !== '' && !Number.isFinite(x)) {
          e.target.setCustomValidity('not a number');
          e.target.reportValidity();
          return;
        }
        e.target.setCustomValidity('');
        this.onChange({ op: 'sigma', row: row.line, sigma: t === '' ? null : x });
      },
    }));
    return el('div', { class: `row ${row.status}${row.note ? ' assumed' : ''}${far ? ' far' : ''}`, role: 'row', 'data-line': row.line },
      el('span', { class: 'c-line' }, row.line),
      toggle,
      this.reading.columns.map((c, i) => el('span', { class: 'c-cell' }, row.cells[i] ?? '')),
      sigma,
      why);
  }
}
