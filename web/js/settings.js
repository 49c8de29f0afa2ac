// The analysis-settings form. It edits the session's AnalysisSettings object as plain data and
// hands it back; validation and every consequence are core's.

import { el, clear, $ } from './dom.js';

const FIELDS = [
  { key: 'mc_samples', label: 'Monte Carlo samples', type: 'int', help: '0 disables Monte Carlo' },
  { key: 'seed', label: 'Monte Carlo seed', type: 'int' },
  { key: 'lb_n', label: 'LeRoy–Bernstein n', type: 'float', help: '3 resonant, 4 ion–atom, 5 quadrupole, 6 van der Waals' },
  { key: 'lb_top_levels', label: 'Top levels for LeRoy–Bernstein', type: 'int?', help: 'empty: automatic' },
  { key: 'lb_fit_n_free', label: 'Also fit n freely', type: 'bool' },
  { key: 'lb_cn_cm1_an', label: 'Theoretical C_n / cm⁻¹Åⁿ', type: 'float?', help: 'empty: none' },
  { key: 'order', label: 'Force G(v) order', type: 'int?', help: 'empty: recommended order' },
  { key: 'max_order', label: 'Highest order tried', type: 'int' },
  { key: 'sigma_scaling', label: 'Scale σ by √χ²ν', type: 'choice', choices: [['when-above-one', 'when χ²ν > 1'], ['always', 'always'], ['never', 'never']] },
];

export class SettingsForm {
  constructor(onChange) {
    this.onChange = onChange;
    this.settings = null;
  }

  show(settings) {
    this.settings = settings;
    const form = clear($('settings'));
    const mass = settings.mass;
    const massText = mass?.kind === 'reduced_mass' ? String(mass.mu_u) : mass?.kind === 'nuclides' ? `${mass.a},${mass.b}` : '';
    form.append(el('label', {}, 'Mass: μ in u, or two nuclides (e.g. 1H,35Cl)',
      el('input', { name: 'mass', value: massText, placeholder: 'e.g. 14.5 or 7Li,35Cl', onchange: (e) => this.setMass(e.target.value) })));
    for (const f of FIELDS) {
      const v = settings[f.key];
      let input;
      if (f.type === 'bool') {
        input = el('input', { type: 'checkbox', name: f.key, checked: !!v, onchange: (e) => this.set(f.key, e.target.checked) });
      } else if (f.type === 'choice') {
        input = el('select', { name: f.key, onchange: (e) => this.set(f.key, e.target.value) },
          f.choices.map(([value, label]) => el('option', { value, selected: value === v }, label)));
      } else {
        input = el('input', {
          name: f.key, inputmode: 'decimal', value: v ?? '', placeholder: f.help ?? '',
          onchange: (e) => this.set(f.key, this.parse(f.type, e.target.value)),
        });
      }
      form.append(el('label', { title: f.help ?? '' }, f.label, input));
    }
  }

  parse(type, text) {
    const t = text.trim();
    if (t === '' && type.endsWith('?')) return null;
    const x = type.startsWith('int') ? Number.parseInt(t, 10) : Number.parseFloat(t);
    return Number.isFinite(x) ? x : undefined;
  }

  setMass(text) {
    const t = text.trim();
    let mass = null;
    if (t.includes(',')) {
      const [a, b] = t.split(',').map((s) => s.trim());
      mass = { kind: 'nuclides', a, b };
    } else if (t !== '') {
      const mu = Number.parseFloat(t);
      mass = Number.isFinite(mu) ? { kind: 'reduced_mass', mu_u: mu } : { kind: 'nuclides', a: t, b: t };
    }
    this.settings = { ...this.settings, mass };
    this.onChange(this.settings);
  }

  set(key, value) {
    if (value === undefined) return;
    this.settings = { ...this.settings, [key]: value };
    this.onChange(this.settings);
  }
}
