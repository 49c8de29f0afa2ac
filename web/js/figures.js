// The figure card: tabs of the figures an analysis offers, the canvas (drawn by rungs-plot
// through wasm at the screen's pixel density), pointer read-outs, and SVG/PNG downloads.
// The worker builds each figure from its analysis; this thread only draws it.

import { el, clear, download, $ } from './dom.js';

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

  renderTabs() {
    const tabs = clear($('figure-tabs'));
    for (const [id, title, short] of this.list) {
      tabs.append(el('button', {
        type: 'button', role: 'tab', 'aria-selected': id === this.current ? 'true' : 'false', 'data-figure': id, title,
        onclick: () => this.select(id),
      }, short));
    }
  }

  async select(id) {
    this.current = id;
    this.renderTabs();
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
