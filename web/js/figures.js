// The figure card: tabs of the figures a report offers, the canvas (drawn by rungs-plot through
// wasm, at the screen's pixel density), pointer read-outs, and SVG/PNG downloads.

import { el, clear, download, $ } from './dom.js';

export class FigurePanel {
  constructor() {
    this.figures = null; // wasm Figures handle
    this.current = 'spacings';
    this.unit = 'cm-1';
    const canvas = $('figure');
    canvas.addEventListener('mousemove', (e) => this.hover(e));
    canvas.addEventListener('mouseleave', () => { $('readout').textContent = ''; });
    $('figure-svg').addEventListener('click', () => this.saveSvg());
    $('figure-png').addEventListener('click', () => this.savePng());
    window.addEventListener('resize', () => this.draw());
  }

  show(figures, unit) {
    this.figures?.free();
    this.figures = figures;
    this.unit = unit;
    const list = figures.list();
    if (!list.some(([id]) => id === this.current)) this.current = list[0]?.[0] ?? 'spacings';
    const tabs = clear($('figure-tabs'));
    for (const [id, title] of list) {
      tabs.append(el('button', {
        type: 'button', role: 'tab', 'aria-selected': id === this.current ? 'true' : 'false', 'data-figure': id, title,
        onclick: () => { this.current = id; this.show(this.figures, this.unit); },
      }, title.split(/ with | of |\(/)[0].trim()));
    }
    this.draw();
  }

  setUnit(unit) {
    this.unit = unit;
    this.draw();
  }

  draw() {
    if (!this.figures) return;
    const canvas = $('figure');
    const ratio = window.devicePixelRatio || 1;
    const width = canvas.parentElement.clientWidth;
    const height = Math.round(Math.min(Math.max(width * 0.6, 320), 560));
    canvas.style.width = `${width}px`;
    canvas.style.height = `${height}px`;
    canvas.width = Math.round(width * ratio);
    canvas.height = Math.round(height * ratio);
    canvas.setAttribute('aria-label', this.title());
    this.figures.draw(this.current, canvas, ratio, this.unit);
  }

  title() {
    return (this.figures?.list() ?? []).find(([id]) => id === this.current)?.[1] ?? 'Figure';
  }

  hover(event) {
    if (!this.figures) return;
    const rect = event.target.getBoundingClientRect();
    const tag = this.figures.pick(this.current, event.clientX - rect.left, event.clientY - rect.top);
    $('readout').textContent = tag ?? '';
  }

  svgText(width = 900, height = 560) {
    return this.figures.svg(this.current, width, height, this.unit);
  }

  saveSvg() {
    if (this.figures) download(`rungs-${this.current}.svg`, 'image/svg+xml', this.svgText());
  }

  savePng() {
    const canvas = $('figure');
    canvas.toBlob((blob) => blob && download(`rungs-${this.current}.png`, 'image/png', blob), 'image/png');
  }
}
