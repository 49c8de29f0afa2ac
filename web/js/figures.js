// The figure card: tabs of the figures an analysis offers, the canvas (drawn by rungs-plot
// through wasm at the screen's pixel density), pointer read-outs, and SVG/PNG downloads.
// The worker builds each figure from its analysis; this thread only draws it.

import { el, clear, download, keepFocus, $ } from './dom.js';

export class FigurePanel {
  /**
   * @param rpc    worker client (figure_list, figure)
   * @param Chart  the wasm Chart class (draws one figure description)
   */
  constructor(rpc, Chart) {
    this.rpc = rpc;
    this.Chart = Chart;
    this.chart = null;
    this.list = [];
    this.current = 'spacings';
    this.unit = 'cm-1';
    const canvas = $('figure');
    canvas.addEventListener('mousemove', (e) => this.hover(e));
    canvas.addEventListener('mouseleave', () => { $('readout').textContent = ''; });
    // From the keyboard: with the figure focused, the arrow keys step through its points,
    // Home and End go to the first and last; each point is read out below the figure.
    this.cursor = -1;
    $('figure-panel').addEventListener('keydown', (e) => this.step(e));
    $('figure-svg').addEventListener('click', () => this.saveSvg());
    $('figure-png').addEventListener('click', () => this.savePng());
    window.addEventListener('resize', () => this.draw());
  }

  /** A new analysis is ready in the worker: fetch its figure list and draw the current one. */
  async refresh(unit) {
    this.unit = unit;
    this.list = await this.rpc.call('figure_list');
    if (!this.list.some(([id]) => id === this.current)) this.current = this.list[0]?.[0] ?? 'spacings';
    this.renderTabs();
    await this.load();
  }

  /** The tabs follow the WAI-ARIA tabs pattern: one tab stop (the selected tab), arrow keys,
   *  Home and End move between tabs and show the figure at once. */
  renderTabs() {
    keepFocus($('figure-tabs'), () => {
      const tabs = clear($('figure-tabs'));
      for (const [id, title, short] of this.list) {
        const selected = id === this.current;
        tabs.append(el('button', {
          type: 'button', role: 'tab', id: `tab-${id}`, 'aria-selected': selected ? 'true' : 'false', 'aria-controls': 'figure-panel',
          tabindex: selected ? '0' : '-1', 'data-figure': id, title,
          onclick: () => this.select(id),
          onkeydown: (e) => this.key(e, id),
        }, short));
      }
      $('figure-panel').setAttribute('aria-labelledby', `tab-${this.current}`);
    });
  }

  key(event, id) {
    const ids = this.list.map(([k]) => k);
    const i = ids.indexOf(id);
    const to = { ArrowRight: i + 1, ArrowDown: i + 1, ArrowLeft: i - 1, ArrowUp: i - 1, Home: 0, End: ids.length - 1 }[event.key];
    if (to === undefined || !ids.length) return;
    event.preventDefault();
    const next = ids[(to + ids.length) % ids.length];
    this.select(next);
    $(`tab-${next}`)?.focus();
  }

  /** Show a figure; the tabs are updated in place, so a focused tab keeps the focus. */
  async select(id) {
    this.current = id;
    for (const b of $('figure-tabs').querySelectorAll('[role=tab]')) {
      const selected = b.dataset.figure === id;
      b.setAttribute('aria-selected', selected ? 'true' : 'false');
      b.tabIndex = selected ? 0 : -1;
    }
    $('figure-panel').setAttribute('aria-labelledby', `tab-${id}`);
    await this.load();
  }

  async setUnit(unit) {
    this.unit = unit;
    if (this.list.length) await this.load();
  }

  async load() {
    const json = await this.rpc.call('figure', this.current, this.unit);
    this.chart?.free();
    this.chart = new this.Chart(json);
    this.cursor = -1;
    $('readout').textContent = '';
    this.draw();
  }

  draw() {
    if (!this.chart) return;
    const canvas = $('figure');
    const ratio = window.devicePixelRatio || 1;
    const width = canvas.parentElement.clientWidth;
    const height = Math.round(Math.min(Math.max(width * 0.62, 320), 560));
    canvas.style.width = `${width}px`;
    canvas.style.height = `${height}px`;
    canvas.width = Math.round(width * ratio);
    canvas.height = Math.round(height * ratio);
    canvas.setAttribute('aria-label', this.chart.title());
    this.chart.draw(canvas, ratio);
    document.body.dataset.shownFigure = this.current;
    document.body.dataset.figureDraws = String(Number(document.body.dataset.figureDraws ?? 0) + 1);
  }

  step(event) {
    if (!this.chart || event.target !== $('figure-panel')) return;
    const n = this.chart.point_count();
    if (!n) return;
    const to = { ArrowRight: this.cursor + 1, ArrowDown: this.cursor + 1, ArrowLeft: this.cursor - 1, ArrowUp: this.cursor - 1, Home: 0, End: n - 1 }[event.key];
    if (to === undefined) return;
    event.preventDefault();
    this.cursor = Math.min(n - 1, Math.max(0, to));
    $('readout').textContent = `point ${this.cursor + 1} of ${n}: ${this.chart.point_readout(this.cursor) ?? ''}`;
  }

  hover(event) {
    if (!this.chart) return;
    const rect = event.target.getBoundingClientRect();
    const tag = this.chart.pick(event.clientX - rect.left, event.clientY - rect.top);
    $('readout').textContent = tag ?? '';
  }

  saveSvg() {
    if (this.chart) download(`rungs-${this.current}.svg`, 'image/svg+xml', this.chart.svg(900, 560));
  }

  savePng() {
    const canvas = $('figure');
    canvas.toBlob((blob) => blob && download(`rungs-${this.current}.png`, 'image/png', blob), 'image/png');
  }
}
